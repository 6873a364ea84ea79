"""From parsed TOML data to a checked `Fleet`, reporting every problem at once.

Each vehicle is validated on its own, so one bad vehicle does not hide the problems of the next;
then the rules that need the whole fleet run over everything that parsed. Problems carry data
paths; `planner.fileio` turns paths into lines. No file access here.
"""

from __future__ import annotations

import datetime as dt
import difflib
import functools
import math
import types
import typing
from collections.abc import Iterable
from dataclasses import replace
from enum import Enum
from typing import Any

from pydantic import BaseModel, ValidationError

from planner.errors import WARNING, Path, PlannerError, Problem
from planner.fleet import (
    CONTROL_CHARACTER,
    ID_REFUSED,
    OLD_SETTING_NAMES,
    SPEC_FIELDS,
    BeltHistory,
    EngineProfile,
    Fleet,
    Vehicle,
    fields_of,
    is_table_class,
)
from planner.plan import FACT_WORDS, IntervalBasis, resolve_spec
from planner.safetext import first_unshown

EARLIEST_DATE = dt.date(1950, 1, 1)
LATEST_DATE = dt.date(2100, 12, 31)
# An in-service odometer above this, with belt_history = "known" and no belt job, reads as a
# vehicle bought used and taken for a factory belt: warned (common practice, no source: a new
# vehicle is delivered with a few hundred at most; demonstrators and short leases a few
# thousand).
USED_ODOMETER = {"km": 5000.0, "mi": 3000.0}


def build_fleet(data: dict[str, Any]) -> Fleet:
    """Validate parsed TOML data; raise `PlannerError` listing every problem found."""
    problems: list[Problem] = []
    raw_vehicles = data.get("vehicles", [])
    if not isinstance(raw_vehicles, list):
        problems.append(
            Problem(
                f"vehicles must be an array of tables, found {_found(raw_vehicles)}",
                ("vehicles",),
                hint="write each vehicle as its own [[vehicles]] table (two brackets)",
            )
        )
        raw_vehicles = []
    top = {k: v for k, v in data.items() if k != "vehicles"}
    shell, found = _validated(Fleet, top, (), None)
    problems.extend(found)

    vehicles: list[tuple[int, Vehicle]] = []
    broken: list[tuple[int, dict[str, Any], list[Problem]]] = []
    for index, raw in enumerate(raw_vehicles):
        vid = _vehicle_name(raw, index)
        if not isinstance(raw, dict):
            problems.append(Problem(f"a vehicle must be a table, found {_found(raw)}",
                                    ("vehicles", index), vehicle=vid,
                                    hint="write each vehicle as a [[vehicles]] table"))
            continue
        vehicle, found = _validated(Vehicle, raw, ("vehicles", index), vid)
        problems.extend(found)
        if vehicle is not None:
            vehicles.append((index, vehicle))
        else:
            broken.append((index, raw, found))

    engines = shell.engines if shell else {}
    raw_engines = data.get("engines")
    engine_ids = set(raw_engines) if isinstance(raw_engines, dict) else set()
    problems.extend(check_vehicles(vehicles, engines, engine_ids))
    for index, raw, found in broken:  # what can still run on a vehicle that did not validate
        problems.extend(_rules_of_the_rest(index, raw, found, engines, engine_ids))
    if shell is not None:
        problems.extend(check_settings(shell))
    if problems:
        raise PlannerError(
            "The fleet file has problems",
            f"{len(problems)} problem{'s' if len(problems) != 1 else ''} found; "
            "nothing was planned.",
            problems,
        )
    assert shell is not None
    return shell.model_copy(update={"vehicles": [v for _, v in vehicles]})


def rebuild_fleet(fleet: Fleet, start: int, stop: int, raw_vehicles: list[Any]) -> Fleet:
    """`build_fleet` of the data that gave `fleet`, its vehicles[start:stop] replaced by the
    raw tables `raw_vehicles` (all else the same); raise `PlannerError` on any problem.

    The new tables are validated one by one as `build_fleet` does, with the rules of one
    vehicle (`check_vehicle`); the rule across vehicles (unique ids) runs over the whole list.
    The problems are not located or complete (the caller parses the whole text to report them).
    """
    problems: list[Problem] = []
    fresh: list[Vehicle] = []
    for k, raw in enumerate(raw_vehicles):
        index = start + k
        if not isinstance(raw, dict):
            raise PlannerError("a vehicle is not a table", "", [])
        vehicle, found = _validated(Vehicle, raw, ("vehicles", index), _vehicle_name(raw, index))
        problems.extend(found)
        if vehicle is not None:
            fresh.append(vehicle)
    vehicles = fleet.vehicles[:start] + fresh + fleet.vehicles[stop:]
    if not problems:  # the other vehicles passed their own rules already: only theirs again
        for k, vehicle in enumerate(fresh):
            problems.extend(check_vehicle(start + k, vehicle, fleet.engines, set(fleet.engines)))
        first_seen: dict[str, int] = {}
        for index, vehicle in enumerate(vehicles):
            problems.extend(_duplicate_id(index, vehicle, first_seen))
    if problems:
        raise PlannerError("The fleet file has problems", f"{len(problems)} found", problems)
    return fleet.model_copy(update={"vehicles": vehicles})


