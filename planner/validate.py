"""From parsed TOML data to a checked `Fleet`, reporting every problem at once.

Each vehicle is validated on its own, so one bad vehicle does not hide the problems of the next;
then the rules that need the whole fleet run over everything that parsed. Problems carry data
paths; `planner.fileio` turns paths into lines. No file access here.
"""

from __future__ import annotations

import datetime as dt
import difflib
import types
import typing
from collections.abc import Iterable
from typing import Any

from pydantic import BaseModel, ValidationError

from planner.errors import Path, PlannerError, Problem
from planner.fleet import SPEC_FIELDS, EngineProfile, Fleet, Vehicle

EARLIEST_DATE = dt.date(1950, 1, 1)
LATEST_DATE = dt.date(2100, 12, 31)


def build_fleet(data: dict[str, Any]) -> Fleet:
    """Validate parsed TOML data; raise `PlannerError` listing every problem found."""
    problems: list[Problem] = []
    raw_vehicles = data.get("vehicles", [])
    if not isinstance(raw_vehicles, list):
        problems.append(
            Problem(
                "vehicles must be an array of tables",
                ("vehicles",),
                hint="write each vehicle as a [[vehicles]] table",
            )
        )
        raw_vehicles = []
    top = {k: v for k, v in data.items() if k != "vehicles"}
    shell: Fleet | None = None
    try:
        shell = Fleet.model_validate(top)
    except ValidationError as exc:
        problems.extend(_from_pydantic(exc, (), None))

    vehicles: list[tuple[int, Vehicle]] = []
    for index, raw in enumerate(raw_vehicles):
        vid = raw.get("id") if isinstance(raw, dict) else None
        vid = str(vid) if vid is not None else f"#{index + 1}"
        if not isinstance(raw, dict):
            problems.append(Problem("a vehicle must be a table", ("vehicles", index), vehicle=vid))
            continue
        try:
            vehicles.append((index, Vehicle.model_validate(raw)))
        except ValidationError as exc:
            problems.extend(_from_pydantic(exc, ("vehicles", index), vid))

    engines = shell.engines if shell else {}
    raw_engines = data.get("engines")
    engine_ids = set(raw_engines) if isinstance(raw_engines, dict) else set()
    problems.extend(check_vehicles(vehicles, engines, engine_ids))
    if problems:
        raise PlannerError(
            "The fleet file has problems",
            f"{len(problems)} problem{'s' if len(problems) != 1 else ''} found; "
            "nothing was planned.",
            problems,
        )
    assert shell is not None
    return shell.model_copy(update={"vehicles": [v for _, v in vehicles]})


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
        base: Path = ("vehicles", index)

        def add(msg: str, *field: str | int, hint: str = "", _v: Vehicle = v,
                _base: Path = base) -> None:
            problems.append(Problem(msg, _base + tuple(field), hint=hint, vehicle=_v.id))

        if v.id in first_seen:
            add(
                f"id {v.id!r} is already used by vehicle #{first_seen[v.id] + 1}",
                "id",
                hint="give every vehicle its own id (fleet number or plate)",
            )
        else:
            first_seen[v.id] = index

        profile = None
        if v.engine is not None:
            profile = engines.get(v.engine)
            if v.engine not in engine_ids:
                near = difflib.get_close_matches(v.engine, sorted(engine_ids), n=1)
                known = ", ".join(sorted(engine_ids)) or "none"
                add(
                    f"unknown engine profile {v.engine!r}",
                    "engine",
                    hint=(f"did you mean {near[0]!r}? " if near else "")
                    + f"define [engines.{v.engine}] or use one of: {known}",
                )
        spec = {f: _resolved(v, profile, f) for f in ("drive", "interval_distance",
                                                       "interval_months")}
        if v.engine is None or profile is not None:  # an unknown profile is reported above
            _check_drive(spec, v, add)
        _check_dates_and_odometers(v, add)
    return problems


