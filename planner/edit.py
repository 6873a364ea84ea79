"""Edits of fleet-file TEXT that keep the user's comments, key order and layout.

Each function takes the current text and already-converted values (dates as `datetime.date`,
numbers as int or float, `None` for "not set") and returns new text. Only the keys an edit is
about are touched; everything else is written back exactly as it was read. Nothing here
validates the fleet: the caller parses the result with `fileio.parse_fleet_text` (or saves it
with `fileio.save_fleet_text`, which parses first), so an edit can never slip past the rules
the loader applies.

New tables are placed where a person would put them: a new belt job after the vehicle's last
job, a new vehicle after the last vehicle, a new engine profile after the last profile. The
blank lines and comments that stood at the end of the previous table (usually the heading of
the next section) move below the new table, so they stay in front of what they introduce.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Callable, Iterable, Mapping, Sequence
from enum import Enum
from typing import Any

import tomlkit
from tomlkit.items import AoT, Array, Comment, InlineTable, Item, Table, Whitespace
from tomlkit.toml_document import TOMLDocument

from planner.edit_regions import Region, engine_region, has_engine_tables, vehicle_region
from planner.errors import PlannerError
from planner.fleet import EngineProfile, Vehicle

# Key order for tables the planner writes from scratch (the order of the README reference).
VEHICLE_KEYS: tuple[str, ...] = (
    "id", "label", "engine", "duty", "in_service", "in_service_odometer", "belt_history",
    "fuel", "drive", "interference", "interval_distance", "interval_months",
    "severe_interval_distance", "severe_interval_months", "labour_hours", "parts",
    "parts_cost", "failure_cost", "notes",
)
ENGINE_KEYS: tuple[str, ...] = (
    "description", "fuel", "drive", "interference", "interval_distance", "interval_months",
    "severe_interval_distance", "severe_interval_months", "labour_hours", "parts",
    "parts_cost", "failure_cost",
)
JOB_KEYS: tuple[str, ...] = ("date", "odometer", "reason", "work", "notes")

Values = Mapping[str, Any]


# -- public edits -----------------------------------------------------------------------------

def add_reading(text: str, vehicle_id: str, date: dt.date, odometer: float) -> str:
    """Append `{ date = …, odometer = … }` to the vehicle's `readings` array."""
    return add_readings(text, [(vehicle_id, date, odometer)])


def add_readings(text: str, readings: Sequence[tuple[str, dt.date, float]]) -> str:
    """Append `(vehicle id, date, odometer)` readings, each at the end of its vehicle's
    `readings` array, in one parse of the text (one parse per reading is far too slow for a
    week's export into a large file). The text is what one `add_reading` per reading gives."""
    if not readings:
        return text
    ids = {vehicle_id for vehicle_id, _, _ in readings}
    region = vehicle_region(text, next(iter(ids))) if len(ids) == 1 else None

    def change(doc: TOMLDocument) -> None:
        for vehicle_id, date, odometer in readings:
            _append_reading(_vehicle(doc, vehicle_id), vehicle_id, date, odometer)

    return _edit(text, change, region)


def _append_reading(vehicle: Table | InlineTable, vehicle_id: str, date: dt.date,
                    odometer: float) -> None:
    reading = _inline({"date": date, "odometer": _number(odometer)})
    readings = vehicle.get("readings")
    if readings is None:
        fresh = tomlkit.array()
        if isinstance(vehicle, InlineTable):  # a vehicle on one line keeps to one line
            fresh.append(reading)
        else:
            fresh.add_line(reading, indent="  ")
            fresh.add_line(indent="")
        vehicle["readings"] = fresh
    elif not isinstance(readings, Array):
        raise PlannerError(f"vehicle {vehicle_id}: readings is not an array",
                           "Fix the file by hand, then reload.")
    else:
        _append_inline(readings, reading)


