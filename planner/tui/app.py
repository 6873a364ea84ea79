"""The Textual application: one session, the views over it, and the actions' handlers.

Build it with `create_app(path, as_of)` (the command line and every test do). The planning date
is always passed in; nothing under `planner.tui` reads the clock except `planner.tui.clock`
(an exported calendar's DTSTAMP, "today" for imported readings).
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path
from typing import Any

from textual.app import App
from textual.screen import Screen

from planner.tui.actions import BY_ID, bindings, first_key, scope_of
from planner.tui.app_edit import EditActions
from planner.tui.app_file import FileActions
from planner.tui.app_import import ImportActions
from planner.tui.app_week import WeekActions
from planner.tui.commands import ActionCommands
from planner.tui.look import STYLES, THEME
from planner.tui.screens.detail import DetailScreen
from planner.tui.screens.dialogs import FilterDialog, PickDialog
from planner.tui.screens.error import ErrorScreen
from planner.tui.screens.form import FormScreen
from planner.tui.screens.help import AboutScreen, HelpScreen
from planner.tui.screens.main import MainScreen
from planner.tui.session import Session
from planner.tui.view import TRIAGE, View
from planner.tui.widgets.bars import TitleBar
from planner.tui.widgets.fleet_table import next_sort


class BeltplanApp(EditActions, FileActions, ImportActions, WeekActions, App[None],
                  inherit_bindings=False):
    """The planner's terminal UI over one fleet file."""

    TITLE = "beltplan"
    CSS_PATH = STYLES / "app.tcss"
    BINDINGS = bindings("app")
    COMMANDS = {ActionCommands}
    COMMAND_PALETTE_BINDING = first_key(BY_ID["command_palette"].keys)

    def __init__(self, session: Session, **kwargs: Any) -> None:
        super().__init__(**kwargs)
        self.session = session
        self.last_message = ""  # the last thing the app told the user (tests read it)

    # -- start and views ------------------------------------------------------------------
    def on_mount(self) -> None:
        self.register_theme(THEME)
        self.theme = THEME.name
        self.session.load()
        self.push_screen(MainScreen() if self.session.ok else ErrorScreen())

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        spec = BY_ID.get(action)
        if spec is None or spec.target != "app":
            return True
        return scope_of(self.screen) in spec.scopes

    def say(self, message: str, severity: str = "information") -> None:
        """Tell the user something (a notification; never read as markup)."""
        self.last_message = message
        self.notify(message, severity=severity, markup=False)  # type: ignore[arg-type]

    def show_title(self, bar: TitleBar) -> None:
        s = self.session
        bar.show(s.name if s.ok else str(s.path), str(s.path), len(s.history), s.dirty,
                 loaded=s.ok)

    def refresh_views(self) -> None:
        """The text or the date changed: every open view redraws from the session."""
        for screen in self.screen_stack:
            refresh = getattr(screen, "refresh_from_session", None)
            if refresh is not None:
                refresh()

    def main_screen(self) -> MainScreen | None:
        return next((s for s in self.screen_stack if isinstance(s, MainScreen)), None)

    async def show_base(self) -> None:
        """After (re)loading: the fleet list, or the error view when the file is bad."""
        while len(self.screen_stack) > 2:
            await self.pop_screen()
        wanted: type[Screen] = MainScreen if self.session.ok else ErrorScreen
        if len(self.screen_stack) == 2 and isinstance(self.screen, wanted):
            self.refresh_views()
        elif len(self.screen_stack) == 2:
            await self.switch_screen(wanted())
        else:
            await self.push_screen(wanted())

    def open_detail(self, vehicle_id: str) -> None:
        if self.session.plan_of(vehicle_id) is not None:
            self.push_screen(DetailScreen(vehicle_id))

    def current_vehicle_id(self) -> str | None:
        """The vehicle actions act on: the detail's, else the highlighted row's."""
        if isinstance(self.screen, DetailScreen):
            return self.screen.vehicle_id
        main = self.main_screen()
        return main.table.current_id if main is not None else None

    # -- looking --------------------------------------------------------------------------
    def action_detail(self) -> None:
        vid = self.current_vehicle_id()
        if vid is None:
            self.say("No vehicle is highlighted.", "warning")
        else:
            self.open_detail(vid)

    def action_back(self) -> None:
        if isinstance(self.screen, DetailScreen):
            self.pop_screen()
        elif isinstance(self.screen, MainScreen):
            self.screen.table.focus()

    def action_find(self) -> None:
        main = self.main_screen()
        if main is not None:
            main.query_one("#find").focus()

    def action_filter(self) -> None:
        main = self.main_screen()
        if main is None:
            return
        view = main.table.view

        def done(choice: tuple[frozenset[str], frozenset[str]] | None) -> None:
            if choice is not None:
                main.set_view(view.with_(statuses=choice[0], consequences=choice[1]))

        self.push_screen(FilterDialog(view.statuses, view.consequences), done)

    def action_sort(self) -> None:
        main = self.main_screen()
        if main is None:
            return
        view = main.table.view
        options: list[tuple[str, str]] = [
            (TRIAGE, "triage order: overdue and no-record first, then by expected loss")]
        for col in main.table.all_columns:
            mark = ""
            if view.sort == col.field:
                mark = "  (now; choose again to reverse)"
            options.append((col.field, col.heading + mark))

        def done(field: str | None) -> None:
            if field is not None:
                main.set_view(next_sort(view, field))

        self.push_screen(PickDialog("Sort by", "Unknown values always go last.", options,
                                    current=view.sort or TRIAGE), done)

    def action_clear_view(self) -> None:
        main = self.main_screen()
        if main is not None:
            main.query_one("#find").value = ""  # type: ignore[attr-defined]
            main.set_view(View())

    def action_plan_date(self) -> None:
        from planner.tui.form_specs import date_form

        def done(day: dt.date | None) -> None:
            if day is not None and day != self.session.as_of:
                self.session.as_of = day
                self.refresh_views()
                self.say(f"Planning as of {day}.")

        self.push_screen(FormScreen(date_form(self.session)), done)

    # -- help -----------------------------------------------------------------------------
    def action_help(self) -> None:
        self.push_screen(HelpScreen())

    def action_about(self) -> None:
        line = self.session.assessment().model.describe() if self.session.ok else None
        self.push_screen(AboutScreen(line))


def create_app(path: str | Path, as_of: dt.date, **kwargs: Any) -> BeltplanApp:
    """The app on the fleet file at `path`, planning as of `as_of` (never today's date here)."""
    return BeltplanApp(Session(path, as_of), **kwargs)
