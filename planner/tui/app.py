"""The Textual application: one session, the views over it, and the actions' handlers.

Build it with `create_app(path, as_of)` (the command line and every test do). The planning date
is always passed in; nothing under `planner.tui` reads the clock except `planner.tui.clock`
(an exported calendar's DTSTAMP, "today" for imported readings).
"""

from __future__ import annotations

import datetime as dt
import gc
from collections.abc import Callable
from pathlib import Path
from typing import Any

from textual.app import App
from textual.screen import Screen

from planner.errors import PlannerError
from planner.recovery import write_recovery
from planner.tui import clock
from planner.tui.actions import BY_ID, bindings, first_key, scope_of
from planner.tui.app_edit import EditActions
from planner.tui.app_file import FileActions
from planner.tui.app_import import ImportActions
from planner.tui.app_inuse import InUseActions, Marked
from planner.tui.app_week import WeekActions
from planner.tui.background import gc_paused, internal_error, off_thread
from planner.tui.commands import ActionCommands
from planner.tui.look import STYLES, THEME, literal
from planner.tui.screens.detail import DetailScreen
from planner.tui.screens.dialogs import FilterDialog, PickDialog
from planner.tui.screens.error import ErrorScreen
from planner.tui.screens.form import FormScreen
from planner.tui.screens.help import AboutScreen, HelpScreen
from planner.tui.screens.main import LoadingScreen, MainScreen
from planner.tui.session import Reading, Session, warnings_notice
from planner.tui.view import TRIAGE, View
from planner.tui.widgets.bars import TitleBar
from planner.tui.widgets.fleet_table import TableRows, next_sort, prepare_rows

# A re-plan is done at once when the last plan took less than this (a small fleet: the views
# change with no "re-planning" flash); otherwise in a worker while the UI stays live.
QUICK_PLAN = 0.05  # seconds
CACHE_DELAY = 1.0  # seconds after a read or a save before the fleet is written to the cache