def add_belt_job(text: str, vehicle_id: str, job: Values) -> str:
    """Add a `[[vehicles.belt_jobs]]` table after the vehicle's last job."""
    def change(doc: TOMLDocument) -> None:
        vehicle = _vehicle(doc, vehicle_id)
        table = _table(job, JOB_KEYS)
        jobs = vehicle.get("belt_jobs")
        if isinstance(jobs, Array) or (jobs is None and isinstance(vehicle, InlineTable)):
            inline = _inline({k: v for k, v in table.unwrap().items()})
            if jobs is None:
                vehicle["belt_jobs"] = tomlkit.array()
                jobs = vehicle["belt_jobs"]
            _append_inline(jobs, inline)
        elif jobs is None:
            # The vehicle's own trailing blank lines and comments go below its first job.
            trailer = _pop_trailer(vehicle)
            vehicle["belt_jobs"] = tomlkit.aot()
            vehicle["belt_jobs"].append(table)
            _push_trailer(table, trailer)
        elif isinstance(jobs, AoT):
            previous = _last_table(jobs[-1]) if len(jobs) else vehicle
            jobs.append(table)
            _share_trailer(previous, table)
        else:
            raise PlannerError(f"vehicle {vehicle_id}: belt_jobs is not an array of tables",
                               "Write each job as a [[vehicles.belt_jobs]] table, then reload.")

    return _edit(text, change, vehicle_region(text, vehicle_id))


def add_vehicle(text: str, values: Values) -> str:
    """Append a new `[[vehicles]]` table at the end of the vehicles."""
    def change(doc: TOMLDocument) -> None:
        table = _table(values, VEHICLE_KEYS)
        vehicles = doc.get("vehicles")
        if vehicles is None:
            previous = _last_table_of_document(doc)
            doc["vehicles"] = tomlkit.aot()
            doc["vehicles"].append(table)
        elif isinstance(vehicles, AoT):
            previous = _last_table(vehicles[-1]) if len(vehicles) else None
            vehicles.append(table)
        elif isinstance(vehicles, Array):  # written inline: the new one is inline too
            _append_inline(vehicles, _inline(table.unwrap()))
            return
        else:
            raise PlannerError("vehicles is not an array of tables",
                               "Write each vehicle as a [[vehicles]] table, then reload.")
        if previous is not None:
            _share_trailer(previous, table, separate=True)

    return _edit(text, change, vehicle_region(text, None))


def edit_vehicle(text: str, vehicle_id: str, values: Values) -> str:
    """Set the given keys of a vehicle (None removes a key); other keys stay as they are.

    A key whose value does not change is not rewritten, so its formatting and its comment
    survive; a key set to the model's default where the file had none is not added.
    """
    def change(doc: TOMLDocument) -> None:
        _update(_vehicle(doc, vehicle_id), values, Vehicle.model_fields)

    return _edit(text, change, vehicle_region(text, vehicle_id))


def delete_vehicle(text: str, vehicle_id: str) -> str:
    """Remove a vehicle with its readings and jobs.

    Comments that stood at the end of the vehicle's last table introduce what follows, so
    they are kept (moved to the end of the table before it).
    """
    def change(doc: TOMLDocument) -> None:
        vehicles = doc.get("vehicles")
        index = _vehicle_index(doc, vehicle_id)
        if isinstance(vehicles, Array):  # written inline
            del vehicles[index]
            return
        assert isinstance(vehicles, AoT)
        trailer = _pop_trailer(_last_table(vehicles[index]))
        if index > 0:
            before: Table | None = _last_table(vehicles[index - 1])
        else:
            before = _table_before(doc, "vehicles")
        del vehicles[index]
        if before is not None and any(isinstance(item, Comment) for item in trailer):
            own = _trailer_of(before)
            if own and isinstance(own[-1], Whitespace) and isinstance(trailer[0], Whitespace):
                trailer = trailer[1:]
            _push_trailer(before, trailer)

    # The vehicle before it is edited too (it may receive comments): both in the region.
    return _edit(text, change, vehicle_region(text, vehicle_id, with_previous=True))


