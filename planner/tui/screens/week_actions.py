"""The week view's keys: move a job, undo a move, the plan's dates, sections, export.

Mixed into `WeekScreen`; bound there from the action table (`target="screen"`). Every move goes
through `WeekState` to `planner.week.move`; a refusal is shown under the board, in the
engine's words, until the highlight moves.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING

from planner.errors import PlannerError
from planner.tui import week_forms
from planner.tui.screens.form import FormScreen
from planner.tui.week_state import EXPORTS
from planner.week import WeekPlan
from planner.week_export import day_text

if TYPE_CHECKING:
    from planner.tui.screens.week import WeekScreen


class WeekViewActions:
    """Mixed into `WeekScreen`."""

    def _highlighted(self: WeekScreen) -> str | None:
        vid = self.board.current_id
        if vid is None:
            self.beltapp.say("No job is highlighted.", "warning")
        return vid

    def _after_move(self: WeekScreen, week: WeekPlan, vehicle_id: str) -> None:
        self.show_section("board")
        self.show_plan(week)
        self.board.select_vehicle(vehicle_id)
        booking = week.booking(vehicle_id)
        where = (f"bay {booking.bay} from {day_text(booking.first_day)}" if booking
                 else "not placed")
        self.beltapp.say(f"Moved {vehicle_id}: {where} (this session only, not saved).")

    def _try_move(self: WeekScreen, how: Callable[[str], WeekPlan]) -> None:
        vid = self._highlighted()
        if vid is None:
            return
        try:
            week = how(vid)
        except PlannerError as err:
            # Said under the board until the highlight moves (a notification would cover
            # it); the bell marks the refusal.
            self.beltapp.last_message = err.render()
            self.refused(err)
            self.app.bell()
            return
        self._after_move(week, vid)

    # -- the actions ------------------------------------------------------------------------
    def action_week_close(self: WeekScreen) -> None:
        self.dismiss()

    def action_week_detail(self: WeekScreen) -> None:
        vid = self._highlighted()
        if vid is not None:
            self.beltapp.open_detail(vid)

    def action_week_move(self: WeekScreen) -> None:
        vid = self._highlighted()
        if vid is None:
            return

        def done(week: WeekPlan | None) -> None:
            if week is not None:
                self._after_move(week, vid)

        self.app.push_screen(FormScreen(week_forms.move_form(self.state, vid)), done)

    def action_week_earlier(self: WeekScreen) -> None:
        self._try_move(lambda vid: self.state.shift(vid, -1))

    def action_week_later(self: WeekScreen) -> None:
        self._try_move(lambda vid: self.state.shift(vid, +1))

    def action_week_bay(self: WeekScreen) -> None:
        self._try_move(self.state.other_bay)

    def action_week_undo(self: WeekScreen) -> None:
        what = self.state.undo()
        if what is None:
            self.beltapp.say("No move to undo.")
            return
        self.show_plan(self.state.plan())
        self.beltapp.say(f"Move undone: {what}.")

    def action_week_dates(self: WeekScreen) -> None:
        def done(week: WeekPlan | None) -> None:
            if week is None:
                return
            self.show_plan(week)
            self.beltapp.say(f"Planned {day_text(week.start)} to {day_text(week.end)}: "
                             f"{len(week.bookings)} booked, {len(week.unplaced)} not placed.")

        self.app.push_screen(FormScreen(week_forms.dates_form(self.state)), done)

    def action_week_export(self: WeekScreen) -> None:
        def done(result: tuple[str, Path] | None) -> None:
            if result is not None:
                kind, path = result
                self.beltapp.say(f"Exported {EXPORTS[kind].what} to {path}")

        self.app.push_screen(FormScreen(week_forms.export_form(self.state)), done)

    def action_week_board(self: WeekScreen) -> None:
        self.show_section("board")

    def action_week_parts(self: WeekScreen) -> None:
        self.show_section("parts")

    def action_week_calls(self: WeekScreen) -> None:
        self.show_section("calls")

    def action_week_totals(self: WeekScreen) -> None:
        self.show_section("totals")