class BeltplanApp(EditActions, FileActions, ImportActions, InUseActions, WeekActions, App[None],
                  inherit_bindings=False):
    """The planner's terminal UI over one fleet file."""

    TITLE = "beltplan"
    CSS_PATH = STYLES / "app.tcss"
    BINDINGS = bindings("app")
    COMMANDS = {ActionCommands}
    COMMAND_PALETTE_BINDING = first_key(BY_ID["command_palette"].keys)

    def __init__(self, session: Session, in_use: bool | None = None, **kwargs: Any) -> None:
        super().__init__(**kwargs)
        self.init_in_use(in_use)
        self.session = session
        self.last_message = ""  # the last thing the app told the user (tests read it)
        self.load_notice = ""  # the warnings of the file as last read, as told after the read
        self.reading = False  # the file is being read in a worker
        self.planning = False  # the current text is being planned in a worker
        self._rows: TableRows | None = None  # the fleet table's cells for the latest plan
        self.recovered_to: Path | None = None  # where a bug's exit left the unsaved text
        self.recovery_failed = ""  # why it could not be written there

    # -- a bug ----------------------------------------------------------------------------
    def _handle_exception(self, error: Exception) -> None:
        """An exception no view handled (a bug): Textual stops the app with return code 1.

        Before it does, unsaved edits go to a recovery file beside the fleet file
        (`planner.recovery`); the command line says where once the terminal is back.
        """
        session = getattr(self, "session", None)
        if session is not None and self.recovered_to is None and not self.recovery_failed:
            try:
                if session.dirty:
                    self.recovered_to = write_recovery(session.path, session.text,
                                                       clock.utc_now())
            except Exception as exc:  # the app is stopping: say why, and go on
                self.recovery_failed = f"{type(exc).__name__}: {exc}"
        super()._handle_exception(error)

    # -- start and views ------------------------------------------------------------------
    def on_mount(self) -> None:
        self.register_theme(THEME)
        self.theme = THEME.name
        self.push_screen(LoadingScreen())
        self.call_after_refresh(self.read_in_background)  # the loading view first, then work

    def on_unmount(self) -> None:
        self.release_in_use()
        gc.unfreeze()  # what the reads froze can be collected once the app is gone

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        spec = BY_ID.get(action)
        if spec is None or spec.target != "app":
            return True
        if self.reading and (spec.group == "Edit" or spec.id == "save"):
            return False  # the text is about to be replaced by the file's
        return scope_of(self.screen) in spec.scopes

    def say(self, message: str, severity: str = "information") -> None:
        """Tell the user something (a notification; never read as markup, and any control or
        format character in file text it quotes shown as an escape: `look.literal`)."""
        message = literal(message).plain
        self.last_message = message
        self.notify(message, severity=severity, markup=False)  # type: ignore[arg-type]

    def show_title(self, bar: TitleBar) -> None:
        s = self.session
        busy = "reading …" if self.reading else "re-planning …" if self.planning else ""
        bar.show(s.name if s.ok else str(s.path), str(s.path), len(s.history), s.dirty,
                 loaded=s.ok, busy=busy, read_only=self.read_only)

    def _show_titles(self) -> None:
        for screen in self.screen_stack:
            for bar in screen.query(TitleBar):
                self.show_title(bar)

    def refresh_views(self) -> None:
        """The text or the date changed: every open view redraws from the session.

        When the plan is not at hand and the last one took a while, it is made in a worker;
        until it is ready the views keep the last plan and the title says "re-planning".
        """
        session = self.session
        if session.ok and not session.planned and session.last_plan_seconds > QUICK_PLAN:
            self.plan_in_background()
        else:
            self._redraw()

    def _redraw(self) -> None:
        for screen in self.screen_stack:
            refresh = getattr(screen, "refresh_from_session", None)
            if refresh is not None:
                refresh()

    def table_rows(self) -> TableRows:
        """The fleet table's cells for the current plan (prepared by the worker if it ran)."""
        records = self.session.records()
        rows = self._rows
        if rows is None or rows.records is not records:
            rows = self._rows = prepare_rows(records, self.session.columns(), rows)
        return rows

    # -- work off the UI thread (Textual workers; a newer request cancels an older one) ------
    def read_in_background(self, again: bool = False) -> None:
        """Read and plan the file in a worker, then show the list or the error view."""
        self.workers.cancel_group(self, "plan")
        self.reading, self.planning = True, False
        self._show_titles()
        self.run_worker(self._read_worker(again), group="read", exclusive=True, exit_on_error=False)

    async def _read_worker(self, again: bool) -> None:
        session, previous = self.session, self._rows
        mark = self.in_use_job(session)

        def work() -> tuple[Reading, TableRows | None, Marked]:
            with gc_paused(reclaim=True):
                reading = session.read()
                planned = reading.planned
                rows = None if planned is None else \
                    prepare_rows(planned.records, planned.columns(), previous)
            return reading, rows, mark(reading)  # the in-use marker, once the file read well

        try:
            reading, rows, marked = await off_thread(work)
        except Exception as exc:  # a bug, not the file: the error view says so
            self.log.error(f"reading {session.path} failed", exc)
            reading, rows = Reading(None, internal_error(f"reading {session.path}", exc)), None
            marked = None
        self.reading = False
        session.adopt(reading)
        self._rows = rows
        await self.show_base()
        self._show_titles()
        if again:
            self.say(f"Read {session.path} again." if session.ok else
                     f"{session.path} still has problems.",
                     "information" if session.ok else "error")
        self.load_notice = warnings_notice(session.warnings) if session.ok and \
            session.warnings else ""
        if self.load_notice:  # beside, not instead of, what the read itself says
            self.notify(self.load_notice, severity="warning", markup=False, timeout=12)
        self.settle_in_use(session, marked)
        self.keep_in_cache()

    def keep_in_cache(self) -> None:
        """Soon, in a worker: keep the fleet as it is on disk in the fleet cache, so that the
        next open of this file is quick (after a read, after a save; nothing if kept already).

        It waits CACHE_DELAY first: pickling a big fleet shares the interpreter with the UI
        for a moment, better not while the first screen is being looked at.
        """
        job = self.session.cache_job()
        if job is not None:
            self.set_timer(CACHE_DELAY, lambda: self.run_worker(
                self._cache_worker(job), group="cache", exit_on_error=False))

    async def _cache_worker(self, job: Callable[[], bool]) -> None:
        try:
            await off_thread(job)
        except PlannerError as err:  # the saved text did not read back as checked
            self.say(err.render(), "error")
        except Exception as exc:  # a cache is an aid: never an error for the user
            self.log.error("keeping the fleet in the cache failed", exc)

    def plan_in_background(self) -> None:
        """Plan the current text and date in a worker; the views redraw when it is done."""
        self.planning = True
        self._show_titles()
        self.run_worker(self._plan_worker(), group="plan", exclusive=True, exit_on_error=False)

    async def _plan_worker(self) -> None:
        session, previous = self.session, self._rows
        job = session.plan_job()

        def work() -> tuple[Any, TableRows]:
            with gc_paused():
                planned = job()
                return planned, prepare_rows(planned.records, planned.columns(), previous)

        try:
            planned, rows = await off_thread(work)
        except Exception as exc:  # the error view says why (a bug, unless a PlannerError)
            self.log.error("planning failed", exc)
            self.planning = False
            session.error = exc if isinstance(exc, PlannerError) else \
                internal_error("planning", exc)
            while len(self.screen_stack) > 2:
                await self.pop_screen()
            await self.switch_screen(ErrorScreen())
            return
        self.planning = False
        if session.store(planned):
            self._rows = rows
        self.refresh_views()  # the plan is at hand now, unless the text moved on meanwhile

    async def reload_now(self) -> None:
        """Read the file again, in a worker (the file actions' "reload" comes here)."""
        self.read_in_background(again=True)

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


def create_app(path: str | Path, as_of: dt.date, in_use: bool | None = None,
               **kwargs: Any) -> BeltplanApp:
    """The app on the fleet file at `path`, planning as of `as_of` (never today's date here).

    `in_use`: mark the file as open in this window (`planner.inuse`). By default yes, except
    in a headless app (`run_test`): test runs neither leave nor meet markers beside the shared
    example files; the marker's own tests pass `in_use=True`.
    """
    return BeltplanApp(Session(path, as_of), in_use=in_use, **kwargs)
