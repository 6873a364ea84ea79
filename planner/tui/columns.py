"""The fleet table's columns: which fields, how each cell looks, which fit the terminal.

The columns are `export.table_columns` (the CLI's and Markdown's), so a field the engine adds
there (the risk columns, for instance) appears here too, formatted by `export.display`. A column
appears only when the records carry its field. When the terminal is narrow the least needed
columns step aside; the row line under the table still shows them for the highlighted row.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

from rich.cells import cell_len
from rich.text import Text

from planner import export
from planner.safetext import shown
from planner.tui.look import DIM, consequence_text, field_text, status_text

LABEL_WIDTH = 24
CELL_PADDING = 1
RIGHT = {"distance_remaining", "days_remaining", "life_used", "p_fail_horizon",
         "p_fail_before_due", "expected_loss", "est_odometer", "daily_distance"}
# Left out first when the terminal is too narrow; the id, status, consequence and due date stay.
# The action repeats the status's meaning (✗ overdue: replace now), so it goes first.
DROP_ORDER = ("action", "expected_loss", "drive", "deciding_limit", "label", "life_used",
              "distance_remaining", "p_fail_horizon", "days_remaining")


@dataclass(frozen=True)
class Column:
    field: str
    heading: str

    @property
    def right(self) -> bool:
        return self.field in RIGHT


def columns_for(table_columns: Sequence[tuple[str, str]],
                records: Sequence[dict[str, Any]]) -> list[Column]:
    """The export's columns whose field the records carry (all of them with no records)."""
    have = set(records[0]) if records else {f for f, _ in table_columns}
    return [Column(f, h) for f, h in table_columns if f in have]


def cell(record: dict[str, Any], field: str) -> Text:
    """One cell: file text literally, status and consequence as symbol + word + colour."""
    value = record.get(field)
    if field == "status":
        return status_text(value)
    if field == "consequence":
        return consequence_text(value)
    if value is None and (field not in MARKED or export.mark(record, field) is None):
        return Text("–", style=DIM)
    text = field_text(export.cell(record, field))
    if field == "label":
        text.truncate(LABEL_WIDTH, overflow="ellipsis")
    if field == "days_remaining" and isinstance(value, int) and value < 0:
        text.stylize("bold")
    return text


def row_cells(record: dict[str, Any], columns: Sequence[Column]) -> list[Text]:
    cells = []
    for col in columns:
        text = cell(record, col.field)
        if col.right:
            text.justify = "right"
        cells.append(text)
    return cells


def natural_widths(columns: Sequence[Column], rows: Iterable[dict[str, Text]]) -> dict[str, int]:
    """Each column's width: its widest cell or its heading."""
    widths = {c.field: len(c.heading) for c in columns}
    for row in rows:
        for name, text in row.items():
            widths[name] = max(widths[name], text.cell_len)
    return widths


def natural_widths_of(columns: Sequence[Column],
                      records: Sequence[dict[str, Any]]) -> dict[str, int]:
    """`natural_widths` of the cells of `records`, without building them.

    A cell's width is that of its text (`cell` only styles it). A number's text
    (`export.display`: digits, separators, a fixed number of decimals for a float) is never
    narrower for a value of its kind further from zero, so the widest number of a column is,
    of its integers and of its floats, the smallest or the largest, or the smallest positive
    (shown as "< 0.1 %" in a probability column). Risk figures marked by `export.mark`
    (extrapolated, or "required" in place of a loss) are measured per mark. A date is always
    ten characters (ISO 8601, `YYYY-MM-DD`), so one date stands for all. Printable ASCII text
    is as wide as it is long; any other text is measured once per distinct value.
    """
    widths = {}
    for col in columns:
        name = col.field
        if name in MARKED:  # marked figures (extrap., required) measured apart
            groups: dict[str | None, list[Any]] = {}
            for rec in records:
                groups.setdefault(export.mark(rec, name), []).append(rec.get(name))
            found = [_values_width(vs, name) + (len(how) + 1 if how else 0)
                     for how, vs in groups.items() if how != export.REQUIRED]
            if export.REQUIRED in groups:
                found.append(len(export.REQUIRED))
            widths[name] = max([len(col.heading), *found])
        else:
            widths[name] = max(len(col.heading), _values_width(
                [rec.get(name) for rec in records], name))
    return widths


MARKED = frozenset({"p_fail_horizon", "p_fail_before_due", "expected_loss"})


def _values_width(values: list[Any], name: str) -> int:
    """The widest plain cell of `values` in column `name` (see `natural_widths_of`)."""
    numbers = [v for v in values if isinstance(v, (int, float)) and not isinstance(v, bool)]
    probes: list[Any] = []
    for kind in (int, float):  # each kind apart: `1.0` shows a decimal, `1` none
        same = [v for v in numbers if type(v) is kind]
        if same:
            positive = [v for v in same if v > 0]
            probes += [min(same), max(same)] + ([min(positive)] if positive else [])
    probes += [v for v in numbers if type(v) not in (int, float)]  # a subclass: each one
    others = [v for v in values if not isinstance(v, (int, float)) or isinstance(v, bool)]
    dates = [v for v in others if type(v) is dt.date]  # not a datetime: longer text
    others = [v for v in others if type(v) is not dt.date]
    probes += dates[:1]
    try:
        distinct = set(others)
    except TypeError:  # a list (not shown in the table today): measure each one
        distinct = others  # type: ignore[assignment]
    plain = [v for v in distinct if isinstance(v, str) and v.isascii() and v.isprintable()]
    if plain:
        longest = max(plain, key=len)
        probes.append(longest)  # as wide as the longest (cut the same way, if a label)
        plain_set = set(plain)
        distinct = [v for v in distinct  # type: ignore[assignment]
                    if not (isinstance(v, str) and v in plain_set)]
    probes += distinct
    return max([0] + [cell_width(v, name) for v in probes])


def cell_width(value: Any, field: str) -> int:
    """The width in terminal cells of `cell` for a record whose `field` holds `value`."""
    if field == "status":
        return status_text(value).cell_len
    if field == "consequence":
        return consequence_text(value).cell_len
    if value is None:
        return 1  # "–"
    width = cell_len(shown(export.display(value, field)))  # as `field_text` shows it
    if field == "label" and width > LABEL_WIDTH:  # cut with an ellipsis; a wide character
        return cell({field: value}, field).cell_len  # may leave one cell short
    return width


def fit(columns: Sequence[Column], widths: dict[str, int],
        width: int) -> tuple[list[Column], list[Column]]:
    """(shown, hidden): drop columns in DROP_ORDER until the rest fit in `width` cells."""
    need = {c.field: widths[c.field] + 2 * CELL_PADDING for c in columns}
    shown = list(columns)
    hidden: list[Column] = []
    for name in DROP_ORDER:
        if sum(need[c.field] for c in shown) <= width:
            break
        hidden += [c for c in shown if c.field == name]
        shown = [c for c in shown if c.field != name]
    return shown, hidden
