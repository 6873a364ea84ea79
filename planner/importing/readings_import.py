"""Odometer readings from a weekly CSV export into a fleet file: `import_readings`."""

from __future__ import annotations

import datetime as dt
import difflib
import re
from collections import Counter
from collections.abc import Mapping
from dataclasses import dataclass

from planner import edit
from planner.fleet import MAX_ODOMETER, Fleet, Reading
from planner.importing.csvtable import Decoded, Row, RowProblem
from planner.importing.fields import READING_FIELDS
from planner.importing.sheet import column_report, open_sheet, read_row
from planner.importing.values import grouped
from planner.validate import repeated_job_warnings


@dataclass(frozen=True)
class NewReading:
    vehicle: str
    date: dt.date
    odometer: float
    row: int


@dataclass(frozen=True)
class ReadingsImport:
    """The result of `import_readings`: what to add, and what was skipped or rejected."""

    added: tuple[NewReading, ...]
    skipped: tuple[RowProblem, ...]
    rejected: tuple[RowProblem, ...]
    text: str  # the fleet file's new text (the old text when nothing is added)
    report: tuple[str, ...]


def import_readings(csv_text: str, fleet: Fleet, fleet_text: str, *, source: str,
                    column_map: Mapping[str, str] | None = None, date_order: str | None = None,
                    today: dt.date | None = None, decoded: Decoded | None = None
                    ) -> ReadingsImport:
    """Match a readings CSV to the fleet's vehicles and add the new readings to the text.

    A reading already in the file (same vehicle, day and odometer) is skipped; one that would
    make the odometer go backwards, is dated before the vehicle entered service or after
    `today`, or names no vehicle is rejected with the reason. Comments and layout survive.
    """
    sheet = open_sheet(csv_text, source, READING_FIELDS, column_map, date_order, fleet.unit,
                       ("id", "reading_date", "reading_odometer"), fixed_unit=True)
    unit = fleet.unit
    exact = {v.id: v for v in fleet.vehicles}
    loose: dict[str, list[str]] = {}
    for v in fleet.vehicles:
        loose.setdefault(_loose_id(v.id), []).append(v.id)
    points: dict[str, list[tuple[dt.date, float, str]]] = {}
    for v in fleet.vehicles:
        pts = [(v.in_service, v.in_service_odometer, "the in-service odometer")]
        pts += [(r.date, r.odometer, "the reading") for r in v.readings]
        pts += [(j.date, j.odometer, "the belt job") for j in v.belt_jobs]
        points[v.id] = pts
    added: list[NewReading] = []
    skipped: list[RowProblem] = []
    rejected: list[RowProblem] = list(sheet.table.problems)
    matched: Counter = Counter()
    id_col = sheet.column("id").header  # type: ignore[union-attr]
    odo_col = sheet.column("reading_odometer").header  # type: ignore[union-attr]
    date_col = sheet.column("reading_date").header  # type: ignore[union-attr]
    for row in sheet.table.rows:
        values, found = read_row(sheet, row, READING_FIELDS)
        for name, col in (("id", id_col), ("reading_date", date_col),
                          ("reading_odometer", odo_col)):
            if name not in values and not any(p.column == col for p in found):
                found.append(RowProblem(row.number, row.line, "empty", col, ""))
        if found:
            rejected.extend(found)
            continue
        raw_id, day, odo = values["id"], values["reading_date"], values["reading_odometer"]
        vid = raw_id if raw_id in exact else None
        if vid is None:
            near = loose.get(_loose_id(raw_id), [])
            if len(near) == 1:
                vid = near[0]
                matched[(raw_id, vid)] += 1
            else:
                hint = (f"it matches {', '.join(near)}: use the exact id" if near else
                        _did_you_mean(raw_id, list(exact)) or
                        "add the vehicle to the fleet file first, or map the column that "
                        "holds the fleet's ids with --map COLUMN=id")
                why = "matches more than one vehicle" if near else "no vehicle with this id"
                rejected.append(RowProblem(row.number, row.line, why, id_col, raw_id, hint))
                continue
        vehicle = exact[vid]

        def reject(message: str, name: str, hint: str = "", _row: Row = row,
                   _vid: str = vid) -> None:
            col = odo_col if name == "reading_odometer" else date_col
            rejected.append(RowProblem(_row.number, _row.line, f"{_vid}: {message}", col,
                                       sheet.cell(_row, name), hint))
        try:
            Reading(date=day, odometer=odo)
        except ValueError:
            reject(f"odometer {grouped(odo)} is outside 0-{MAX_ODOMETER:,}", "reading_odometer",
                   "check the value")
            continue
        same = [k for d, o, k in points[vid] if d == day and o == odo and "reading" in k]
        if same:
            where = ("is already in the file" if same[0] == "the reading" else
                     f"repeats {same[0].replace('the reading of ', '')}")
            skipped.append(RowProblem(row.number, row.line,
                                      f"{vid}: {day} at {grouped(odo)} {unit} {where}"))
            continue
        if day < vehicle.in_service:
            reject(f"dated {day}, before the vehicle entered service ({vehicle.in_service})",
                   "reading_date", "check the date")
            continue
        if today is not None and day > today:
            reject(f"dated {day}, after today ({today})", "reading_date", "check the date")
            continue
        before = [(o, d, k) for d, o, k in points[vid] if d < day]
        after = [(o, d, k) for d, o, k in points[vid] if d > day]
        if before and odo < max(before)[0]:
            o, d, k = max(before)
            reject(f"odometer goes backwards: {grouped(odo)} {unit} on {day} is below {k} of {d} "
                   f"({grouped(o)} {unit})", "reading_odometer",
                   "check the reading; odometers only go forward")
            continue
        if after and odo > min(after)[0]:
            o, d, k = min(after)
            reject(f"odometer goes backwards: {grouped(odo)} {unit} on {day} is above {k} of the "
                   f"later day {d} ({grouped(o)} {unit})", "reading_odometer",
                   "check the reading or its date")
            continue
        points[vid].append((day, odo, f"the reading of row {row.number}"))
        added.append(NewReading(vid, day, odo, row.number))
    rejected.sort(key=lambda p: p.row)
    text = edit.add_readings(fleet_text, [(r.vehicle, r.date, r.odometer) for r in added])
    report = column_report(sheet, decoded)
    for (raw, vid), n in sorted(matched.items()):
        report.append(f"  id {raw!r} matched to vehicle {vid} (case, spaces and dashes ignored; "
                      f"{n} row{'s' * (n != 1)})")
    report.append(f"Readings: {len(added)} added, {len(skipped)} skipped (already in the file), "
                  f"{len(rejected)} rejected")
    report += [f"  added: {r.vehicle} {r.date} {grouped(r.odometer)} {unit} (row {r.row})"
               for r in added]
    report += [f"  skipped: {p.render()}" for p in skipped]
    report += [f"  rejected: {p.render()}" for p in rejected]
    for index, v in enumerate(fleet.vehicles):  # records the import stands on, said out loud
        report += [f"  warning: vehicle {v.id}, field {p.field}: {p.message}; fix: {p.hint}"
                   for p in repeated_job_warnings(index, v, fleet.unit)]
    return ReadingsImport(tuple(added), tuple(skipped), tuple(rejected), text, tuple(report))


def _loose_id(text: str) -> str:
    return re.sub(r"[\s\-_./]", "", text).casefold()


def _did_you_mean(word: str, choices: list[str]) -> str:
    near = difflib.get_close_matches(word, choices, n=1)
    return f"did you mean {near[0]!r}?" if near else ""
