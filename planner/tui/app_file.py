"""The app's file actions: save, reload, export, quit — none of them loses an edit."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

from rich.text import Text

from planner.errors import PlannerError
from planner.fileio import backup_path
from planner.tui.screens.dialogs import AskDialog
from planner.tui.screens.form import FormScreen

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp


class FileActions:
    """Mixed into `BeltplanApp`."""

    def _changes(self: BeltplanApp) -> str:
        """`1 change` / `3 changes` / `changes` (after undoing past a save)."""
        n = len(self.session.history)
        return f"{n} change{'s' if n != 1 else ''}" if n else "changes"

    def save_now(self: BeltplanApp, then_quit: bool = False) -> bool:
        """Save; on refusal explain and offer the ways out. True when saved."""
        session = self.session
        if self.read_only:  # another window has the file (see app_inuse)
            self.refuse_read_only(then_quit)
            return False
        try:
            session.save()
        except PlannerError as err:
            if session.changed_on_disk():
                self._refused(then_quit)
            else:
                self.say(err.render(), "error")
            return False
        self.refresh_views()
        self.keep_in_cache()  # the saved text's fleet: the next open need not parse it
        self.say(f"Saved {session.path} (the previous version is in "
                 f"{backup_path(session.path).name}).")
        if then_quit:
            self.exit()
        return True

    def _refused(self: BeltplanApp, then_quit: bool) -> None:
        session = self.session
        question = Text(f"{session.path} changed on disk since it was read (another program "
                        "or person saved it). Nothing was saved and nothing is lost: your "
                        f"{self._changes()} "
                        f"{'stays' if len(session.history) == 1 else 'stay'} here until you "
                        "choose.\n\n", style="")
        question.append("Keep a copy writes your version beside it as "
                        f"{session.path.stem}.mine{session.path.suffix} (numbered -2, -3, … when "
                        "that name is taken: an earlier copy is never replaced), to compare. "
                        "Reload reads the file on disk and drops your changes.")

        def done(answer: str | None) -> None:
            if answer == "copy":
                self.keep_copy()
            elif answer == "reload":
                self.call_later(self.reload_now)

        self.last_message = f"Not saved: {session.path} changed on disk."  # the dialog says so
        self.push_screen(AskDialog("File changed on disk", question,
                                   [("keep", "Keep editing", "primary"),
                                    ("copy", "Keep a copy", "default"),
                                    ("reload", "Reload (drop mine)", "warning")]), done)

    def keep_copy(self: BeltplanApp) -> None:
        """Write the current text beside the fleet file (which stays untouched)."""
        try:
            target = self.session.save_copy()
        except PlannerError as err:
            self.say(err.render(), "error")
            return
        self.say(f"Your version is in {target}; the fleet file was not touched.")

    def action_save(self: BeltplanApp) -> None:
        if not self.session.dirty:
            self.say("Nothing to save: the file is as on disk.")
            return
        self.save_now()

    def action_reload(self: BeltplanApp) -> None:
        if not self.session.dirty:
            self.call_later(self.reload_now)
            return

        def done(answer: str | None) -> None:
            if answer == "reload":
                self.call_later(self.reload_now)

        self.push_screen(AskDialog("Reload from disk", "Reading the file again drops your "
                                   f"{self._changes()} not saved yet.",
                                   [("keep", "Keep my changes", "primary"),
                                    ("reload", "Reload", "warning")]), done)

    def action_export(self: BeltplanApp) -> None:
        main = self.main_screen()
        if main is None:
            return
        records = list(main.table.listed)

        def done(path: Path | None) -> None:
            if path is not None:
                n = len(records)
                self.say(f"Exported {n} vehicle{'s' if n != 1 else ''} to {path}")

        from planner.tui.form_specs import export_form  # on first use: not needed to open

        self.push_screen(FormScreen(export_form(self.session, records)), done)

    async def action_quit(self: BeltplanApp) -> None:
        if not self.session.dirty:
            self.exit()
            return

        def done(answer: str | None) -> None:
            if answer == "save":
                self.save_now(then_quit=True)
            elif answer == "discard":
                self.exit()

        self.push_screen(AskDialog("Quit", f"Your {self._changes()} to {self.session.path} "
                                   "are not saved yet." if len(self.session.history) != 1 else
                                   f"Your change to {self.session.path} is not saved yet.",
                                   [("cancel", "Keep working", "primary"),
                                    ("save", "Save and quit", "success"),
                                    ("discard", "Quit without saving", "error")]), done)
