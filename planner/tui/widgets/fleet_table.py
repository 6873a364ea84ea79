"""The fleet table: one row per vehicle of the current view, only the rows on screen rendered.

Each plan's column widths come from `prepare_rows`, which can run off the UI thread; a row's
cells are built when the row is first drawn (a vehicle whose record did not change keeps its
cells, and equal values share one cell). Filtering and sorting only re-list vehicle ids
(`view.Listing`); the table renders the rows that are on screen (`LazyTable`). Columns are
rebuilt only when the set that fits the width changes. The cursor stays on its vehicle.
"""

from __future__ import annotations

from collections.abc import Hashable, Sequence
from typing import Any

from rich.text import Text
from textual.message import Message

from planner import export
from planner.tui import columns as cols
from planner.tui.view import TRIAGE, Listing, View
from planner.tui.widgets.lazy_table import LazyTable, TableColumn

UNIQUE = frozenset({"id", "label"})  # fields not worth sharing cells for


class TableRows:
    """Every vehicle's record for one plan, each column's natural width, and the cells.

    A row's cells are built the first time the table draws it (`row`): opening or re-planning
    10,000 vehicles formats only the rows on screen. A vehicle whose record did not change
    since the previous plan keeps its cells (the table keeps their rendering), and a value
    repeated in a column (a status, a date) is one shared cell, which nothing mutates.
    """

    def __init__(self, records: list[dict[str, Any]], columns: list[cols.Column],
                 widths: dict[str, int], previous: TableRows | None = None) -> None:
        self.records = records
        self.columns = columns
        self.widths = widths
        self._built: dict[str, dict[str, Text]] = {}
        self._shared: dict[tuple[str, type, Hashable], Text] = {}
        self._previous = previous if previous is not None and previous.columns == columns \
            else None
        if previous is not None:
            previous._previous = None  # one plan back is enough: no chain of old plans
        self._by_id: dict[str, dict[str, Any]] | None = None

    def row(self, vehicle_id: str) -> dict[str, Text]:
        """The cells of one vehicle's row, by field (built on first use, then kept)."""
        built = self._built.get(vehicle_id)
        if built is not None:
            return built
        rec = self._record(vehicle_id)
        old = self._previous
        if old is not None:
            kept = old._built.get(vehicle_id)
            if kept is not None and old._record(vehicle_id) == rec:
                self._built[vehicle_id] = kept
                return kept
        row: dict[str, Text] = {}
        shared = self._shared
        for col in self.columns:
            value = rec.get(col.field)
            if col.field in UNIQUE or not isinstance(value, Hashable):
                row[col.field] = cols.row_cells(rec, (col,))[0]
                continue
            key = (col.field, type(value), value,
                   export.mark(rec, col.field) if col.field in cols.MARKED else None)
            text = shared.get(key)
            if text is None:
                text = shared[key] = cols.row_cells(rec, (col,))[0]
            row[col.field] = text
        self._built[vehicle_id] = row
        return row

    def _record(self, vehicle_id: str) -> dict[str, Any]:
        if self._by_id is None:
            self._by_id = {r["id"]: r for r in self.records}
        return self._by_id[vehicle_id]


def prepare_rows(records: Sequence[dict[str, Any]], table_columns: Sequence[tuple[str, str]],
                 previous: TableRows | None = None) -> TableRows:
    """The rows of `records` with each column's width (pure: safe in a worker thread).

    Only the widths are worked out here, from each column's distinct values
    (`columns.natural_widths_of`); the cells come when the table draws a row.
    """
    records = records if isinstance(records, list) else list(records)  # kept: compared by `is`
    columns = cols.columns_for(table_columns, records)
    return TableRows(records, columns, cols.natural_widths_of(columns, records), previous)


