"""Engine profiles from imported vehicles: the drive fields they share move into a profile."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from planner.fleet import SPEC_FIELDS
from planner.importing.columns import ColumnUse
from planner.importing.fields import VEHICLE_ORDER
from planner.importing.values import whole

PROFILE_KEY = ("drive", "interference", "interval_distance", "interval_months",
               "severe_interval_distance", "severe_interval_months")


def make_profiles(vehicles: list[dict[str, Any]], unit: str, by_engine: bool, enabled: bool
                  ) -> tuple[dict[str, dict], dict[str, list[str]], dict[str, list[str]]]:
    """Group vehicles into engine profiles; move the drive fields they share into the profile.

    With an engine column, its value names the profile; otherwise vehicles that share drive,
    interference and intervals form one (two vehicles at least). A field the members do not
    all share stays on each vehicle, so every vehicle plans exactly as it would alone.
    """
    members: dict[Any, list[dict[str, Any]]] = {}
    for v in vehicles:
        if by_engine:
            key = v.get("engine")
        elif enabled and "drive" in v:
            key = tuple(v.get(f) for f in PROFILE_KEY)
        else:
            key = None
        if key is not None:
            members.setdefault(key, []).append(v)
    engines: dict[str, dict] = {}
    groups: dict[str, list[str]] = {}
    kept: dict[str, list[str]] = {}
    for key, group in members.items():
        if not by_engine and len(group) < 2:
            continue
        pid = key if by_engine else _profile_id(key, unit, engines)
        shared = {f: group[0][f] for f in SPEC_FIELDS
                  if all(f in v and v[f] == group[0][f] for v in group)}
        profile = {"description": f"imported: {len(group)} vehicle{'s' * (len(group) != 1)}"
                   + ("" if by_engine else " sharing drive, interference and intervals")}
        engines[pid] = {**profile, **shared}
        groups[pid] = [v["id"] for v in group]
        kept[pid] = sorted({f for v in group for f in SPEC_FIELDS if f in v} - set(shared))
        for v in group:
            for f in shared:
                del v[f]
            v["engine"] = pid
            reordered = {k: v[k] for k in VEHICLE_ORDER if k in v}
            rest = {k: x for k, x in v.items() if k not in reordered}
            v.clear()
            v.update(reordered | rest)
    return engines, groups, kept


def _profile_id(key: tuple, unit: str, taken: Mapping[str, Any]) -> str:
    drive, interference, distance, months, s_distance, s_months = key
    parts = [drive, interference or "unrecorded"]
    parts += [f"{whole(distance)}{unit}"] if distance is not None else []
    parts += [f"{months}m"] if months is not None else []
    if s_distance is not None or s_months is not None:
        parts.append("severe")
        parts += [f"{whole(s_distance)}{unit}"] if s_distance is not None else []
        parts += [f"{s_months}m"] if s_months is not None else []
    base = "-".join(str(p) for p in parts)
    pid, n = base, 2
    while pid in taken:
        pid, n = f"{base}-{n}", n + 1
    return pid


def profile_report(groups: dict[str, list[str]], kept: dict[str, list[str]],
                   engine_column: ColumnUse | None, enabled: bool) -> list[str]:
    """The report's lines on the profiles made (or why none was)."""
    if not groups:
        why = ("no two vehicles share drive, interference and intervals" if enabled else
               "grouping turned off (--no-profiles)")
        return [f"Engine profiles: none ({why}); every vehicle carries its own drive fields"]
    basis = (f"from column {engine_column.header!r}" if engine_column else
             "vehicles sharing drive, interference and intervals")
    lines = [f"Engine profiles ({basis}):"]
    for pid, ids in groups.items():
        shown = ", ".join(ids[:6]) + (f" and {len(ids) - 6} more" if len(ids) > 6 else "")
        lines.append(f"  {pid}: {len(ids)} vehicle{'s' * (len(ids) != 1)} ({shown})")
        if kept[pid]:
            lines.append(f"    kept on each vehicle (they differ): {', '.join(kept[pid])}")
    return lines
