"""A table that renders only the rows on screen, drawn exactly as Textual's DataTable draws them.

Textual's DataTable keeps per-row structures (row objects, locations, line offsets) and rebuilds
them on every change, so re-listing 10,000 rows takes it about a second and re-ordering them a few
hundred milliseconds. Here the order is a plain list of row keys and the cells come from the
owner on demand: a filter or a sort hands over a new list, and only the lines on screen are ever
rendered. A cell is rendered once per content object (an unchanged cell object keeps its
rendering across filters, sorts and re-plans; equal cells may share one object).

The look is the DataTable's: the same component classes and CSS, the same styles layered in the
same order, the same keys and the same cursor, hover and click rules (row cursor only, one line
per row, a header, no row labels or fixed columns). `tests/test_tui_perf.py` checks line by line
that both render the same segments.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any, ClassVar

from rich.console import RenderableType
from rich.padding import Padding
from rich.segment import Segment
from rich.style import Style
from rich.text import Text
from textual import events
from textual.binding import Binding, BindingType
from textual.cache import LRUCache
from textual.geometry import Region, Size, Spacing
from textual.message import Message
from textual.renderables.styled import Styled
from textual.scroll_view import ScrollView
from textual.strip import Strip

HEADER = -1  # the row index of the header line


@dataclass
class TableColumn:
    """A column of fixed width (the width of its content, without the cell padding)."""

    key: str
    label: Text
    width: int

    def get_render_width(self, table: LazyTable) -> int:
        return self.width + 2 * table.cell_padding


class LazyTable(ScrollView, can_focus=True):
    """Rows by key, a row cursor, and a header; the owner supplies each row's cells."""

    ALLOW_SELECT = False

    BINDINGS: ClassVar[list[BindingType]] = [  # the DataTable's
        Binding("enter", "select_cursor", "Select", show=False),
        Binding("up", "cursor_up", "Cursor up", show=False),
        Binding("down", "cursor_down", "Cursor down", show=False),
        Binding("right", "cursor_right", "Cursor right", show=False),
        Binding("left", "cursor_left", "Cursor left", show=False),
        Binding("pageup", "page_up", "Page up", show=False),
        Binding("pagedown", "page_down", "Page down", show=False),
        Binding("ctrl+home", "scroll_top", "Top", show=False),
        Binding("ctrl+end", "scroll_bottom", "Bottom", show=False),
        Binding("home", "scroll_home", "Home", show=False),
        Binding("end", "scroll_end", "End", show=False),
    ]

    # The DataTable's names, so CSS written for a DataTable (main.tcss) styles this table too.
    COMPONENT_CLASSES: ClassVar[set[str]] = {
        "datatable--cursor", "datatable--hover", "datatable--header",
        "datatable--header-cursor", "datatable--header-hover",
    }

    # The DataTable's default CSS (Textual 8.2), less the parts for zebra stripes and fixed
    # rows and columns, which this table does not have.
    DEFAULT_CSS = """
    LazyTable {
        background: $surface;
        color: $foreground;
        height: auto;
        max-height: 100%;

        &:focus {
            background-tint: $foreground 5%;
            & > .datatable--cursor {
                background: $block-cursor-background;
                color: $block-cursor-foreground;
                text-style: $block-cursor-text-style;
            }
            & > .datatable--header {
                background-tint: $foreground 5%;
            }
        }
        & > .datatable--header {
            text-style: bold;
            background: $panel;
            color: $foreground;
        }
        &:ansi > .datatable--header {
            background: ansi_bright_blue;
            color: ansi_default;
        }
        & > .datatable--cursor {
            background: $block-cursor-blurred-background;
            color: $block-cursor-blurred-foreground;
            text-style: $block-cursor-blurred-text-style;
        }
        & > .datatable--header-cursor {
            background: $accent-darken-1;
            color: $foreground;
        }
        & > .datatable--header-hover {
            background: $accent 30%;
        }
        & > .datatable--hover {
            background: $block-hover-background;
        }
    }
    """

    class _RowMessage(Message):
        """A message about one row: the table, the cursor's row and the row's key."""

        def __init__(self, table: LazyTable, cursor_row: int, key: str) -> None:
            super().__init__()
            self.table = table
            self.cursor_row = cursor_row
            self.key = key

        @property
        def control(self) -> LazyTable:
            return self.table

    class RowHighlighted(_RowMessage):
        """The cursor is on a new row (or a new row is under it)."""

    class RowSelected(_RowMessage):
        """Enter on the cursor's row, or a click on it."""

    class HeaderSelected(Message):
        """A click on a column heading."""

        def __init__(self, table: LazyTable, column_key: str, column_index: int) -> None:
            super().__init__()
            self.table = table
            self.column_key = column_key
            self.column_index = column_index

        @property
        def control(self) -> LazyTable:
            return self.table

    def __init__(self, *, cell_padding: int = 1, name: str | None = None,
                 id: str | None = None, classes: str | None = None,
                 disabled: bool = False) -> None:
        super().__init__(name=name, id=id, classes=classes, disabled=disabled)
        self.cell_padding = cell_padding
        self.columns: dict[str, TableColumn] = {}
        self._ordered: list[TableColumn] = []
        self._keys: list[str] = []
        self._row_cells: Callable[[str], Sequence[RenderableType]] = lambda key: ()
        self._cursor = 0
        self._hover = 0
        self._show_hover = False
        self._generation = 0  # bumped when what a line shows may have changed
        # (cell object, width, styles) -> rendered segments; keyed by id(), checked by identity
        self._cell_cache: LRUCache[tuple[Any, ...], tuple[object, list[Segment]]] = \
            LRUCache(20000)
        self._line_cache: LRUCache[tuple[Any, ...], Strip] = LRUCache(1000)
        self._style_cache: dict[tuple[bool, bool, bool, bool], tuple[Style, Style]] = {}

    # -- data -------------------------------------------------------------------------------
    @property
    def row_count(self) -> int:
        return len(self._keys)

    @property
    def cursor_row(self) -> int:
        return self._cursor

    @property
    def ordered_keys(self) -> list[str]:
        """The row keys in the order shown (do not change the list)."""
        return self._keys

    @property
    def ordered_columns(self) -> list[TableColumn]:
        return self._ordered

    @property
    def cursor_key(self) -> str | None:
        return self._keys[self._cursor] if 0 <= self._cursor < len(self._keys) else None

    def get_row(self, key: str) -> list[RenderableType]:
        """The cells of a row, in column order."""
        return list(self._row_cells(key))

    def set_columns(self, columns: Sequence[TableColumn]) -> None:
        self._ordered = list(columns)
        self.columns = {c.key: c for c in self._ordered}
        self._changed()

    def set_heading(self, key: str, label: Text) -> None:
        column = self.columns[key]
        if column.label != label:
            column.label = label
            self._changed()

    def set_rows(self, keys: list[str], row_cells: Callable[[str], Sequence[RenderableType]],
                 keep: str | None = None) -> None:
        """Show `keys` in this order, each row's cells from `row_cells(key)`.

        The cursor stays on the row `keep` at the same height on screen when it is still
        listed; otherwise it goes back to the first row, as a DataTable's would after `clear`.
        The list is the table's from now on: hand over a new one for the next change.
        """
        old_cursor, old_scroll = self._cursor, int(self.scroll_y)
        self._keys, self._row_cells = keys, row_cells
        self._changed()
        at = _index(keys, keep) if keep is not None else None
        if at is None:
            self._cursor = 0
            self.scroll_to(y=0, animate=False, force=True, immediate=True)
        else:
            self._cursor = at
            self.scroll_to(y=max(0, at - (old_cursor - old_scroll)), animate=False, force=True,
                           immediate=True)
            self._scroll_cursor_into_view()
        if keys:
            self.post_message(self.RowHighlighted(self, self._cursor, keys[self._cursor]))

    def _changed(self) -> None:
        self._generation += 1
        self._line_cache.clear()
        self.virtual_size = Size(self._table_width(), len(self._keys) + 1)
        self.refresh()

    def _table_width(self) -> int:
        return sum(c.get_render_width(self) for c in self._ordered)

    # -- the cursor ---------------------------------------------------------------------------
    def move_cursor(self, *, row: int | None = None, animate: bool = False,
                    scroll: bool = True) -> None:
        if row is None or not self._keys:
            return
        row = max(0, min(row, len(self._keys) - 1))
        if scroll:
            self._scroll_cursor_into_view(row, animate=animate)
        if row != self._cursor:
            self._refresh_row(self._cursor)
            self._cursor = row
            self._refresh_row(row)
            self.post_message(self.RowHighlighted(self, row, self._keys[row]))

    def _scroll_cursor_into_view(self, row: int | None = None, animate: bool = False) -> None:
        row = self._cursor if row is None else row
        region = Region(int(self.scroll_x), row + 1, max(self.size.width, self._table_width()),
                        1)
        self.scroll_to_region(region, animate=animate, spacing=Spacing(1, 0, 0, 0), force=True,
                              immediate=True)

    def _refresh_row(self, row: int) -> None:
        region = Region(0, row + 1, max(self.size.width, self._table_width()), 1)
        if self.window_region.overlaps(region):
            self.refresh(region.translate(-self.scroll_offset))

    def _set_hover(self, active: bool) -> None:
        if active != self._show_hover:
            self._show_hover = active
            self._refresh_row(self._hover)

    # -- keys and mouse (the DataTable's rules for a row cursor) ----------------------------
    def action_cursor_up(self) -> None:
        self._set_hover(False)
        self.move_cursor(row=self._cursor - 1)

    def action_cursor_down(self) -> None:
        self._set_hover(False)
        self.move_cursor(row=self._cursor + 1)

    def action_cursor_left(self) -> None:
        self._set_hover(False)
        self.action_scroll_left()

    def action_cursor_right(self) -> None:
        self._set_hover(False)
        self.action_scroll_right()

    def _page(self) -> int:
        return self.scrollable_content_region.height - 1

    def action_page_down(self) -> None:
        self._set_hover(False)
        height = self._page()
        target = min(self._cursor + height, len(self._keys) - 1)
        self.scroll_relative(y=height, animate=False, force=True)
        self.move_cursor(row=target, scroll=False)

    def action_page_up(self) -> None:
        self._set_hover(False)
        height = self._page()
        self.scroll_relative(y=-height, animate=False)
        self.move_cursor(row=max(0, self._cursor - height), scroll=False)

    def action_scroll_top(self) -> None:
        self._set_hover(False)
        self.move_cursor(row=0)

    def action_scroll_bottom(self) -> None:
        self._set_hover(False)
        self.move_cursor(row=len(self._keys) - 1)

    def action_scroll_home(self) -> None:
        self._set_hover(False)
        self.scroll_x = 0

    def action_scroll_end(self) -> None:
        self._set_hover(False)
        self.scroll_x = self.max_scroll_x

    def action_select_cursor(self) -> None:
        self._set_hover(False)
        if self._keys:
            self.post_message(self.RowSelected(self, self._cursor, self._keys[self._cursor]))

    def _on_mouse_move(self, event: events.MouseMove) -> None:
        meta = event.style.meta
        if not meta or "row" not in meta:
            self._set_hover(False)
            return
        self._set_hover(True)
        if meta["row"] != self._hover:
            self._refresh_row(self._hover)
            self._hover = meta["row"]
            self._refresh_row(self._hover)

    def _on_leave(self, _: events.Leave) -> None:
        self._set_hover(False)

    async def _on_click(self, event: events.Click) -> None:
        self._set_hover(True)
        meta = event.style.meta
        if "row" not in meta or "column" not in meta:
            return
        row, column = meta["row"], meta["column"]
        if row == HEADER:
            if not meta.get("out_of_bounds") and column < len(self._ordered):
                self.post_message(self.HeaderSelected(self, self._ordered[column].key, column))
        elif 0 <= row < len(self._keys):
            again = row == self._cursor
            self.move_cursor(row=row, scroll=False)
            if again:
                self.post_message(self.RowSelected(self, row, self._keys[row]))
            self._scroll_cursor_into_view(animate=True)
            event.stop()

    # -- rendering ----------------------------------------------------------------------------
    def notify_style_update(self) -> None:
        super().notify_style_update()
        self._style_cache.clear()
        self._cell_cache.clear()
        self._line_cache.clear()
        self.refresh()

    def _on_resize(self, _: events.Resize) -> None:
        self._line_cache.clear()

    def _styles(self, header: bool, hover: bool, cursor: bool) -> tuple[Style, Style]:
        """(component style, post style) of a cell, as DataTable._get_styles_to_render_cell."""
        key = (header, hover, cursor, self._show_hover)
        cached = self._style_cache.get(key)
        if cached is None:
            get = self.get_component_rich_style
            component = Style()
            if hover and self._show_hover:
                component += get("datatable--hover")
                if header:
                    component += get("datatable--header-hover")
            if cursor:
                component += get("datatable--cursor")
                if header:
                    component += get("datatable--header-cursor")
            # The DataTable's cursor_foreground_priority="css", background "renderable".
            post = Style.from_color(color=component.color) + Style.null()
            cached = self._style_cache[key] = (component, post)
        return cached

    def _cell(self, cell: RenderableType, width: int, row_style: Style, component: Style,
              post: Style) -> list[Segment]:
        """One cell's line, without the row and column meta (added per line)."""
        key = (id(cell), width, row_style, component, post)
        hit = self._cell_cache.get(key)
        if hit is not None and hit[0] is cell:
            return hit[1]
        options = self.app.console_options.update_dimensions(width, 1).update(no_wrap=True)
        lines = self.app.console.render_lines(
            Styled(Padding(cell, (0, self.cell_padding)), pre_style=row_style + component,
                   post_style=post), options)
        segments = lines[0]
        self._cell_cache[key] = (cell, segments)
        return segments

    def _line(self, row: int, x1: int, x2: int, base_style: Style) -> Strip:
        width = self.size.width
        cursor = row == self._cursor and row != HEADER
        hover = row == self._hover
        key = (row, self._keys[row] if row != HEADER else None, x1, x2, width, cursor,
               hover and self._show_hover, base_style, self._generation,
               self.get_pseudo_class_state())
        strip = self._line_cache.get(key)
        if strip is not None:
            return strip
        if row == HEADER:
            row_style = self.get_component_styles("datatable--header").rich_style
            cells: Sequence[RenderableType] = [c.label for c in self._ordered]
        else:
            row_style = base_style
            cells = self._row_cells(self._keys[row])
        component, post = self._styles(row == HEADER, hover, cursor)
        segments: list[Segment] = []
        for index, (column, cell) in enumerate(zip(self._ordered, cells, strict=False)):
            meta = Style.from_meta({"row": row, "column": index})
            rendered = self._cell(cell, column.get_render_width(self), row_style, component,
                                  post)
            segments += [Segment(text, style + meta if style else meta, control)
                         for text, style, control in rendered]
        extend, _ = self._styles(row == HEADER, hover, cursor)
        extend_style = row_style + extend + Style.from_meta(
            {"row": row, "column": 0, "out_of_bounds": True})
        segments.append(Segment(" " * max(0, width - self._table_width()), extend_style))
        strip = Strip(segments).crop(x1, x2).adjust_cell_length(width, base_style).simplify()
        self._line_cache[key] = strip
        return strip

    def render_line(self, y: int) -> Strip:
        width = self.size.width
        scroll_x, scroll_y = self.scroll_offset
        row = HEADER if y == 0 else y - 1 + scroll_y
        if row >= len(self._keys):
            return Strip.blank(width, self.rich_style)
        return self._line(row, scroll_x, scroll_x + width, self.rich_style)


def _index(keys: list[str], key: str) -> int | None:
    try:
        return keys.index(key)
    except ValueError:
        return None
