"""Where one vehicle's or one engine profile's tables stand in a fleet file's text.

`planner.edit` parses only that region with tomlkit (which reads a large file slowly) and
splices the edited region back. A region is found with line patterns, so each comes with a
check (`expected`) that the parsed region holds exactly the tables it should; when anything
looks unusual (a header-like line inside a multi-line string, an id used twice, an inline
table) no region is returned, or the check fails, and the whole text is edited instead.
"""

from __future__ import annotations

import re
import tomllib
from collections.abc import Callable

from tomlkit.items import AoT, Table
from tomlkit.toml_document import TOMLDocument

_VEHICLE_HEADER = re.compile(r"^[ \t]*\[\[[ \t]*vehicles[ \t]*\]\][ \t]*(#.*)?$", re.M)
_ENGINE_HEADER = re.compile(r"^[ \t]*\[[ \t]*engines[ \t]*\.[ \t]*(?P<id>[A-Za-z0-9_-]+|"
                            r"\"(?:[^\"\\\n]|\\.)*\"|'[^'\n]*')[ \t]*\][ \t]*(#.*)?$", re.M)
_ANY_HEADER = re.compile(r"^[ \t]*\[", re.M)
_ID_LINE = re.compile(r"^[ \t]*id[ \t]*=.*$", re.M)

# (start, end, expected): text[start:end] is the region; expected(parsed region) must hold.
Region = tuple[int, int, Callable[[TOMLDocument], bool]]


def has_engine_tables(text: str) -> bool:
    return _ENGINE_HEADER.search(text) is not None


def vehicle_region(text: str, vehicle_id: str | None,
                   with_previous: bool = False) -> Region | None:
    """The vehicle's lines (with the one before, or the last vehicle's when id is None)."""
    starts = [m.start() for m in _VEHICLE_HEADER.finditer(text)]
    if not starts:
        return None
    ids = [_id_after(text, s) for s in starts]
    if vehicle_id is None:
        index = len(starts) - 1
    elif ids.count(vehicle_id) == 1:
        index = ids.index(vehicle_id)
    else:
        return None
    first = index - 1 if with_previous else index
    if first < 0:
        return None
    end = starts[index + 1] if index + 1 < len(starts) else len(text)
    want = ids[first:index + 1]

    def expected(part: TOMLDocument) -> bool:
        vehicles = part.get("vehicles")
        return isinstance(vehicles, AoT) and [t.get("id") for t in vehicles] == want

    return starts[first], end, expected


def _id_after(text: str, start: int) -> str | None:
    """The id of the [[vehicles]] table whose header is at `start` (None if not found)."""
    line_end = text.find("\n", start)
    nxt = _ANY_HEADER.search(text, line_end + 1) if line_end >= 0 else None
    stop = nxt.start() if nxt else len(text)
    hit = _ID_LINE.search(text, line_end + 1 if line_end >= 0 else len(text), stop)
    if hit is None:
        return None
    try:
        value = tomllib.loads(hit.group(0).strip()).get("id")
    except tomllib.TOMLDecodeError:
        return None
    return value if isinstance(value, str) else None


def engine_region(text: str, profile_id: str) -> Region | None:
    """The profile's table, or for a new profile the last profile's (it goes after it)."""
    found = [(m.start(), _key(m.group("id"))) for m in _ENGINE_HEADER.finditer(text)]
    ids = [pid for _, pid in found]
    if not found or len(set(ids)) != len(ids):
        return None
    index = ids.index(profile_id) if profile_id in ids else len(found) - 1
    start = found[index][0]
    line_end = text.find("\n", start)
    nxt = _ANY_HEADER.search(text, line_end + 1) if line_end >= 0 else None
    end = nxt.start() if nxt else len(text)

    def expected(part: TOMLDocument) -> bool:
        engines = part.get("engines")
        return set(part) == {"engines"} and isinstance(engines, Table) and \
            list(engines) == [ids[index]]

    return start, end, expected


def _key(raw: str) -> str | None:
    try:
        return next(iter(tomllib.loads(f"{raw} = 0")))
    except tomllib.TOMLDecodeError:
        return None
