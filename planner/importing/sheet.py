"""A sheet: a CSV table with its columns decided once (field, date order, decimal mark, unit),
its cells read as values, and the part of the report that says how it was read."""

from __future__ import annotations

import re
from collections import Counter
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from planner.errors import PlannerError, Problem
from planner.importing.columns import IGNORE, ColumnUse, header_key, map_columns
from planner.importing.csvtable import (
    DELIMITER_NAMES,
    CsvTable,
    Decoded,
    Row,
    RowProblem,
    read_table,
)
from planner.importing.fields import FieldInfo
from planner.importing.values import (
    UNIT_OF,
    YEAR_WORDS,
    CellError,
    decide_date_order,
    decide_decimal_mark,
    parse_date,
    parse_enum,
    parse_number,
    whole,
)


@dataclass
class Sheet:
    """A CSV table with the column decisions made once: dates, decimal marks, unit."""

    source: str
    table: CsvTable
    fields: Mapping[str, FieldInfo]
    uses: list[ColumnUse]
    unit: str
    fixed_unit: bool = False  # the unit is the fleet file's, not an option
    date_orders: dict[str, str | None] = field(default_factory=dict)
    marks: dict[str, str | None] = field(default_factory=dict)
    decisions: list[str] = field(default_factory=list)
    column_notes: dict[tuple[str, str], list[str]] = field(default_factory=dict)
    words_read: Counter = field(default_factory=Counter)  # (field, column, text, value) -> n
    years: Counter = field(default_factory=Counter)  # column -> values given in years
    times_dropped: int = 0

    def column(self, name: str) -> ColumnUse | None:
        return next((u for u in self.uses if u.field == name), None)

    def cell(self, row: Row, name: str) -> str:
        use = self.column(name)
        return row.cells[use.index].strip() if use else ""

    def value(self, row: Row, name: str) -> Any:
        """The cell of `name` read as its kind; None when empty. Raises CellError."""
        text = self.cell(row, name)
        if not text:
            return None
        kind = self.fields[name].kind
        if kind in ("text", "id"):
            return text
        if kind == "enum":
            value = parse_enum(name, text)
            if text.casefold() != value:
                self.words_read[(name, self.column(name).header, text, value)] += 1
            return value
        if kind == "date":
            day = parse_date(text, self.date_orders.get(name))
            self.times_dropped += bool(re.search(r"\d:\d", text))
            return day
        if kind == "parts":
            return [p.strip() for p in re.split(r"[;,|\n]", text) if p.strip()]
        use = self.column(name)
        assert use is not None
        number, word = parse_number(text, self.marks.get(name))
        if kind == "distance":
            unit = UNIT_OF.get(word) if word else use.unit or self.unit
            if word and unit is None:
                raise CellError(f"unknown unit {word!r}", "write km or mi, or no unit")
            if unit != self.unit:
                raise CellError(f"the value is in {unit}, but the fleet's distances are in "
                                f"{self.unit}", f"give it in {self.unit}" +
                                ("" if self.fixed_unit else
                                 f", or import the whole sheet with --unit {unit}") +
                                "; nothing is converted")
            return whole(number)
        if kind == "months":
            in_years = (word in YEAR_WORDS or word in ("y", "a")) if word else \
                bool(YEAR_WORDS & set(header_key(use.header)[0].split()))
            if word and not in_years and word not in ("m", "mo", "mos", "month", "months"):
                raise CellError(f"unknown unit {word!r}", "write months (72) or years (6 years)")
            months = number * 12 if in_years else number
            if not float(months).is_integer():
                raise CellError("not a whole number of months",
                                "give the interval in whole months")
            if in_years:
                self.years[use.header] += 1
            return int(months)
        if word and word not in ("h", "hr", "hrs", "hour", "hours", "eur", "gbp", "usd"):
            raise CellError(f"unknown unit {word!r}")
        return whole(number)


