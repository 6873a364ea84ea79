"""Which column fills which field: `--map COLUMN=field` first, then header words."""

from __future__ import annotations

import difflib
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from planner.errors import PlannerError
from planner.importing.fields import NOT_MAPPABLE, FieldInfo
from planner.importing.values import KM_WORDS, MI_WORDS

IGNORE = "ignore"


def header_key(header: str) -> tuple[str, str | None]:
    """Normalised header words and the distance unit the header names: 'Odo (km)' -> odo, km."""
    words = re.findall(r"[a-z0-9]+", header.casefold())
    unit = "km" if KM_WORDS & set(words) else "mi" if MI_WORDS & set(words) else None
    kept = [w for w in words if w not in KM_WORDS | MI_WORDS]
    return " ".join(kept or words), unit


@dataclass(frozen=True)
class ColumnUse:
    """What the importer does with one column, and why."""

    index: int
    header: str
    field: str | None
    how: str  # "--map", "header word 'odometer'", or why the column is not used
    unit: str | None = None  # distance unit named in the header


def parse_map(items: Sequence[str] | None) -> dict[str, str]:
    """`['Reg=id', 'Odo (km)=reading_odometer']` -> {column: field}; checks the shape only."""
    out: dict[str, str] = {}
    for item in items or ():
        column, eq, name = item.rpartition("=")
        if not eq or not column.strip() or not name.strip():
            raise PlannerError(f"--map {item!r} is not COLUMN=field",
                               "write the column's header, '=', then the field, e.g. "
                               "--map \"Fleet no=id\" (or COLUMN=ignore to leave a column out)")
        out[column.strip()] = name.strip()
    return out


def map_columns(header: Sequence[str], explicit: Mapping[str, str],
                fields: Mapping[str, FieldInfo]) -> list[ColumnUse]:
    """Decide which column fills which field: `--map` first, then header words."""
    chosen: dict[int, ColumnUse] = {}
    taken: dict[str, int] = {}
    keys = [header_key(h) for h in header]
    for column, name in explicit.items():
        hits = [k for k, h in enumerate(header) if h == column] or \
            [k for k, h in enumerate(header) if h.casefold() == column.casefold()]
        if not hits:
            near = difflib.get_close_matches(column, list(header), n=1, cutoff=0.5)
            raise PlannerError(f"--map: no column named {column!r}",
                               (f"did you mean {near[0]!r}? " if near else "") +
                               "the columns are: " + ", ".join(repr(h) for h in header))
        if len(hits) > 1:
            raise PlannerError(f"--map: {len(hits)} columns are named {column!r}",
                               "rename one of them in the sheet, then import again")
        if name != IGNORE and name not in fields:
            if name in NOT_MAPPABLE:
                raise PlannerError(f"--map: {name!r} cannot come from one column",
                                   NOT_MAPPABLE[name])
            near = difflib.get_close_matches(name, list(fields), n=1)
            raise PlannerError(f"--map: unknown field {name!r}" +
                               (f" (did you mean {near[0]!r}?)" if near else ""),
                               "fields: " + ", ".join(fields) + f", or {IGNORE}")
        if name in taken:
            raise PlannerError(f"--map: {name} is given twice",
                               f"columns {header[taken[name]]!r} and {header[hits[0]]!r}; "
                               "map one column to each field")
        k = hits[0]
        chosen[k] = ColumnUse(k, header[k], None if name == IGNORE else name,
                              "left out (--map)" if name == IGNORE else "--map", keys[k][1])
        if name != IGNORE:
            taken[name] = k
    for name, info in fields.items():
        if name in taken:
            continue
        for word in (header_key(name.replace("_", " "))[0], *info.words):
            hits = [k for k in range(len(header)) if k not in chosen and keys[k][0] == word]
            if len(hits) > 1:
                raise PlannerError(
                    f"columns {', '.join(repr(header[k]) for k in hits)} all look like {name}",
                    f"say which with --map, e.g. --map \"{header[hits[0]]}={name}\" "
                    f"--map \"{header[hits[1]]}={IGNORE}\"")
            if hits:
                k = hits[0]
                chosen[k] = ColumnUse(k, header[k], name, f"header word {word!r}", keys[k][1])
                taken[name] = k
                break
    uses = []
    for k, h in enumerate(header):
        if k in chosen:
            uses.append(chosen[k])
            continue
        near = [f for f in fields if keys[k][0] in fields[f].words]
        why = (f"not used: {near[0]} comes from {header[taken[near[0]]]!r}" if near else
               "not used: no field has this header")
        uses.append(ColumnUse(k, h, None, why, keys[k][1]))
    return uses