def _resolved(v: Vehicle, profile: EngineProfile | None, name: str) -> Any:
    own = getattr(v, name)
    if own is not None:
        return own
    return getattr(profile, name) if profile is not None else None


def _check_drive(spec: dict[str, Any], v: Vehicle, add: Any) -> None:
    where = f"engine profile {v.engine!r} or the vehicle" if v.engine else "the vehicle"
    drive = spec["drive"]
    if drive is None:
        add("no drive type given", "drive",
            hint=f"set drive = \"belt\", \"wet-belt\", \"chain\" or \"gear\" on {where}")
        return
    if drive.has_interval:
        for name, words in (("interval_distance", "distance"), ("interval_months", "age")):
            if spec[name] is None:
                add(
                    f"missing interval for a {drive.value}: no {name}",
                    name,
                    hint=f"set {name} (the maker's {words} limit) on {where}; a belt is due "
                    "by distance or age, whichever comes first",
                )


def _check_dates_and_odometers(v: Vehicle, add: Any) -> None:
    dated: list[tuple[dt.date, float, tuple[str | int, ...], str]] = []
    for i, r in enumerate(v.readings):
        dated.append((r.date, r.odometer, ("readings", i), "reading"))
    for j, job in enumerate(v.belt_jobs):
        dated.append((job.date, job.odometer, ("belt_jobs", j), "belt job"))

    for day, _, where, kind in dated:
        if not EARLIEST_DATE <= day <= LATEST_DATE:
            add(f"date {day.isoformat()} is outside {EARLIEST_DATE.year}-{LATEST_DATE.year}",
                *where, "date", hint="check the year")
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
    if not EARLIEST_DATE <= v.in_service <= LATEST_DATE:
        add(f"in_service {v.in_service.isoformat()} is outside {EARLIEST_DATE.year}-"
            f"{LATEST_DATE.year}", "in_service", hint="check the year")

    # Odometers only go forward: each value must be at least every value dated before it.
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
        if span.end < span.start:
            add(f"unavailable range ends ({span.end}) before it starts ({span.start})",
                "unavailable", k, "end", hint="swap start and end")


# -- pydantic errors in the fleet file's own words --------------------------------------------

def _from_pydantic(exc: ValidationError, prefix: Path, vehicle: str | None) -> list[Problem]:
    problems = []
    for err in exc.errors():
        loc = tuple(p for p in err["loc"] if p != "[key]")
        path = prefix + loc
        kind = err["type"]
        hint = ""
        if kind == "extra_forbidden":
            key = str(loc[-1]) if loc else "?"
            allowed = _allowed_keys(path[:-1])
            near = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
            message = f"unknown key {key!r}"
            hint = (f"did you mean {near[0]!r}?" if near else
                    "allowed here: " + ", ".join(allowed) if allowed else "remove it")
        elif kind == "missing":
            message = "required key is missing"
            hint = f"add {loc[-1]} = …" if loc else ""
        else:
            shown = repr(err.get("input"))
            if len(shown) > 60:
                shown = shown[:57] + "..."
            message = f"{err['msg']} (found {shown})"
        problems.append(Problem(message, path, hint=hint, vehicle=vehicle))
    return problems


def _allowed_keys(path: Path) -> list[str]:
    """Keys allowed in the table at `path`, for 'did you mean' hints."""
    model: Any = Fleet
    for part in path:
        if isinstance(part, int):
            continue
        if model is dict:
            model = EngineProfile
            continue
        field = model.model_fields.get(part) if _is_model(model) else None
        if field is None:
            alias_hit = [f for f in model.model_fields.values() if f.alias == part]
            if not alias_hit:
                return []
            field = alias_hit[0]
        model = _inner_model(field.annotation)
        if model is None:
            return []
    if not _is_model(model):
        return []
    return [f.alias or name for name, f in model.model_fields.items()]


def _is_model(obj: Any) -> bool:
    return isinstance(obj, type) and issubclass(obj, BaseModel)


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


__all__ = ["build_fleet", "check_vehicles", "SPEC_FIELDS"]