def open_sheet(text: str, source: str, fields: Mapping[str, FieldInfo],
               column_map: Mapping[str, str] | None, date_order: str | None,
               unit: str | None, required: Sequence[str], fixed_unit: bool) -> Sheet:
    """Read the CSV text and make every column decision, or raise `PlannerError` naming
    what cannot be decided without a guess (a missing column, ambiguous dates, mixed units)."""
    table = read_table(text, source)
    uses = map_columns(table.header, column_map or {}, fields)
    mapped = {u.field for u in uses if u.field}
    missing = [f for f in required if f not in mapped]
    if missing:
        raise PlannerError(
            f"{source}: no column for {', '.join(missing)}",
            f"say which column holds it with --map \"COLUMN={missing[0]}\"; "
            "the columns are: " + ", ".join(repr(h) for h in table.header))
    for a, b in (("belt_date", "belt_odometer"), ("belt_odometer", "belt_date"),
                 ("reading_date", "reading_odometer"), ("reading_odometer", "reading_date")):
        if a in mapped and b not in mapped and b in fields:
            raise PlannerError(f"{source}: a column for {a} but none for {b}",
                               f"a {a.split('_')[0]} needs both a date and an odometer; map the "
                               f"other column with --map \"COLUMN={b}\", or leave this one out "
                               f"with --map \"COLUMN={IGNORE}\"")
    problems: list[Problem] = []
    sheet = Sheet(source, table, fields, uses, unit or "km", fixed_unit)
    for use in uses:
        if use.field is None:
            continue
        kind = fields[use.field].kind
        values = [(r.number, r.cells[use.index]) for r in table.rows if r.cells[use.index].strip()]
        if kind == "date":
            order, how, found = decide_date_order(values, date_order, use.header)
            if found:
                problems.append(Problem(f"dates in column {use.header!r} can be read two ways",
                                        hint="say which with --day-first or --month-first"))
                problems.extend(found)
            sheet.date_orders[use.field] = order
            sheet.column_notes.setdefault(("dates", how), []).append(use.header)
        elif kind in ("distance", "number", "months"):
            mark, how, found = decide_decimal_mark(values, use.header)
            if found:
                problems.append(Problem(f"numbers in column {use.header!r} mix decimal marks",
                                        hint="use one style in the column, then import again"))
                problems.extend(found)
            sheet.marks[use.field] = mark
            if mark is not None or "thousands" in how:
                sheet.column_notes.setdefault(("numbers", how), []).append(use.header)
    if problems:
        raise PlannerError(f"{source}: some columns cannot be read without a guess",
                           "Nothing was imported.", problems)
    sheet.unit = _decide_unit(sheet, unit, fixed_unit)
    return sheet


def _decide_unit(sheet: Sheet, unit: str | None, fixed: bool) -> str:
    """The fleet's unit: --unit (or the fleet file's), else the unit the headers name, else
    the one unit the values carry. A column whose header contradicts it is an error."""
    distance_uses = [u for u in sheet.uses
                     if u.field is not None and sheet.fields[u.field].kind == "distance"]
    in_header = {u.unit: u.header for u in distance_uses if u.unit}
    in_values: dict[str, str] = {}
    for use in distance_uses:
        for row in sheet.table.rows:
            hit = re.search(r"([A-Za-z]+)\.?\s*$", row.cells[use.index])
            found = UNIT_OF.get(hit[1].casefold()) if hit else None
            if found:
                in_values.setdefault(found, f"row {row.number}, {row.cells[use.index].strip()!r}")
    if unit is None and len(in_header) == 1:
        unit, = in_header
        sheet.decisions.append(f"distances in {unit} (from the header {in_header[unit]!r})")
    elif unit is None and not in_header and len(in_values) == 1:
        (unit, where), = in_values.items()
        sheet.decisions.append(f"distances in {unit} (from {where})")
    elif unit is not None:
        sheet.decisions.append(f"distances in {unit}" + (" (the fleet file's unit)" if fixed
                                                          else " (--unit)"))
    for use in distance_uses:
        if unit is not None and use.unit and use.unit != unit:
            raise PlannerError(
                f"column {use.header!r} is in {use.unit}, but the fleet's distances are in "
                f"{unit}" + ("" if fixed else " (--unit)" if len(in_header) < 2 else ""),
                "nothing is converted: export that column in " + unit +
                ("" if fixed else f", or import with --unit {use.unit}"))
    if unit is not None:
        return unit
    if in_header or in_values:
        both = {**in_values, **{u: f"the header {h!r}" for u, h in in_header.items()}}
        raise PlannerError(f"{sheet.source}: distances are in both km and mi",
                           f"km from {both['km']}, mi from {both['mi']}. Say which the fleet "
                           "uses with --unit km or --unit mi; rows in the other unit are then "
                           "reported and left out. Nothing is converted.")
    if distance_uses:
        raise PlannerError(f"{sheet.source}: the distances carry no unit",
                           "say which with --unit km or --unit mi (or put the unit in the "
                           "header, e.g. 'Odometer (km)')")
    sheet.decisions.append("no distances imported: distance_unit = km, the default "
                           "(--unit mi for miles)")
    return "km"


