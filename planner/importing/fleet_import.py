"""A fleet file from a spreadsheet's CSV: `import_fleet`."""

from __future__ import annotations

import datetime as dt
import re
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import tomli_w

from planner.errors import PlannerError
from planner.fleet import SCHEMA_VERSION, Fleet
from planner.importing.csvtable import Decoded, Row, RowProblem
from planner.importing.fields import FLEET_FIELDS, VEHICLE_ORDER
from planner.importing.profiles import make_profiles, profile_report
from planner.importing.sheet import Sheet, column_report, open_sheet, read_row
from planner.safetext import UNSHOWN_ABOVE_C0
from planner.validate import build_fleet, fleet_warnings


@dataclass(frozen=True)
class FleetImport:
    """The result of `import_fleet`: the fleet file's text, its data, and the report."""

    text: str
    fleet: Fleet
    report: tuple[str, ...]
    problems: tuple[RowProblem, ...]
    vehicle_ids: tuple[str, ...]
    profiles: dict[str, tuple[str, ...]]  # profile id -> vehicle ids


def import_fleet(text: str, *, source: str, when: dt.datetime | dt.date,
                 unit: str | None = None, column_map: Mapping[str, str] | None = None,
                 date_order: str | None = None, name: str = "", group_profiles: bool = True,
                 decoded: Decoded | None = None) -> FleetImport:
    """Turn a spreadsheet's CSV text into a fleet file (text and checked `Fleet`).

    `when` is only written in the header comment. Raises `PlannerError` for problems that
    concern the whole sheet (no id column, ambiguous dates, mixed units) or when no row is
    usable; row problems leave the row out and are listed in the result.
    """
    sheet = open_sheet(text, source, FLEET_FIELDS, column_map, date_order, unit,
                       ("id", "in_service"), fixed_unit=False)
    problems = list(sheet.table.problems)
    vehicles: list[tuple[Row, dict[str, Any]]] = []
    first_row: dict[str, int] = {}
    for row in sheet.table.rows:
        values, found = read_row(sheet, row, FLEET_FIELDS)
        if not found:
            found = _check_vehicle(sheet, row, values)
        vid = values.get("id")
        if not found and vid in first_row:
            found = [RowProblem(row.number, row.line, f"id already used by row {first_row[vid]}",
                                sheet.column("id").header, vid,  # type: ignore[union-attr]
                                "give every vehicle its own id")]
        if found:
            problems.extend(found)
            continue
        first_row[vid] = row.number
        vehicles.append((row, _vehicle(values)))
    problems.sort(key=lambda p: p.row)
    report = column_report(sheet, decoded)
    if not vehicles:
        raise PlannerError(f"{source}: no row can be imported",
                           f"{len(problems)} row problem{'s' * (len(problems) != 1)}; nothing "
                           "was written.", [p.as_problem(source) for p in problems])
    vdicts = [v for _, v in vehicles]
    warnings = _warnings(sheet, vdicts)  # before grouping moves drive fields into profiles
    engine_column = sheet.column("engine")
    engines, groups, kept = make_profiles(vdicts, sheet.unit, engine_column is not None,
                                          group_profiles)
    left_out = len({p.row for p in problems})
    document = {"schema": SCHEMA_VERSION,
                "fleet": {k: v for k, v in (("name", name), ("distance_unit", sheet.unit)) if v},
                **({"engines": engines} if engines else {}),
                "vehicles": vdicts}
    stamp = when.strftime("%Y-%m-%d %H:%M") if isinstance(when, dt.datetime) else str(when)
    header = [f"# Fleet file made by `beltplan import` from {_one_line(source)} on {stamp}.",
              f"# {len(vdicts)} vehicle{'s' * (len(vdicts) != 1)} from "
              f"{len(vdicts) + left_out} rows"
              + (f"; {left_out} left out (see the import report)." if left_out else "."),
              "# Check every interval against the maker's schedule before relying on the plan.",
              ""]
    # Format and line-separator characters (U+202E …) as \u escapes: the same strings, and the
    # file (or a dry run's print of it) shows them instead of obeying them.
    body = UNSHOWN_ABOVE_C0.sub(lambda m: f"\\u{ord(m.group()):04x}", tomli_w.dumps(document))
    out = "\n".join(header) + "\n" + body
    try:
        fleet = build_fleet(tomllib.loads(out))
    except PlannerError as err:  # a bug: every row was checked on its own above
        raise PlannerError("the imported fleet does not validate (a bug in beltplan import)",
                           err.message, err.problems) from None
    report += profile_report(groups, kept, engine_column, group_profiles)
    report += [f"  warning: {w}" for w in warnings]
    report += [f"  {line}" for p in fleet_warnings(fleet) for line in p.render().splitlines()]
    report.append(f"Vehicles: {len(vdicts)} imported, {left_out} row"
                  f"{'s' * (left_out != 1)} left out")
    report += [f"  {p.render()}" for p in problems]
    return FleetImport(out, fleet, tuple(report), tuple(problems),
                       tuple(v["id"] for v in vdicts), {k: tuple(ids) for k, ids in groups.items()})