def _rules_of_the_rest(index: int, raw: dict[str, Any], found: list[Problem],
                       engines: dict[str, EngineProfile], engine_ids: set[str]) -> list[Problem]:
    """The cross-field rules of a vehicle that failed validation, run on its other keys.

    The keys with a problem are left out; if the rest validates, the vehicle's own rules run on
    it and report what does not concern a key left out (so one run lists a bad type and an
    unknown profile together). If it still does not validate (a required key was bad), only
    the profile check runs, on the raw value.
    """
    bad = {p.path[2] for p in found if len(p.path) > 2 and p.path[:2] == ("vehicles", index)}
    rest = {k: v for k, v in raw.items() if k not in bad}
    try:
        vehicle = Vehicle.model_validate(rest)
    except ValidationError:
        engine = raw.get("engine")
        if "engine" in bad or not isinstance(engine, str) or engine in engine_ids:
            return []
        vehicle = Vehicle.model_construct(id=_vehicle_name(raw, index), engine=engine)
        return [p for p in check_vehicle(index, vehicle, engines, engine_ids, dates=False)
                if p.path[2:3] == ("engine",)]
    vid = _vehicle_name(raw, index)
    return [replace(p, vehicle=vid) for p in check_vehicle(index, vehicle, engines, engine_ids)
            if not (len(p.path) > 2 and p.path[2] in bad)]


def _vehicle_name(raw: Any, index: int) -> str:
    """How problems name a vehicle: its id when it has a usable one, else its position."""
    vid = raw.get("id") if isinstance(raw, dict) else None
    if isinstance(vid, str) and vid.strip() and len(vid) <= 64:
        return vid
    if isinstance(vid, int) and not isinstance(vid, bool):
        return str(vid)
    return f"#{index + 1}"


def _validated(model: type[Any], raw: dict[str, Any], prefix: Path,
               vehicle: str | None) -> tuple[Any, list[Problem]]:
    """`model` from `raw`; on failure, wrong TOML types first, then pydantic's other rules.

    The models are strict (no value is ever converted), so a table that validates holds only
    right types; the walk over raw values that words each wrong type runs only on failure.
    """
    try:
        return model.model_validate(raw), []
    except ValidationError as exc:
        problems: list[Problem] = []
        _type_problems(raw, ("table", model), prefix, vehicle, problems)
        typed = {p.path for p in problems}
        for p in _from_pydantic(exc, prefix, vehicle):
            # One report per bad value: none under a path already reported as a wrong type
            # (each prefix looked up in the set: linear in the problems, not their square).
            if not any(p.path[:k] in typed for k in range(len(prefix), len(p.path) + 1)):
                problems.append(p)
        return None, problems


def check_settings(fleet: Fleet) -> list[Problem]:
    """Dates in the fleet-wide tables stay inside the years the planner accepts."""
    problems = []
    for k, day in enumerate(fleet.workshop.closed):
        if not EARLIEST_DATE <= day <= LATEST_DATE:
            problems.append(Problem(
                f"closed day {day.isoformat()} is outside {EARLIEST_DATE.year}-"
                f"{LATEST_DATE.year}", ("workshop", "closed", k),
                hint="check the year of the holiday"))
    return problems


def check_vehicles(
    vehicles: Iterable[tuple[int, Vehicle]],
    engines: dict[str, EngineProfile],
    engine_ids: set[str] | None = None,
) -> list[Problem]:
    """The rules that look across fields, vehicles and profiles."""
    engine_ids = set(engines) if engine_ids is None else engine_ids | set(engines)
    problems: list[Problem] = []
    first_seen: dict[str, int] = {}
    for index, v in vehicles:
        problems.extend(_duplicate_id(index, v, first_seen))
        problems.extend(check_vehicle(index, v, engines, engine_ids))
    return problems


