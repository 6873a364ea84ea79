"""The app's part of the week plan: the state kept for the session, and opening the view.

The week state lives on the app for the whole session, so closing the week view and opening
it again keeps the moves (until the fleet text or the planning date changes). The view's own
keys (move, dates, export, …) are the week view's actions (`screens/week_actions.py`).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from planner.errors import PlannerError
from planner.tui.background import internal_error

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp
    from planner.tui.week_state import WeekState


class WeekActions:
    """Mixed into `BeltplanApp`."""

    def week_state(self: BeltplanApp) -> WeekState:
        """The session's week plan (a new one if the file was opened again)."""
        from planner.tui.week_state import WeekState  # on first use: not needed to open a fleet

        state: WeekState | None = getattr(self, "_week_state", None)
        if state is None or state.session is not self.session:
            state = WeekState(self.session)
            self._week_state = state  # type: ignore[attr-defined]
        return state

    def action_week(self: BeltplanApp) -> None:
        from planner.tui.screens.week import WeekScreen

        try:
            self.week_state().plan()
        except PlannerError as err:
            self.say(err.render(), "error")
            return
        except Exception as exc:  # a bug in the week plan: told, the UI and its edits stay
            self.log.error("building the week plan failed", exc)
            self.say(internal_error("building the week plan", exc).render(), "error")
            return
        self.push_screen(WeekScreen())
