"""The fleet table: one DataTable row per vehicle, rendered lazily by Textual.

Cells are built once per plan (a new text or planning date) and kept by vehicle id; filtering
and sorting only re-list the cached rows, and columns are rebuilt only when the set that fits
the width changes. Row keys are vehicle ids, so the cursor stays on its vehicle.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from rich.text import Text
from textual.message import Message
from textual.widgets import DataTable

from planner.tui import columns as cols
from planner.tui.view import TRIAGE, View, arrange


class FleetTable(DataTable):
    """The vehicles of the current view."""

    class SortAsked(Message):
        """The user clicked a column heading."""

        def __init__(self, field: str) -> None:
            super().__init__()
            self.field = field

    def __init__(self, **kwargs: Any) -> None:
        super().__init__(cursor_type="row", cell_padding=cols.CELL_PADDING, **kwargs)
        self.records: list[dict[str, Any]] = []
        self.all_columns: list[cols.Column] = []
        self.shown: list[cols.Column] = []
        self.hidden: list[cols.Column] = []
        self.view = View()
        self.listed: list[dict[str, Any]] = []
        self._cells: dict[str, dict[str, Text]] = {}
        self._widths: dict[str, int] = {}
        self._fitted_width = -1

    # -- data -----------------------------------------------------------------------------
    def set_records(self, records: Sequence[dict[str, Any]],
                    table_columns: Sequence[tuple[str, str]]) -> None:
        """New plan: cells are rebuilt only for the vehicles whose record changed."""
        old = {r["id"]: r for r in self.records}
        self.records = list(records)
        columns = cols.columns_for(table_columns, self.records)
        same_columns = columns == self.all_columns
        self.all_columns = columns
        cells: dict[str, dict[str, Text]] = {}
        changed = []
        for rec in self.records:
            vid = rec["id"]
            if same_columns and vid in self._cells and old.get(vid) == rec:
                cells[vid] = self._cells[vid]
                continue
            cells[vid] = {c.field: text for c, text in
                          zip(columns, cols.row_cells(rec, columns), strict=True)}
            changed.append(vid)
        self._cells = cells
        widths = cols.natural_widths(columns, cells.values())
        if not same_columns or widths != self._widths or not self.shown:
            self._widths = widths
            self._refit(force=True)
        else:
            self._relist(changed)

    def set_view(self, view: View) -> None:
        self.view = view
        self._relist()

    @property
    def current_id(self) -> str | None:
        if not self.listed or self.cursor_row < 0 or self.cursor_row >= len(self.listed):
            return None
        return self.listed[self.cursor_row]["id"]

    def current_record(self) -> dict[str, Any] | None:
        vid = self.current_id
        return next((r for r in self.listed if r["id"] == vid), None)

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
        shown, hidden = cols.fit(self.all_columns, self._widths, width)
        if not force and [c.field for c in shown] == [c.field for c in self.shown]:
            return
        self.shown, self.hidden = shown, hidden
        self.clear(columns=True)
        for col in shown:
            self.add_column(self._heading(col), width=self._widths[col.field], key=col.field)
        self._relist()

    def _heading(self, col: cols.Column) -> Text:
        """The heading; the sorted column's is underlined, with an arrow when it fits."""
        words, style = col.heading, "bold"
        if self.view.sort == col.field:
            style = "bold underline"
            arrow = "↓" if self.view.reverse else "↑"
            if len(words) + 2 <= self._widths.get(col.field, 0):
                words = f"{words} {arrow}" if not col.right else f"{arrow} {words}"
        return Text(words, justify="right" if col.right else "left", style=style)

    def _relist(self, changed: Sequence[str] = ()) -> None:
        """Re-list the cached rows for the current view, keeping the cursor's vehicle.

        The same rows in the same order only get their `changed` cells replaced; a new order
        of the same rows is a DataTable.sort; only a new set of rows (a filter) is re-added.
        Nothing is re-planned or re-rendered here.
        """
        keep = self.current_id
        before = [r["id"] for r in self.listed]
        self.listed = arrange(self.records, self.view)
        for col in self.shown:
            self.columns[col.field].label = self._heading(col)  # type: ignore[index]
        ids = [r["id"] for r in self.listed]
        fields = [c.field for c in self.shown]
        if ids and self.row_count == len(ids) and sorted(before) == sorted(ids):
            for vid in changed:
                if vid in self.rows:
                    for name in fields:
                        self.update_cell(vid, name, self._cells[vid][name])
            if ids != before:
                order = {vid: k for k, vid in enumerate(ids)}
                self.sort("id", key=lambda cell: order[cell.plain])
            self.refresh()
        else:
            self.clear()
            for vid in ids:
                cells = self._cells[vid]
                self.add_row(*(cells[f] for f in fields), key=vid)
        if keep is not None:
            self.select_id(keep)

    def select_id(self, vehicle_id: str) -> bool:
        for index, rec in enumerate(self.listed):
            if rec["id"] == vehicle_id:
                self.move_cursor(row=index, animate=False)
                return True
        return False

    def on_data_table_header_selected(self, event: DataTable.HeaderSelected) -> None:
        event.stop()
        self.post_message(self.SortAsked(str(event.column_key.value)))


def next_sort(view: View, field: str) -> View:
    """Choosing the column already sorted on reverses it; a new column sorts ascending."""
    if field == TRIAGE:
        return view.with_(sort=TRIAGE, reverse=False)
    if view.sort == field:
        return view.with_(reverse=not view.reverse)
    return view.with_(sort=field, reverse=False)
