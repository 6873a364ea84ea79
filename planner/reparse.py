"""Checking an edited fleet text quickly: only the vehicles the edit touched are read again.

An edit in the UI (a reading, a belt job, a vehicle's fields) changes one `[[vehicles]]` table
of a text that was already read and validated. Parsing the whole text again takes seconds at
10,000 vehicles, on every form's OK; this reads the changed tables alone and validates them,
then runs the rules that look across vehicles over the whole list.

It is an optimisation of `fileio.parse_fleet_text`, never a second set of rules: the result is
the fleet that function gives for the new text, or the work is handed to it. It hands over
whenever it cannot show that the short way is sound:
- the change touches anything outside the vehicles' tables (settings, profiles, the first
  vehicle's header), or the vehicles are not written as `[[vehicles]]` tables;
- the changed tables are a large part of the text (reading it all is quicker then);
- the headers found do not count exactly the vehicles the old fleet has (a header-like line
  inside a multi-line string, say);
- the old tables, read alone, do not give back exactly the old fleet's vehicles (so the text
  around them does not change how they read);
- the new tables do not end with a line break before the header that follows them (their last
  line would run into it in the whole text), or, read alone, are not just vehicles, or anything
  in them has a problem (the full parse then reports every problem, located, as the loader does).
`tests/test_reparse.py` checks the result against the full parse over many random edits.
"""

from __future__ import annotations

import re
import tomllib
from typing import Any

from planner.errors import PlannerError
from planner.fileio import parse_fleet_text
from planner.fleet import Fleet, Vehicle
from planner.validate import rebuild_fleet

# A table header at the start of a line: `[name]` or `[[name]]`, key parts bare (quoted keys
# make the short way give up: no header of ours needs them).
_HEADER = re.compile(
    r"^[ \t]*\[(\[?)[ \t]*([A-Za-z0-9_\-. \t]*?)[ \t]*\](\]?)[ \t]*(?:#[^\n]*)?\r?$",
    re.MULTILINE)
_ANY_HEADER = re.compile(r"^[ \t]*\[", re.MULTILINE)
_CHUNK = 1 << 16


def reparse_fleet_text(text: str, name: str, before_text: str, before: Fleet) -> Fleet:
    """`parse_fleet_text(text, name)`, faster when `text` edits `before_text` (which gave
    `before`) inside its vehicles' tables."""
    quick = _quick(text, before_text, before)
    return quick if quick is not None else parse_fleet_text(text, name)


def _quick(new: str, old: str, fleet: Fleet) -> Fleet | None:
    """The fleet of `new` by reading only the changed vehicles, or None to read it all."""
    if new == old:
        return fleet
    start = _common_prefix(old, new)
    tail = _common_suffix(old, new, min(len(old), len(new)) - start)
    end = len(old) - tail  # old[start:end] became new[start:len(new) - tail]
    heads = _vehicle_headers(old)
    if heads is None or len(heads) != len(fleet.vehicles):
        return None
    line_start = old.rfind("\n", 0, start) + 1
    first = _last_before(heads, line_start)  # the vehicle before the changed line's own
    if first is None:
        return None
    block_start = heads[first]
    block_end = _next_boundary(old, end)
    if (block_end - block_start) * 4 > len(old):
        return None  # most of the text changed: reading it all is quicker
    old_block = old[block_start:block_end]
    new_block = new[block_start:block_end + len(new) - len(old)]
    if block_end < len(old) and not new_block.endswith("\n"):
        return None  # its last line would run into the next header: read alone, it differs
    old_raw = _vehicles_alone(old_block)
    if old_raw is None or first + len(old_raw) > len(fleet.vehicles):
        return None
    try:
        again = [Vehicle.model_validate(raw) for raw in old_raw]
    except ValueError:
        return None
    if again != fleet.vehicles[first:first + len(old_raw)]:
        return None
    new_raw = _vehicles_alone(new_block)
    if new_raw is None:
        return None
    try:
        return rebuild_fleet(fleet, first, first + len(old_raw), new_raw)
    except PlannerError:
        return None  # the full parse words and locates every problem


def _vehicle_headers(text: str) -> list[int] | None:
    """Where each `[[vehicles]]` header line starts; None when a header cannot be read."""
    heads = []
    for hit in _ANY_HEADER.finditer(text):
        header = _HEADER.match(text, hit.start())
        if header is None:
            if _inside_array_line(text, hit.start()):
                continue
            return None
        if header[1] == "[" and header[3] == "]" and _path(header[2]) == ["vehicles"]:
            heads.append(hit.start())
    return heads


def _inside_array_line(text: str, at: int) -> bool:
    """A line starting with `[` that is no header: a value inside a multi-line array."""
    line_end = text.find("\n", at)
    line = text[at:line_end if line_end >= 0 else len(text)].strip()
    return not line.startswith("[[") and line.endswith((",", "]", "],"))


def _path(key: str) -> list[str]:
    return [part.strip() for part in key.split(".")]


def _last_before(heads: list[int], limit: int) -> int | None:
    """The index of the last header that starts before `limit`."""
    lo, hi = 0, len(heads)
    while lo < hi:
        mid = (lo + hi) // 2
        if heads[mid] < limit:
            lo = mid + 1
        else:
            hi = mid
    return lo - 1 if lo > 0 else None


def _next_boundary(text: str, at: int) -> int:
    """The start of the first line at or after `at` that begins another vehicle or leaves the
    vehicles (a header not under `vehicles.`), else the end of the text."""
    line = text.rfind("\n", 0, at) + 1
    if line < at:
        line = text.find("\n", at) + 1 or len(text)
    for hit in _ANY_HEADER.finditer(text, line):
        header = _HEADER.match(text, hit.start())
        if header is None:
            continue  # a value line; the isolated parse decides
        path = _path(header[2])
        if path == ["vehicles"] and header[1] == "[":
            return hit.start()
        if path[0] != "vehicles":
            return hit.start()
    return len(text)


def _vehicles_alone(block: str) -> list[dict[str, Any]] | None:
    """The vehicles of a block of `[[vehicles]]` tables read on its own, or None."""
    try:
        data = tomllib.loads(block)
    except (tomllib.TOMLDecodeError, RecursionError):
        return None
    vehicles = data.get("vehicles")
    if set(data) != {"vehicles"} or not isinstance(vehicles, list):
        return None
    return vehicles


def _common_prefix(a: str, b: str) -> int:
    """The length of the longest common prefix (a chunk at a time, then halving)."""
    n = min(len(a), len(b))
    lo = 0
    while lo + _CHUNK <= n and a[lo:lo + _CHUNK] == b[lo:lo + _CHUNK]:
        lo += _CHUNK
    hi = min(n, lo + _CHUNK)
    while lo < hi:  # a[:lo] == b[:lo]; the first difference is before hi (or none: hi == n)
        mid = (lo + hi + 1) // 2
        if a[lo:mid] == b[lo:mid]:
            lo = mid
        else:
            hi = mid - 1
    return lo


def _common_suffix(a: str, b: str, limit: int) -> int:
    """The length of the longest common suffix, at most `limit`."""
    n = 0
    while n + _CHUNK <= limit and a[len(a) - n - _CHUNK:len(a) - n] == \
            b[len(b) - n - _CHUNK:len(b) - n]:
        n += _CHUNK
    hi = min(limit, n + _CHUNK)
    while n < hi:
        mid = (n + hi + 1) // 2
        if a[len(a) - mid:len(a) - n] == b[len(b) - mid:len(b) - n]:
            n = mid
        else:
            hi = mid - 1
    return n
