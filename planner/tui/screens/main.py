"""The main view: summary, find box, the fleet table in triage order, the highlighted row.

Also the view shown while the file is read and planned in the background (`LoadingScreen`).
"""

from __future__ import annotations

import time
from typing import TYPE_CHECKING, Any

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import Input, Label, Static

from planner.tui.actions import ERROR, MAIN
from planner.tui.look import DIM, STYLES, field_text, literal
from planner.tui.view import View, describe
from planner.tui.widgets.bars import KeyStrip, SummaryLine, TitleBar
from planner.tui.widgets.fleet_table import FleetTable, next_sort
from planner.tui.widgets.lazy_table import LazyTable

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp


class MainScreen(Screen):
    """The fleet at a glance."""

    SCOPE = MAIN
    CSS_PATH = STYLES / "main.tcss"
    AUTO_FOCUS = "#fleet"

    def compose(self) -> ComposeResult:
        yield TitleBar()
        yield SummaryLine(id="summary", markup=False)
        with Horizontal(id="findbar"):
            yield Label("/ find", id="find-label")
            yield Input(placeholder="id or label", id="find", compact=True)
            yield Static(id="viewinfo", markup=False)
        yield FleetTable(id="fleet")
        yield Static(id="rowinfo", markup=False)
        yield KeyStrip(MAIN)

    @property
    def beltapp(self) -> BeltplanApp:
        return self.app  # type: ignore[return-value]

    @property
    def table(self) -> FleetTable:
        return self.query_one(FleetTable)

    def on_mount(self) -> None:
        self.refresh_from_session()

    # -- updates from the app -------------------------------------------------------------
    def refresh_from_session(self) -> None:
        """New text or planning date: new records, same view."""
        session = self.beltapp.session
        if not session.ok:
            return
        self.beltapp.show_title(self.query_one(TitleBar))
        self.table.show_rows(self.beltapp.table_rows())
        self._after_relist()

    def set_view(self, view: View) -> None:
        self.table.set_view(view)
        self._after_relist()

    def _after_relist(self) -> None:
        table = self.table
        session = self.beltapp.session
        self.query_one(SummaryLine).show(session.as_of, table.records, len(table.listed))
        info = Text(describe(table.view, table.heading_of()), style=DIM)
        if any(c.field == "p_fail_horizon" for c in table.shown):
            # A probability always says where it comes from (the about view has the model).
            basis = session.assessment().model.basis
            info.append(" · risk assumed (i)" if basis == "assumed" else
                        f" · risk: {basis} (i)", style=DIM)
        if table.hidden:
            n = len(table.hidden)
            info.append(f" · +{n} column{'s' if n != 1 else ''} if wider", style=DIM)
        self.query_one("#viewinfo", Static).update(info)
        self._show_row()

    def _show_row(self) -> None:
        rec = self.table.current_record()
        box = self.query_one("#rowinfo", Static)
        if rec is None:
            box.update(Text("no vehicle matches: press c to clear the find box and filters"
                            if self.table.records else "no vehicles yet: press a to add one",
                            style=DIM))
            return
        text = literal(rec["id"], "bold")
        if rec.get("label"):
            text.append(" ")
            text.append(field_text(rec["label"]))
        notes = rec.get("notes") or []
        if notes:
            text.append(" │ ", style=DIM)
            text.append(field_text(notes[0]))
        box.update(text)

    # -- events ---------------------------------------------------------------------------
    def on_lazy_table_row_highlighted(self, event: LazyTable.RowHighlighted) -> None:
        self._show_row()

    def on_lazy_table_row_selected(self, event: LazyTable.RowSelected) -> None:
        event.stop()
        self.beltapp.open_detail(event.key)

    def on_fleet_table_sort_asked(self, event: FleetTable.SortAsked) -> None:
        self.set_view(next_sort(self.table.view, event.field))

    def on_input_changed(self, event: Input.Changed) -> None:
        if event.input.id == "find":
            self.set_view(self.table.view.with_(query=event.value))

    def on_input_submitted(self, event: Input.Submitted) -> None:
        if event.input.id == "find":
            self.table.focus()

    def on_resize(self, event: Any) -> None:
        self.call_after_refresh(self._after_relist)


class LoadingScreen(Screen):
    """Shown while the fleet file is read and planned in a worker; the UI stays live.

    The seconds so far tick twice a second: cheap, unlike a spinner's frames, which would take
    turns with the worker for the interpreter many times a second.
    """

    SCOPE = ERROR  # nothing is loaded yet: the error view's keys apply (reload, help, quit)
    DEFAULT_CSS = "LoadingScreen #loading-what { height: auto; padding: 1 2; }"

    def compose(self) -> ComposeResult:
        yield TitleBar()
        yield Static(id="loading-what", markup=False)
        yield KeyStrip(ERROR)

    @property
    def beltapp(self) -> BeltplanApp:
        return self.app  # type: ignore[return-value]

    def on_mount(self) -> None:
        self._started = time.monotonic()  # a stopwatch, not the date
        self.refresh_from_session()
        self.set_interval(0.5, self.refresh_from_session)

    def refresh_from_session(self) -> None:
        session = self.beltapp.session
        self.beltapp.show_title(self.query_one(TitleBar))
        words = f"Reading {session.path} and planning as of {session.as_of} …"
        seconds = time.monotonic() - self._started
        if seconds >= 1:
            words += f" {seconds:.0f} s"
        self.query_one("#loading-what", Static).update(Text(words, style=DIM))