def _duplicate_id(index: int, v: Vehicle, first_seen: dict[str, int]) -> list[Problem]:
    """The one rule across vehicles: each id once (`first_seen` carries the ids so far)."""
    if v.id not in first_seen:
        first_seen[v.id] = index
        return []
    return [Problem(f"id {v.id!r} is already used by vehicle #{first_seen[v.id] + 1}",
                    ("vehicles", index, "id"),
                    hint="give every vehicle its own id (fleet number or plate)",
                    vehicle=v.id)]


def check_vehicle(index: int, v: Vehicle, engines: dict[str, EngineProfile],
                  engine_ids: set[str], dates: bool = True) -> list[Problem]:
    """The rules of one vehicle with its profile: a known profile, dates and odometers in
    order. (A missing drive type or interval is a warning, not an error: `fleet_warnings`.)"""
    problems: list[Problem] = []
    base: Path = ("vehicles", index)

    def add(msg: str, *field: str | int, hint: str = "") -> None:
        problems.append(Problem(msg, base + tuple(field), hint=hint, vehicle=v.id))

    if v.engine is not None:
        if v.engine not in engine_ids:
            near = difflib.get_close_matches(v.engine, sorted(engine_ids), n=1)
            known = ", ".join(sorted(engine_ids)) or "none"
            add(
                f"unknown engine profile {v.engine!r}",
                "engine",
                hint=(f"did you mean {near[0]!r}? " if near else "")
                + f"define [engines.{v.engine}] or use one of: {known}",
            )
    if dates:
        _check_dates_and_odometers(v, add)
    return problems


def fleet_warnings(fleet: Fleet) -> list[Problem]:
    """What a valid fleet leaves missing or doubtful: the file loads and is planned, and each
    of these is a warning (`Problem.severity`), located by the caller like an error."""
    out: list[Problem] = []
    settings = fleet.fleet
    for old, new in OLD_SETTING_NAMES.items():
        if getattr(settings, old) is not None:
            both = new in settings.model_fields_set
            out.append(Problem(
                f"{old} is the earlier name of {new}: the file still loads"
                + (f", and {new} (also given) is the one used" if both else ""),
                ("fleet", old), hint=f"rename the key to {new}" if not both else
                f"remove {old}", severity=WARNING))
    for index, v in enumerate(fleet.vehicles):
        out.extend(vehicle_warnings(index, v, fleet))
    return out


def vehicle_warnings(index: int, v: Vehicle, fleet: Fleet) -> list[Problem]:
    """One vehicle's warnings: facts missing to plan its belt, a used vehicle taken for a
    factory belt, a previous owner's belt job, a belt job recorded twice."""
    out: list[Problem] = []
    base: Path = ("vehicles", index)

    def warn(msg: str, *field: str | int, hint: str = "") -> None:
        out.append(Problem(msg, base + tuple(field), hint=hint, vehicle=v.id, severity=WARNING))

    if v.engine is not None and v.engine not in fleet.engines:
        return out  # an unknown profile is an error; its vehicle never gets here
    spec = resolve_spec(v, fleet)
    if spec.missing:
        where = f"engine profile {v.engine!r} or the vehicle" if v.engine else "the vehicle"
        if spec.interval_basis in (IntervalBasis.SEVERE_UNKNOWN, IntervalBasis.SEVERE_PARTIAL) \
                and spec.missing[0].startswith("severe"):
            what = "severe duty, but no severe-service interval is known"
            if spec.interval_basis is IntervalBasis.SEVERE_PARTIAL:
                what = "severe duty, but a severe-service interval is known for one limit only"
        elif spec.missing[0] == "drive":
            what = "no drive type given"
        else:
            what = f"no replacement interval known for a {spec.drive_word}"
        facts = " and ".join(f"{FACT_WORDS[k]} ({k})" for k in spec.missing)
        them = "them" if len(spec.missing) > 1 else "it"
        warn(f"{what}: planned as missing-fact (needs attention now, never ok) until "
             f"{'they are' if them == 'them' else 'it is'} found", spec.missing[0],
             hint=f"find {facts}, and set {them} on {where}"
             + ("" if spec.missing == ("drive",) else
                "; a belt is due by distance or age, whichever comes first"))
    if spec.has_interval and v.belt_history is BeltHistory.KNOWN and not v.belt_jobs \
            and v.in_service_odometer > USED_ODOMETER[fleet.unit]:
        warn(f"entered service at {v.in_service_odometer:,.0f} {fleet.unit} with belt_history = "
             "\"known\" and no belt job: planned as if the factory belt were fitted at "
             f"{v.in_service_odometer:,.0f} {fleet.unit}", "belt_history",
             hint="if it was bought used without a belt record, set belt_history = \"unknown\" "
             "(common practice: replace on acquisition); if the belt was changed, record the job")
    for j, job in enumerate(v.belt_jobs):
        if job.date < v.in_service:
            warn(f"belt job of {job.date} is dated before the vehicle entered service "
                 f"({v.in_service}): accepted as a previous owner's record", "belt_jobs", j,
                 hint="check that the record is this vehicle's (plate or chassis number)")
    out.extend(repeated_job_warnings(index, v, fleet.unit))
    return out


