"""The error view: the fleet file could not be used, and here is every reason and fix."""

from __future__ import annotations

from typing import TYPE_CHECKING

from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import Static

from planner.errors import PlannerError, Problem
from planner.tui.actions import BY_ID, ERROR, key_label
from planner.tui.look import ACCENT, DIM, STYLES, field_text, literal
from planner.tui.widgets.bars import KeyStrip, TitleBar

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp


def _where(problem: Problem) -> str:
    """`line 42 · vehicle KL-07 · field readings[2].odometer`."""
    where = []
    if problem.line:
        where.append(f"line {problem.line}" + (f", column {problem.column}"
                                               if problem.column else ""))
    if problem.vehicle is not None:
        where.append(f"vehicle {problem.vehicle}")
    if problem.field:
        where.append(f"field {problem.field}")
    return " · ".join(where) or "the file"


def error_table(error: PlannerError) -> Table:
    """Each problem: where, what, and the fix, with the text indented under its number."""
    table = Table.grid(padding=(0, 1))
    table.add_column(no_wrap=True, style=ACCENT, min_width=4, justify="right")
    table.add_column(ratio=1)
    for k, problem in enumerate(error.problems, 1):
        if k > 1:
            table.add_row("", "")
        table.add_row(f"{k}.", field_text(_where(problem), "bold"))
        table.add_row("", field_text(problem.message))
        if problem.hint:
            table.add_row("fix", field_text(problem.hint))
    return table


class ErrorScreen(Screen):
    """Shown instead of the fleet when the file does not load."""

    SCOPE = ERROR
    CSS_PATH = STYLES / "error.tcss"

    @property
    def beltapp(self) -> BeltplanApp:
        return self.app  # type: ignore[return-value]

    def compose(self) -> ComposeResult:
        yield TitleBar()
        yield Static(id="e-title", markup=False)
        with VerticalScroll(id="e-body"):
            yield Static(id="e-problems", markup=False)
        yield Static(id="e-help", markup=False)
        yield KeyStrip(ERROR)

    def on_mount(self) -> None:
        self.refresh_from_session()

    def refresh_from_session(self) -> None:
        session = self.beltapp.session
        error = session.error
        self.beltapp.show_title(self.query_one(TitleBar))
        if error is None:
            return
        head = literal("The fleet file cannot be planned\n", "bold")
        head.append(literal(error.title))
        if error.message:
            head.append("\n")
            head.append(literal(error.message, DIM))
        self.query_one("#e-title", Static).update(head)
        self.query_one("#e-problems", Static).update(
            error_table(error) if error.problems else Text("(no further detail)", style=DIM))
        reload_key = key_label(BY_ID["reload"].keys)
        self.query_one("#e-help", Static).update(Text(
            f"Nothing was changed. Fix the file in your editor ({session.path}), then press "
            f"{reload_key} to read it again.", style=""))
