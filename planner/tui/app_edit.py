"""The app's editing actions: readings, belt jobs, vehicles, engine profiles, undo."""

from __future__ import annotations

from types import ModuleType
from typing import TYPE_CHECKING, Any

from rich.text import Text

from planner.errors import PlannerError
from planner.plan import VehiclePlan
from planner.tui.look import field_text, literal
from planner.tui.screens.dialogs import AskDialog, PickDialog
from planner.tui.screens.form import FormScreen

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp

NEW_PROFILE = "\x00new"


def _specs() -> ModuleType:
    """The forms (and the editor they use), imported on first use: opening a fleet, the
    commonest thing, does not wait for them."""
    from planner.tui import form_specs

    return form_specs


NEW_VEHICLE = "\0new"  # `apply_edit`: the vehicle an edit added (no id holds a control character)


class EditActions:
    """Mixed into `BeltplanApp`."""

    def _plan(self: BeltplanApp) -> VehiclePlan | None:
        vid = self.current_vehicle_id()
        plan = self.session.plan_of(vid) if vid is not None else None
        if plan is None:
            self.say("No vehicle is highlighted.", "warning")
        return plan

    def apply_edit(self: BeltplanApp, text: str | None, what: str,
                   vehicle_id: str | None = None) -> None:
        """Make an edit's text current (it was checked by the form) and redraw; say what new
        warning it brought to `vehicle_id` (NEW_VEHICLE: the vehicle it added), if any: a belt
        job recorded twice, a fact missing."""
        if text is None:
            return
        before = self.session.fleet
        try:
            self.session.apply(text, what)
        except PlannerError as err:  # the form checks first; this is a last line of defence
            self.say(err.render(), "error")
            return
        self.refresh_views()
        if vehicle_id == NEW_VEHICLE and before is not None and self.session.fleet is not None:
            old = {v.id for v in before.vehicles}
            vehicle_id = next((v.id for v in self.session.fleet.vehicles if v.id not in old),
                              None)
        found = self.session.new_warnings(before, vehicle_id) if vehicle_id else []
        if found:
            self.say(f"{what} (not saved yet). Warning: {found[0].message}; fix: "
                     f"{found[0].hint}", "warning")
        else:
            self.say(f"{what} (not saved yet).")

    def _form(self: BeltplanApp, spec: Any, what: str, vehicle_id: str | None = None) -> None:
        self.push_screen(FormScreen(spec), lambda text: self.apply_edit(text, what, vehicle_id))

    def action_add_reading(self: BeltplanApp) -> None:
        plan = self._plan()
        if plan is not None:
            self._form(_specs().reading_form(self.session, plan),
                       f"Reading added to {plan.id}")

    def action_record_job(self: BeltplanApp) -> None:
        plan = self._plan()
        if plan is not None:
            self._form(_specs().job_form(self.session, plan), f"Belt job recorded on {plan.id}",
                       plan.id)

    def action_add_vehicle(self: BeltplanApp) -> None:
        self._form(_specs().vehicle_form(self.session, None), "Vehicle added", NEW_VEHICLE)

    def action_edit_vehicle(self: BeltplanApp) -> None:
        plan = self._plan()
        if plan is not None:
            self._form(_specs().vehicle_form(self.session, plan.vehicle),
                       f"Vehicle {plan.id} changed")

    def action_delete_vehicle(self: BeltplanApp) -> None:
        plan = self._plan()
        if plan is None:
            return
        question = Text("Delete ")
        question.append(literal(plan.id, "bold"))
        if plan.vehicle.label:
            question.append(" ")
            question.append(field_text(plan.vehicle.label))
        n_r, n_j = len(plan.vehicle.readings), len(plan.vehicle.belt_jobs)
        question.append(f" with its {n_r} readings and {n_j} belt jobs?\n"
                        "u undoes it until you quit; the file changes only when you save.")

        def done(answer: str | None) -> None:
            if answer != "delete":
                return
            try:
                from planner.edit import delete_vehicle

                text = delete_vehicle(self.session.text, plan.id)
            except PlannerError as err:
                self.say(err.render(), "error")
                return
            if getattr(self.screen, "vehicle_id", None) == plan.id:
                self.pop_screen()
            self.apply_edit(text, f"Vehicle {plan.id} deleted")

        self.push_screen(AskDialog("Delete vehicle", question,
                                   [("keep", "Keep it", "default"),
                                    ("delete", "Delete", "error")]), done)

    def action_engine_profile(self: BeltplanApp) -> None:
        fleet = self.session.fleet
        if fleet is None:
            return
        vid = self.current_vehicle_id()
        plan = self.session.plan_of(vid) if vid else None
        options: list[tuple[str, Text | str]] = [(NEW_PROFILE, "+ add a new profile")]
        for pid, profile in fleet.engines.items():
            words = literal(pid, "bold")
            if profile.description:
                words.append("  ")
                words.append(field_text(profile.description))
            options.append((pid, words))

        def done(choice: str | None) -> None:
            if choice is None:
                return
            pid = None if choice == NEW_PROFILE else choice
            what = f"Engine profile {pid} changed" if pid else "Engine profile added"
            self._form(_specs().engine_form(self.session, pid), what)

        self.push_screen(PickDialog("Engine profiles", "Choose one to edit, or add one.",
                                    options, current=plan.vehicle.engine if plan else None),
                         done)

    def action_undo(self: BeltplanApp) -> None:
        what = self.session.undo()
        if what is None:
            self.say("Nothing to undo.")
            return
        self.refresh_views()
        self.say(f"Undone: {what}.")