class FleetTable(LazyTable):
    """The vehicles of the current view."""

    class SortAsked(Message):
        """The user clicked a column heading."""

        def __init__(self, field: str) -> None:
            super().__init__()
            self.field = field

    def __init__(self, **kwargs: Any) -> None:
        super().__init__(cell_padding=cols.CELL_PADDING, **kwargs)
        self.prepared = TableRows([], [], {})
        self._listing = Listing([])
        self.shown: list[cols.Column] = []
        self.hidden: list[cols.Column] = []
        self.view = View()
        self.listed: list[dict[str, Any]] = []
        self._fitted_width = -1

    # -- data -----------------------------------------------------------------------------
    @property
    def records(self) -> list[dict[str, Any]]:
        return self.prepared.records

    @property
    def all_columns(self) -> list[cols.Column]:
        return self.prepared.columns

    def set_records(self, records: Sequence[dict[str, Any]],
                    table_columns: Sequence[tuple[str, str]]) -> None:
        """New plan: cells are rebuilt only for the vehicles whose record changed."""
        self.show_rows(prepare_rows(records, table_columns, self.prepared))

    def show_rows(self, rows: TableRows) -> None:
        """New plan, its cells already prepared (by `prepare_rows`, perhaps in a worker)."""
        old = self.prepared
        self.prepared = rows
        self._listing = Listing(rows.records)
        if rows.columns != old.columns or rows.widths != old.widths or not self.shown:
            self._refit(force=True)
        else:
            self._relist()

    def set_view(self, view: View) -> None:
        self.view = view
        self._relist()

    @property
    def current_id(self) -> str | None:
        return self.cursor_key

    def current_record(self) -> dict[str, Any] | None:
        row = self.cursor_row
        return self.listed[row] if 0 <= row < len(self.listed) else None

    def heading_of(self) -> dict[str, str]:
        return {c.field: c.heading for c in self.all_columns}

    # -- layout ---------------------------------------------------------------------------
    def on_resize(self) -> None:
        self._refit()

    def _refit(self, force: bool = False) -> None:
        width = self.size.width - 2  # room for a vertical scrollbar
        if width <= 0:
            width = 78
        if not force and width == self._fitted_width:
            return
        self._fitted_width = width
        widths = self.prepared.widths
        shown, hidden = cols.fit(self.all_columns, widths, width)
        if not force and [c.field for c in shown] == [c.field for c in self.shown]:
            return
        self.shown, self.hidden = shown, hidden
        self.set_columns([TableColumn(c.field, self._heading(c), widths[c.field])
                          for c in shown])
        self._relist()

    def _heading(self, col: cols.Column) -> Text:
        """The heading; the sorted column's is underlined, with an arrow when it fits."""
        words, style = col.heading, "bold"
        if self.view.sort == col.field:
            style = "bold underline"
            arrow = "↓" if self.view.reverse else "↑"
            if len(words) + 2 <= self.prepared.widths.get(col.field, 0):
                words = f"{words} {arrow}" if not col.right else f"{arrow} {words}"
        return Text(words, justify="right" if col.right else "left", style=style)

    def _relist(self) -> None:
        """Re-list the prepared rows for the current view, keeping the cursor's vehicle.

        Only ids are listed here; nothing is re-planned or formatted, and the table renders
        only the rows on screen.
        """
        keep = self.current_id
        self.listed = self._listing.arrange(self.view)
        for col in self.shown:
            self.set_heading(col.field, self._heading(col))
        fields = [c.field for c in self.shown]
        row = self.prepared.row
        self.set_rows([r["id"] for r in self.listed],
                      lambda vid: [row(vid)[f] for f in fields], keep=keep)

    def select_id(self, vehicle_id: str) -> bool:
        try:
            index = self.ordered_keys.index(vehicle_id)
        except ValueError:
            return False
        self.move_cursor(row=index, animate=False)
        return True

    def on_lazy_table_header_selected(self, event: LazyTable.HeaderSelected) -> None:
        event.stop()
        self.post_message(self.SortAsked(event.column_key))


def next_sort(view: View, field: str) -> View:
    """Choosing the column already sorted on reverses it; a new column sorts ascending."""
    if field == TRIAGE:
        return view.with_(sort=TRIAGE, reverse=False)
    if view.sort == field:
        return view.with_(reverse=not view.reverse)
    return view.with_(sort=field, reverse=False)