def _one_line(text: str) -> str:
    return re.sub(r"[\x00-\x1f\x7f]", "?", text)


def _vehicle(values: dict[str, Any]) -> dict[str, Any]:
    """Field values of one row -> a [[vehicles]] table in file order."""
    out = {k: values[k] for k in VEHICLE_ORDER if k in values}
    contact = {k[len("contact_"):]: values[k] for k in ("contact_name", "contact_phone",
                                                        "contact_email") if k in values}
    if contact:
        out["contact"] = contact
    if "reading_date" in values and "reading_odometer" in values:
        out["readings"] = [{"date": values["reading_date"], "odometer": values["reading_odometer"]}]
    if "belt_date" in values and "belt_odometer" in values:
        job = {"date": values["belt_date"], "odometer": values["belt_odometer"],
               "reason": values.get("belt_reason", "scheduled")}
        job.update({k: values[f"belt_{k}"] for k in ("work", "notes") if f"belt_{k}" in values})
        out["belt_jobs"] = [job]
    return out


_PATH_FIELD = {("readings", "date"): "reading_date", ("readings", "odometer"): "reading_odometer",
               ("belt_jobs", "date"): "belt_date", ("belt_jobs", "odometer"): "belt_odometer",
               ("belt_jobs", "reason"): "belt_reason", ("contact", "name"): "contact_name",
               ("contact", "phone"): "contact_phone", ("contact", "email"): "contact_email"}


def _check_vehicle(sheet: Sheet, row: Row, values: dict[str, Any]) -> list[RowProblem]:
    """Run the fleet file's own rules on one row, as a one-vehicle fleet."""
    out: list[RowProblem] = []
    for a, b in (("belt_date", "belt_odometer"), ("reading_date", "reading_odometer")):
        for x, y in ((a, b), (b, a)):
            if x in values and y not in values:
                use = sheet.column(y)
                out.append(RowProblem(row.number, row.line, f"{x} is given but {y} is empty",
                                      use.header if use else None, "",
                                      "fill both cells, or neither"))
    if "belt_date" not in values:
        for x in ("belt_reason", "belt_work", "belt_notes"):
            if x in values:
                use = sheet.column(x)
                out.append(RowProblem(row.number, row.line, f"{x} is given but there is no "
                                      "belt job (belt_date and belt_odometer are empty)",
                                      use.header if use else None, values[x],
                                      "fill in the belt job, or clear this cell"))
    engine = values.get("engine")
    if engine is not None and len(engine) > 64:
        out.append(RowProblem(row.number, row.line, "engine profile id longer than 64 characters",
                              sheet.column("engine").header, engine))  # type: ignore[union-attr]
    if out:
        return out
    vehicle = _vehicle({k: v for k, v in values.items() if k != "engine"})
    try:
        build_fleet({"fleet": {"distance_unit": sheet.unit}, "vehicles": [vehicle]})
    except PlannerError as err:
        for p in err.problems:
            path = tuple(x for x in p.path[2:] if not isinstance(x, int))
            name = _PATH_FIELD.get(path[:2], str(path[0]) if path else "")
            use = sheet.column(name)
            message, hint = p.message, p.hint
            if message == "required key is missing":
                message, hint = f"empty: every vehicle needs {name}", ""
            out.append(RowProblem(row.number, row.line, message, use.header if use else None,
                                  sheet.cell(row, name) if use else None, hint))
    return out


def _warnings(sheet: Sheet, vehicles: list[dict[str, Any]]) -> list[str]:
    """Defaults the file will rely on, said out loud (unknown data must never look safe)."""
    out = []
    factory = [v["id"] for v in vehicles if "belt_jobs" not in v and "belt_history" not in v
               and v.get("drive") not in ("chain", "gear")]
    if factory:
        shown = ", ".join(factory[:8]) + (f" and {len(factory) - 8} more" if len(factory) > 8
                                          else "")
        verb = "is" if len(factory) == 1 else "are"
        out.append(f"{len(factory)} vehicle{'s' * (len(factory) != 1)} with no belt job and no "
                   f"belt_history {verb} planned from the factory belt: {shown}; set "
                   "belt_history = \"unknown\" for any bought used without a belt record")
    if sheet.column("in_service_odometer") is None:
        out.append("no in_service_odometer column: every vehicle starts at odometer 0 (the "
                   "file's default); correct it for vehicles bought used")
    if sheet.column("belt_date") is not None and sheet.column("belt_reason") is None:
        n = sum("belt_jobs" in v for v in vehicles)
        if n:
            out.append(f"no belt_reason column: {n} belt job{'s' * (n != 1)} recorded as reason "
                       "= \"scheduled\"")
    return out