def repeated_job_warnings(index: int, v: Vehicle, unit: str) -> list[Problem]:
    """A belt job recorded twice (same day, same odometer): one warning per repeat."""
    out = []
    seen: dict[tuple[dt.date, float], int] = {}
    for j, job in enumerate(v.belt_jobs):
        key = (job.date, job.odometer)
        if key in seen:
            out.append(Problem(
                f"the belt job of {job.date} at {job.odometer:,.0f} {unit} is recorded twice "
                f"(also belt_jobs[{seen[key]}])", ("vehicles", index, "belt_jobs", j),
                hint="remove one of them (two jobs on one day at one odometer is one job)",
                vehicle=v.id, severity=WARNING))
        else:
            seen[key] = j
    return out


def _check_dates_and_odometers(v: Vehicle, add: Any) -> None:
    dated: list[tuple[dt.date, float, tuple[str | int, ...], str]] = []
    for i, r in enumerate(v.readings):
        dated.append((r.date, r.odometer, ("readings", i), "reading"))
    for j, job in enumerate(v.belt_jobs):
        dated.append((job.date, job.odometer, ("belt_jobs", j), "belt job"))

    earlier: list[int] = []
    for k, (day, odo, where, kind) in enumerate(dated):
        if not EARLIEST_DATE <= day <= LATEST_DATE:
            add(f"date {day.isoformat()} is outside {EARLIEST_DATE.year}-{LATEST_DATE.year}",
                *where, "date", hint="check the year")
        elif day < v.in_service and kind == "belt job":
            # A previous owner's receipt: accepted when its odometer fits (a warning says so).
            if odo > v.in_service_odometer:
                add(f"belt job dated {day.isoformat()}, before the vehicle entered service "
                    f"({v.in_service.isoformat()}), reads {odo:,.0f}: above the in-service "
                    f"odometer {v.in_service_odometer:,.0f}", *where, "odometer",
                    hint="correct the job's date or odometer, or in_service_odometer")
                earlier.append(k)
            elif v.first_registered is not None and day < v.first_registered:
                add(f"belt job dated {day.isoformat()}, before the vehicle was first registered "
                    f"({v.first_registered.isoformat()})", *where, "date",
                    hint="correct the date, or first_registered")
        elif day < v.in_service:
            add(
                f"{kind} dated {day.isoformat()} is before the vehicle entered service "
                f"({v.in_service.isoformat()})",
                *where, "date",
                hint="correct the date, or set in_service to the day the vehicle first went "
                "into service",
            )
    if v.first_registered is not None and v.first_registered > v.in_service:
        add(f"first_registered {v.first_registered} is after in_service {v.in_service}",
            "first_registered", hint="a vehicle is registered before it enters your service")
    for name in ("in_service", "first_registered"):
        day = getattr(v, name)
        if day is not None and not EARLIEST_DATE <= day <= LATEST_DATE:
            add(f"{name} {day.isoformat()} is outside {EARLIEST_DATE.year}-"
                f"{LATEST_DATE.year}", name, hint="check the year")

    # Odometers only go forward: each value must be at least every value dated before it.
    dated = [d for k, d in enumerate(dated) if k not in earlier]  # reported above
    dated.append((v.in_service, v.in_service_odometer, ("in_service_odometer",), "in service"))
    dated.sort(key=lambda x: (x[0], x[1]))
    highest: tuple[dt.date, float, str] | None = None
    for day, odo, where, kind in dated:
        if highest is not None and odo < highest[1] and day > highest[0]:
            path = where if where[0] == "in_service_odometer" else (*where, "odometer")
            add(
                f"odometer goes backwards: {kind} of {day.isoformat()} reads {odo:,.0f}, but "
                f"{highest[2]} of {highest[0].isoformat()} read {highest[1]:,.0f}",
                *path,
                hint="correct the reading; odometers only go forward",
            )
            continue
        if highest is None or odo > highest[1]:
            highest = (day, odo, kind)

    for k, span in enumerate(v.unavailable):
        outside = [e for e in ("start", "end")
                   if not EARLIEST_DATE <= getattr(span, e) <= LATEST_DATE]
        for end in outside:
            add(f"unavailable {end} {getattr(span, end).isoformat()} is outside "
                f"{EARLIEST_DATE.year}-{LATEST_DATE.year}", "unavailable", k, end,
                hint="check the year")
        if not outside and span.end < span.start:
            add(f"unavailable range ends ({span.end}) before it starts ({span.start})",
                "unavailable", k, "end", hint="swap start and end")


