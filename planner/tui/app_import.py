"""The app's readings import: a CSV export's odometer readings, reported, then applied."""

from __future__ import annotations

from typing import TYPE_CHECKING

from planner.tui.screens.form import FormScreen

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp
    from planner.tui.readings_import import StagedImport


class ImportActions:
    """Mixed into `BeltplanApp`."""

    def action_import_readings(self: BeltplanApp) -> None:
        # Imported on first use: the CSV reader is not needed to open the fleet.
        from planner.tui.readings_import import readings_form
        from planner.tui.screens.import_readings import ImportReport

        session = self.session
        if session.fleet is None:
            return

        def read(staged: StagedImport | None) -> None:
            if staged is not None:
                self.push_screen(ImportReport(staged, session.fleet.unit),
                                 lambda ok: apply(staged, ok))

        def apply(staged: StagedImport, ok: bool | None) -> None:
            r = staged.result
            if not ok:
                self.say(f"Nothing imported from {staged.path.name} ({len(r.added)} to add, "
                         f"{len(r.skipped)} skipped, {len(r.rejected)} rejected).")
            elif session.text != staged.base:
                self.say("The fleet changed since the file was read: import it again.",
                         "warning")
            else:
                self.apply_edit(r.text, staged.what)

        self.push_screen(FormScreen(readings_form(session)), read)