def read_row(sheet: Sheet, row: Row, names: Iterable[str]
             ) -> tuple[dict[str, Any], list[RowProblem]]:
    """The row's values of `names` (empty cells left out) and the cells that cannot be read."""
    values: dict[str, Any] = {}
    problems: list[RowProblem] = []
    for name in names:
        try:
            value = sheet.value(row, name)
        except CellError as err:
            use = sheet.column(name)
            problems.append(RowProblem(row.number, row.line, err.message,
                                       use.header if use else None, sheet.cell(row, name),
                                       err.hint))
            continue
        if value is not None:
            values[name] = value
    return values, problems


def _rows(n: int, what: str = "row") -> str:
    return f"{n} {what}{'s' * (n != 1)}"


def column_report(sheet: Sheet, decoded: Decoded | None) -> list[str]:
    """The report's first part: how the file, its columns and its values were read."""
    t = sheet.table
    enc = decoded.encoding if decoded else "text"
    lines = [f"Read {sheet.source}: {enc}, {DELIMITER_NAMES.get(t.delimiter, t.delimiter)}"
             f"-separated, {_rows(len(t.rows) + len(t.problems))} after the header"
             + (f" ({_rows(t.blank_rows, 'blank row')} ignored)" if t.blank_rows else "")]
    if decoded and decoded.note:
        lines.append(f"  note: {decoded.note}")
    lines.extend(f"  note: {n}" for n in t.notes)
    lines.append("Columns:")
    width = min(max((len(u.header) for u in sheet.uses), default=0) + 2, 32)
    for u in sheet.uses:
        target = u.field or "-"
        extra = f"; unit {u.unit} from the header" if u.field and u.unit else ""
        lines.append(f"  {u.header!r:<{width}} -> {target:<20} ({u.how}{extra})")
    lines.append("Read as:")
    for (what, how), headers in sheet.column_notes.items():
        lines.append(f"  {what} in {', '.join(repr(h) for h in headers)}: {how}")
    lines.extend(f"  {d}" for d in sheet.decisions)
    words: dict[tuple[str, str], tuple[list[str], int]] = {}
    order = {u.header: u.index for u in sheet.uses}
    for (_, column, text, value), n in sorted(sheet.words_read.items(),
                                              key=lambda kv: order[kv[0][1]]):
        shown, count = words.get((column, value), ([], 0))
        words[(column, value)] = (shown + [text], count + n)
    for (column, value), (shown, n) in words.items():
        lines.append(f"  {column!r}: {' / '.join(repr(t) for t in shown)} read as {value!r} "
                     f"({n} row{'s' * (n != 1)})")
    for column, n in sorted(sheet.years.items()):
        lines.append(f"  {column!r}: years turned into months, x12 ({n} rows)")
    if sheet.times_dropped:
        lines.append(f"  times of day dropped from {sheet.times_dropped} dates (the file keeps "
                     "days)")
    return lines