# -- TOML types: a value of the wrong type is reported, never converted ------------------------
#
# tomllib gives each TOML type its own Python type (TOML 1.0 spec, "Table" of types; the
# standard library's tomllib docs, conversion table). Pydantic's lax mode would quietly turn
# odometer = "12" into 12.0, true into 1.0, in_service = 0 into 1970-01-01 and 12.0 months into
# 12, so the kinds are checked here first, against the models' own annotations.

Kind = Any  # "text" | "integer" | "number" | "boolean" | "date" | (tag, inner) | None

_FITS: dict[str, tuple[type, ...]] = {
    "text": (str,),
    "integer": (int,),
    "number": (int, float),
    "boolean": (bool,),
    "date": (dt.date,),
}
_WANTED = {
    "text": "text in double quotes",
    "integer": "a whole number",
    "number": "a number",
    "boolean": "true or false",
    "date": "a date (YYYY-MM-DD)",
}


def _kind(annotation: Any) -> Kind:
    """The TOML kind a field accepts, from its type annotation (None: not checked here)."""
    origin = typing.get_origin(annotation)
    args = typing.get_args(annotation)
    if origin is typing.Annotated:
        return _kind(args[0])
    if origin in (typing.Union, types.UnionType):
        kinds = {repr(k): k for k in (_kind(a) for a in args if a is not type(None))}
        return next(iter(kinds.values())) if len(kinds) == 1 else None
    if origin is typing.Literal:
        if all(isinstance(a, str) for a in args):
            return "text"
        if all(type(a) is int for a in args):
            return "integer"
        return None
    if origin is list:
        return ("array", _kind(args[0])) if args else None
    if origin is dict:
        return ("tables", _kind(args[1])) if len(args) == 2 else None
    if _is_model(annotation):
        return ("table", annotation)
    if isinstance(annotation, type):
        if issubclass(annotation, Enum):
            return "text" if issubclass(annotation, str) else None
        for cls, kind in ((bool, "boolean"), (int, "integer"), (float, "number"),
                          (str, "text"), (dt.datetime, None), (dt.date, "date")):
            if issubclass(annotation, cls):
                return kind
    return None


@functools.cache
def _field_checks(model: type[BaseModel]) -> dict[str, tuple[Kind, tuple[type, ...] | None]]:
    """Per key of `model`'s table: its kind, and the Python types tomllib may give it."""
    checks = {}
    for name, f in fields_of(model).items():
        kind = _kind(f.annotation)
        checks[f.alias or name] = (kind, _FITS.get(kind) if isinstance(kind, str) else None)
    return checks


def _type_problems(value: Any, kind: Kind, path: Path, vehicle: str | None,
                   out: list[Problem]) -> None:
    """Append a problem for every value under `value` whose TOML type `kind` does not allow.

    Runs over every value of the file, so the common case (a scalar of the right type) costs
    one dictionary lookup and one type test.
    """
    if kind is None:
        return
    if not isinstance(kind, tuple):
        if type(value) not in _FITS[kind]:
            out.append(_wrong_type(value, kind, path, vehicle))
        elif type(value) is float and not math.isfinite(value):
            out.append(_not_finite(value, kind, path, vehicle))
        elif type(value) is str and not value.isprintable():
            hit = _CONTROL.search(value)
            if hit:
                out.append(_control_character(value, hit.start(), path, vehicle))
        return
    tag, inner = kind  # a container: a wrong shape is pydantic's to report
    if tag == "table" and type(value) is dict:
        checks = _field_checks(inner)
        for key, item in value.items():
            check = checks.get(key)
            if check is None:
                continue
            if not _plain(item, check[1]):
                _type_problems(item, check[0], path + (key,), vehicle, out)
    elif tag == "array" and type(value) is list:
        if isinstance(inner, tuple) and inner[0] == "table":
            checks = _field_checks(inner[1])  # readings: a hot loop, one call per bad table
            for i, item in enumerate(value):
                if type(item) is not dict or not _fits_all(item, checks):
                    _type_problems(item, inner, path + (i,), vehicle, out)
            return
        for i, item in enumerate(value):
            _type_problems(item, inner, path + (i,), vehicle, out)
    elif tag == "tables" and type(value) is dict:
        for key, item in value.items():
            hit = None if key.isprintable() else _CONTROL.search(key)
            if hit:  # a table's name is shown too, e.g. an engine profile's id
                out.append(_control_character(key, hit.start(), path + (key,), vehicle))
            _type_problems(item, inner, path + (key,), vehicle, out)