def set_engine(text: str, profile_id: str, values: Values) -> str:
    """Add the `[engines.<profile_id>]` profile, or set keys of an existing one."""
    def change(doc: TOMLDocument) -> None:
        engines = doc.get("engines")
        if engines is not None and not isinstance(engines, Table):
            raise PlannerError("engines is not a table", "Fix the file by hand, then reload.")
        if engines is not None and profile_id in engines:
            profile = engines[profile_id]
            if not isinstance(profile, Table):
                raise PlannerError(f"engines.{profile_id} is not a table",
                                   "Fix the file by hand, then reload.")
            _update(profile, values, EngineProfile.model_fields)
            return
        table = _table(values, ENGINE_KEYS)
        assert engines is not None
        previous = _last_table(engines)
        engines[profile_id] = table
        if previous is not engines:
            _share_trailer(previous, table, separate=True)

    if not has_engine_tables(text) and "engines" not in _parse(text):
        table = _table(values, ENGINE_KEYS)
        return _crlf(text + _engine_text(profile_id, table, text), text)
    return _edit(text, change, engine_region(text, profile_id))


# -- editing only the part of the text an edit is about ---------------------------------------
#
# tomlkit reads a large file slowly (seconds for thousands of vehicles), so an edit parses only
# the tables it touches (found by `planner.edit_regions`); the whole text is the fallback.

SLICING = True  # tests compare the result with and without it


def _edit(text: str, change: Callable[[TOMLDocument], None], region: Region | None) -> str:
    if SLICING and region is not None:
        start, end, expected = region
        try:
            part = tomlkit.parse(text[start:end])
        except Exception:  # not a self-contained piece: use the whole text
            part = None
        if part is not None and expected(part):
            change(part)
            return _crlf(text[:start] + tomlkit.dumps(part) + text[end:], text)
    doc = _parse(text)
    change(doc)
    return _dump(doc, text)


# -- finding things ---------------------------------------------------------------------------

def _parse(text: str) -> TOMLDocument:
    try:
        return tomlkit.parse(text)
    except Exception as exc:  # tomlkit raises several types; the loader names the place
        raise PlannerError("the fleet file cannot be edited", f"it is not valid TOML: {exc}",
                           ) from None


def _vehicle_index(doc: TOMLDocument, vehicle_id: str) -> int:
    """Where the vehicle is in `[[vehicles]]` tables, or in `vehicles = [{ … }]` written inline."""
    vehicles = doc.get("vehicles")
    if isinstance(vehicles, (AoT, Array)):
        for index, table in enumerate(vehicles):
            if isinstance(table, (Table, InlineTable)) and table.get("id") == vehicle_id:
                return index
    raise PlannerError(f"no vehicle {vehicle_id!r} in the file",
                       "Reload the file: it may have changed.")


def _vehicle(doc: TOMLDocument, vehicle_id: str) -> Table | InlineTable:
    vehicles = doc["vehicles"] if "vehicles" in doc else None
    index = _vehicle_index(doc, vehicle_id)
    assert isinstance(vehicles, (AoT, Array))
    return vehicles[index]


def _append_inline(array: Array, value: InlineTable) -> None:
    """Append to an array written on one line or one element a line, in its own way."""
    if _is_multiline(array):
        array.add_line(value, indent=_indent_of(array))
    else:
        array.append(value)


def _last_table(node: Any) -> Any:
    """The table whose lines come last when `node` (a table or array of tables) is written."""
    if isinstance(node, AoT):
        return _last_table(node[-1]) if len(node) else None
    last = None
    for key, item in node.value.body:
        if key is not None:
            last = item
    if isinstance(last, (Table, AoT)):
        return _last_table(last) or node
    return node


def _last_table_of_document(doc: TOMLDocument) -> Table | None:
    last = None
    for key, item in doc.body:
        if key is not None and isinstance(item, (Table, AoT)):
            last = item
    return _last_table(last) if last is not None else None


def _table_before(doc: TOMLDocument, name: str) -> Table | None:
    """The last table written before the top-level `name` (for comments to move into)."""
    before = None
    for key, item in doc.body:
        if key is not None and key.key == name:
            break
        if key is not None and isinstance(item, (Table, AoT)):
            before = item
    return _last_table(before) if before is not None else None


