"""One-line bars: the title bar, the summary of the plan, the key strip."""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from typing import Any

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Static

from planner.tui.actions import first_key, for_scope
from planner.tui.look import (
    ACCENT,
    DIM,
    KEY_CHIP,
    STATUS_STYLE,
    STATUS_SYMBOL,
    field_text,
    literal,
)
from planner.tui.session import status_counts


class TitleBar(Horizontal):
    """`beltplan ▸ fleet name · file` on the left; read-only and the unsaved marker on the right."""

    DEFAULT_CSS = """
    TitleBar { height: 1; dock: top; background: $panel; }
    TitleBar #title-left { width: 1fr; height: 1; text-wrap: nowrap; text-overflow: ellipsis; }
    TitleBar #title-right { width: auto; height: 1; padding: 0 1; }
    TitleBar #title-right.-dirty { background: $warning 30%; text-style: bold; }
    TitleBar #title-right.-read-only { background: $error 30%; }
    """

    def compose(self) -> ComposeResult:
        yield Static(id="title-left", markup=False)
        yield Static(id="title-right", markup=False)

    def show(self, name: str, file: str, changes: int, dirty: bool, extra: str = "",
             loaded: bool = True, busy: str = "", read_only: bool = False) -> None:
        """`busy` (reading, re-planning) and `read_only` go on the right, where a long path
        cannot hide them."""
        left = literal(" beltplan ", ACCENT)
        left.append("▸ ", style=DIM)
        left.append(field_text(name, "bold"))
        if file != name:
            left.append(field_text(f"  {file}", DIM))
        if extra:
            left.append(f"  {extra}")
        self.query_one("#title-left", Static).update(left)
        right = self.query_one("#title-right", Static)
        state = literal(f"{busy}  ", ACCENT) if busy else Text()
        if read_only:
            state.append("read-only", style="bold")
            state.append(" · ", style=DIM)
        if dirty:
            word = "change" if changes == 1 else "changes"
            state.append(f"● {changes} unsaved {word}" if changes else "● unsaved")
        elif not loaded:
            state.append("not loaded", style=DIM)
        else:
            state.append("saved", style=DIM)
        right.update(state)
        right.set_class(dirty, "-dirty")
        right.set_class(read_only and not dirty, "-read-only")


class SummaryLine(Static):
    """`Plan date 2026-12-07 │ 16 vehicles: ✗ 4 overdue  ? 1 no-record …`."""

    DEFAULT_CSS = "SummaryLine { height: auto; padding: 0 1; background: $surface; }"

    _counted: tuple[Sequence[dict[str, Any]], list[tuple[str, int]]] | None = None

    def show(self, as_of: dt.date, records: Sequence[dict[str, Any]], shown: int) -> None:
        text = literal("Plan date ", DIM)
        text.append(as_of.isoformat(), style="bold")
        text.append(" │ ", style=DIM)
        text.append(f"{len(records)} vehicles: ")
        if self._counted is None or self._counted[0] is not records:
            self._counted = (records, status_counts(records))  # once per plan, not per filter
        counts = self._counted[1]
        for k, (status, n) in enumerate(counts):
            if k:
                text.append("  ")
            text.append(f"{STATUS_SYMBOL[status]} {n} {status}", style=STATUS_STYLE[status])
        if not counts:
            text.append("none")
        if shown != len(records):
            text.append(f" │ showing {shown}", style="bold")
        self.update(text)


class KeyStrip(Static):
    """The keys of the view, from the action table (the ones marked for the strip)."""

    DEFAULT_CSS = """
    KeyStrip { dock: bottom; height: 1; background: $panel; text-wrap: nowrap;
               text-overflow: ellipsis; }
    """

    def __init__(self, scope: str, **kwargs: Any) -> None:
        super().__init__(markup=False, **kwargs)
        self.scope = scope

    def on_mount(self) -> None:
        text = Text()
        for action in for_scope(self.scope):
            if self.scope not in action.strip:
                continue
            text.append(f" {first_key(action.keys)} ", style=KEY_CHIP)
            text.append(f"{action.strip_title} ")
        self.update(text)