def _fits_all(table: dict[str, Any], checks: dict[str, tuple[Kind, Any]]) -> bool:
    """Every known key of `table` holds a plain scalar of an allowed type (the common case)."""
    for key, item in table.items():
        check = checks.get(key)
        if check is None:
            continue
        if not _plain(item, check[1]):
            return False
    return True


def _plain(item: Any, fits: tuple[type, ...] | None) -> bool:
    """A scalar of an allowed type that needs no closer look (finite, printable)."""
    return not (fits is None or type(item) not in fits
                or (type(item) is float and not math.isfinite(item))
                or (type(item) is str and not item.isprintable()))


_CONTROL = CONTROL_CHARACTER
_CONTROL_NAMES = {0x00: "NUL", 0x07: "bell", 0x08: "backspace", 0x0C: "form feed",
                  0x1B: "escape", 0x7F: "delete"}


def _control_character(value: str, at: int, path: Path, vehicle: str | None) -> Problem:
    code = ord(value[at])
    name = f"U+{code:04X}" + (f" ({_CONTROL_NAMES[code]})" if code in _CONTROL_NAMES else "")
    return Problem(f"text holds a control character {name} at position {at + 1}", path,
                   hint="remove it (in the file it is written as an escape such as "
                   f"\\u{code:04x}): control characters would be sent to the terminal or the "
                   "export as commands", vehicle=vehicle)


def _not_finite(value: float, kind: str, path: Path, vehicle: str | None) -> Problem:
    return Problem(f"{_show(value)} is not a usable number", path,
                   hint=f"write the real value, e.g. {_key(path)}120000"
                   if kind == "number" else "write the real value", vehicle=vehicle)


def _key(path: Path) -> str:
    """`name = ` for a hint's example, or nothing for an item of an array."""
    return f"{path[-1]} = " if path and isinstance(path[-1], str) else ""


def _wrong_type(value: Any, kind: str, path: Path, vehicle: str | None) -> Problem:
    key = _key(path)
    what = _toml_type(value)
    message = f"wrong type: expected {_WANTED[kind]}, found {_found(value)}"
    plain = value.strip() if isinstance(value, str) else None
    hint = f"write {_WANTED[kind]}, e.g. {key}{_EXAMPLE[kind]}"
    if kind == "integer" and isinstance(value, float) and math.isfinite(value):
        hint = f"write {_WANTED[kind]}, e.g. {key}{math.floor(value)}"
    if kind in ("number", "integer") and plain is not None and _is_number(plain):
        hint = f"write the number without quotes: {key}{plain}"
    elif kind == "integer" and isinstance(value, float) and value.is_integer():
        hint = f"write a whole number: {key}{int(value)}"
    elif kind == "date" and plain is not None and _is_date(plain):
        hint = f"write the date without quotes: {key}{plain}"
    elif kind == "date" and isinstance(value, dt.datetime):
        hint = f"write the day only, without a time: {key}{value.date().isoformat()}"
    elif kind == "boolean" and plain is not None and plain.lower() in ("true", "false"):
        hint = f"write it without quotes, in small letters: {key}{plain.lower()}"
    elif kind == "text" and what not in ("array", "table"):
        hint = f'put it in double quotes: {key}"{_show(value)}"'
    return Problem(message, path, hint=hint, vehicle=vehicle)


_EXAMPLE = {"text": '"…"', "integer": "12", "number": "120000", "boolean": "true",
            "date": "2026-11-20"}


def _is_number(text: str) -> bool:
    try:
        return math.isfinite(float(text)) and "," not in text and "_" not in text
    except ValueError:
        return False