# -- the blank lines and comments at the end of a table ---------------------------------------

def _trailer_of(table: Any) -> list[Item]:
    items: list[Item] = []
    for key, item in reversed(table.value.body):
        if key is not None or not isinstance(item, (Whitespace, Comment)):
            break
        items.append(item)
    return items[::-1]


def _pop_trailer(table: Any) -> list[Item]:
    """Take the blank lines and comments off the end of a table (they are not keys)."""
    count = len(_trailer_of(table))
    body = table.value.body
    taken = [item for _, item in body[len(body) - count:]]
    del body[len(body) - count:]
    return taken


def _push_trailer(table: Any, items: Iterable[Item]) -> None:
    for item in items:
        table.value.body.append((None, item))


def _share_trailer(previous: Any, new: Table, separate: bool = False) -> None:
    """`new` was written right after `previous`: move what ended `previous` below `new`.

    `previous` keeps one separating blank line if it had one, so the two tables stay apart
    the way the file had them; `separate` adds one if it had none (a new vehicle or profile).
    """
    new.trivia.indent = ""  # tomlkit sometimes adds its own blank line: decide here instead
    trailer = _pop_trailer(previous)
    if trailer and isinstance(trailer[0], Whitespace):
        _push_trailer(previous, [Whitespace(trailer[0].s)])
    elif separate:
        _push_trailer(previous, [Whitespace("\n")])
    _push_trailer(new, trailer)


# -- values -----------------------------------------------------------------------------------

def _number(value: float) -> int | float:
    """Whole numbers as integers (the way people write odometers), others as they are."""
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value


def _plain(value: Any) -> Any:
    if isinstance(value, tuple):
        return list(value)
    if isinstance(value, Enum):
        return value.value
    return value


def _item(value: Any) -> Item:
    return tomlkit.item(_plain(value))


def _inline(values: Values) -> InlineTable:
    body = ", ".join(f"{k} = {_item(v).as_string()}" for k, v in values.items())
    return tomlkit.parse(f"x = {{ {body} }}\n")["x"]


def _table(values: Values, order: tuple[str, ...]) -> Table:
    table = tomlkit.table()
    names = [k for k in order if k in values] + [k for k in values if k not in order]
    for name in names:
        value = values[name]
        if value is None or value == "" or value == [] or value == ():
            continue
        table.add(name, _item(value))
    return table


def _update(table: Table, values: Values, fields: Mapping[str, Any]) -> None:
    for name, value in values.items():
        value = _plain(value)
        if value == "" or value == [] or value == ():
            value = None
        present = name in table
        current = table[name].unwrap() if present and hasattr(table[name], "unwrap") else None
        if present and value is None:
            del table[name]
        elif value is None or (present and current == value and type(current) is type(value)):
            continue
        elif not present and name in fields and _plain(fields[name].default) == value:
            continue  # the default, and the file never said otherwise
        else:
            table[name] = _item(value)


def _is_multiline(array: Array) -> bool:
    return "\n" in array.as_string()


def _indent_of(array: Array) -> str:
    hit = re.search(r"\n([ \t]*)[^\s\]]", array.as_string())
    return hit.group(1) if hit else "  "


def _engine_text(profile_id: str, table: Table, text: str) -> str:
    """A first engine profile in a file without one: written at the end, as its own table."""
    doc = tomlkit.document()
    doc["engines"] = {profile_id: table}
    plain = text.replace("\r\n", "\n")
    gap = "" if not plain or plain.endswith("\n\n") else "\n" if plain.endswith("\n") else "\n\n"
    return gap + tomlkit.dumps(doc).lstrip("\n")


def _dump(doc: TOMLDocument, original: str) -> str:
    return _crlf(tomlkit.dumps(doc), original)


def _crlf(out: str, original: str) -> str:
    if "\r\n" in original:  # keep Windows line ends throughout, new lines included
        out = out.replace("\r\n", "\n").replace("\n", "\r\n")
    return out