def _is_date(text: str) -> bool:
    try:
        dt.date.fromisoformat(text)
    except ValueError:
        return False
    return len(text) == 10


def _toml_type(value: Any) -> str:
    """The TOML type of a parsed value, in the words of the TOML 1.0 spec."""
    if isinstance(value, bool):
        return "boolean"
    if isinstance(value, int):
        return "integer"
    if isinstance(value, float):
        return "float"
    if isinstance(value, str):
        return "text"
    if isinstance(value, dt.datetime):
        return "date-time"
    if isinstance(value, dt.date):
        return "date"
    if isinstance(value, dt.time):
        return "time"
    if isinstance(value, list):
        return "array"
    if isinstance(value, dict):
        return "table"
    return type(value).__name__


def _found(value: Any) -> str:
    """`text "12"`, `true`, `an array`: what the file holds, for "found …"."""
    what = _toml_type(value)
    if what == "array":
        return "an array"
    if what == "table":
        return "a table"
    return f"{what} {_show(value)}" if what in ("text", "date-time", "time") else _show(value)


def _show(value: Any, limit: int = 60) -> str:
    """A value as it would be written in the file, shortened."""
    if isinstance(value, bool):
        shown = "true" if value else "false"
    elif isinstance(value, str):
        shown = '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'
        shown = shown.encode("unicode_escape").decode("ascii").replace("\\\\", "\\")
    elif isinstance(value, (dt.date, dt.time)):
        shown = value.isoformat()
    elif isinstance(value, float):
        shown = "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf") \
            if math.isinf(value) else repr(value)
    elif isinstance(value, list):
        shown = f"an array of {len(value)}"
    elif isinstance(value, dict):
        shown = "a table"
    else:
        shown = repr(value)
    return shown if len(shown) <= limit else shown[: limit - 3] + "..."


# -- pydantic errors in the fleet file's own words --------------------------------------------

def _from_pydantic(exc: ValidationError, prefix: Path, vehicle: str | None) -> list[Problem]:
    problems = []
    for err in exc.errors():
        loc = tuple(p for p in err["loc"] if p != "[key]")
        path = prefix + loc
        message, hint = _explain(err, path, "[key]" in err["loc"])
        problems.append(Problem(message, path, hint=hint, vehicle=vehicle))
    return problems


def _explain(err: Any, path: Path, is_key: bool = False) -> tuple[str, str]:
    """(message, fix) for one pydantic error at `path` (the full data path)."""
    kind = err["type"]
    ctx = err.get("ctx") or {}
    value = err.get("input")
    name = next((str(p) for p in reversed(path) if isinstance(p, str)), "")
    if kind == "value_error" and ID_REFUSED in str(err.get("msg")) and isinstance(value, str):
        return _not_one_line(value, "the name of this table" if is_key else name)
    if is_key:  # the name of a table in a table of tables, e.g. an engine profile's id
        table = ".".join(str(p) for p in path[:-1])
        return (f"the name {_show(value)} in [{table}] is not usable: {err['msg'].lower()}",
                f"give it a name of 1 to 64 characters, e.g. [{table}.p16]")
    if kind == "extra_forbidden":
        key = str(path[-1]) if path else "?"
        allowed = _allowed_keys(path[:-1])
        near = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
        hint = (f"did you mean {near[0]!r}?" if near else
                "allowed here: " + ", ".join(allowed) if allowed else "remove it")
        return f"unknown key {key!r}", hint
    if kind == "missing":
        described = _description(path)
        return "required key is missing", f"add {name} = …" + (
            f": {described[0].lower() + described[1:].rstrip('.')}" if described else "")
    if path == ("schema",):
        return (f"unsupported format version {_show(value)}",
                "this beltplan reads schema = 1; a file for another version needs the beltplan "
                "that wrote it (or set schema = 1 if it follows this README's format)")
    found = f"(found {_show(value)})"
    item = bool(path) and isinstance(path[-1], int)  # an item of an array, e.g. parts[0]
    if kind in ("enum", "literal_error"):
        return (f"{_show(value)} is not allowed here: expected {ctx.get('expected', '?')}",
                "write one of the words listed, in double quotes")
    for bound, words in (("gt", "greater than"), ("ge", "at least"),
                         ("lt", "less than"), ("le", "at most")):
        if kind.startswith(("greater_than", "less_than")) and bound in ctx:
            limit = _number_text(ctx[bound])
            low = bound in ("gt", "ge")
            if low and float(ctx[bound]) > 0:  # a range of its own: say it, and why
                why = _description(path)
                return (f"{name} must be {words} {limit} {found}",
                        f"set {name} to {limit} or more" + (f". {why}" if why else ""))
            return (f"{name} must be {words} {limit} {found}",
                    "check for a minus sign or a missing digit" if low else
                    f"check for an extra digit: {limit} is a sanity limit no real value reaches")
    if kind == "string_too_long":
        return (f"text too long: {len(value)} characters, at most {ctx.get('max_length')}",
                "shorten it; long notes belong in your own records")
    if kind == "string_too_short":
        if item:
            return f"an item of {name} is empty", "remove the empty \"\" from the array"
        what = "an id (fleet number or plate)" if name == "id" else "some text"
        return f"{name} is empty", f"write {what}, or remove the key"
    if kind in ("model_type", "model_attributes_type", "dict_type", "dataclass_type"):
        header = ".".join(str(p) for p in path if isinstance(p, str))
        if item:
            example = "{ date = 2026-11-20, odometer = 98400 }" if name == "readings" else \
                "{ … }"
            return (f"an item of {name} must be a table, found {_found(value)}",
                    f"write each item as an inline table: {example}")
        return (f"expected a table, found {_found(value)}",
                f"write it as a [{header}] table, or inline as {name} = {{ … }}")
    if kind in ("list_type", "tuple_type"):
        if name in ("belt_jobs", "unavailable"):
            return (f"expected an array of tables, found {_found(value)}",
                    f"write each as a [[vehicles.{name}]] table (two brackets), or "
                    f"{name} = [{{ … }}, …]")
        example = "{ date = 2026-11-20, odometer = 98400 }, …" if name == "readings" else "…"
        return (f"expected an array, found {_found(value)}",
                f"write it in square brackets: {name} = [{example}]")
    return (f"{err['msg']} {found}",
            "see the fleet-file reference in the README (`beltplan schema` lists every key)")


def _not_one_line(value: str, name: str) -> tuple[str, str]:
    """(message, fix) for an id or a table's name holding a character it may not (one that
    `planner.safetext.shown` would escape): which one, where, and why."""
    at = first_unshown(value) or 0
    code = ord(value[at])
    what = _CONTROL_NAMES.get(code, {0x09: "tab", 0x0A: "line feed", 0x0D: "carriage return",
                                     0x2028: "line separator"}.get(code, ""))
    label = f"U+{code:04X}" + (f" ({what})" if what else "")
    return (f"{name} holds {label} at position {at + 1}: an id or a name is one line of "
            "visible text",
            f"remove it (in the file it is written as an escape such as \\u{code:04x}): it "
            "would start a new line or send a command in every message and list that shows it")


def _number_text(value: Any) -> str:
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    return f"{value:,}" if isinstance(value, int) and abs(value) >= 10000 else str(value)


def _description(path: Path) -> str:
    """The model's description of the field at `path`, for hints."""
    parent = _model_at(path[:-1])
    if parent is None or not path or not isinstance(path[-1], str):
        return ""
    for name, f in fields_of(parent).items():
        if path[-1] in (name, f.alias):
            return f.description or ""
    return ""


def _allowed_keys(path: Path) -> list[str]:
    """Keys allowed in the table at `path`, for 'did you mean' hints."""
    model = _model_at(path)
    if model is None:
        return []
    return [f.alias or name for name, f in fields_of(model).items()]


def _model_at(path: Path) -> Any:
    """The model of the table at `path`, or None when it is not a table of the file."""
    model: Any = Fleet
    for part in path:
        if isinstance(part, int):
            continue
        if model is dict:
            model = EngineProfile
            continue
        field = fields_of(model).get(part) if _is_model(model) else None
        if field is None:
            alias_hit = [f for f in fields_of(model).values() if f.alias == part]
            if not alias_hit:
                return None
            field = alias_hit[0]
        model = _inner_model(field.annotation)
        if model is None:
            return None
    return model if _is_model(model) else None


def _is_model(obj: Any) -> bool:
    return is_table_class(obj)


def _inner_model(annotation: Any) -> Any:
    if _is_model(annotation):
        return annotation
    origin = typing.get_origin(annotation)
    if origin is dict:
        return dict
    if origin in (list, typing.Union, types.UnionType, typing.Annotated):
        for arg in typing.get_args(annotation):
            found = _inner_model(arg)
            if found is not None:
                return found
    return None


__all__ = ["build_fleet", "check_vehicles", "fleet_warnings", "SPEC_FIELDS"]
