"""The in-use marker in the UI: claimed once the file is read, a question when another window
has the file, read-only on request, released on exit and when the session moves to another file.

The marker only warns. What keeps edits safe is the save's own check (a file changed on disk
since it was read is never overwritten), in read-only windows and in any other.
"""

from __future__ import annotations

import secrets
from collections.abc import Callable
from typing import TYPE_CHECKING

from rich.text import Text

from planner import inuse
from planner.inuse import Claim, Holder, Unmarked
from planner.safetext import shown
from planner.tui import clock
from planner.tui.background import off_thread
from planner.tui.screens.dialogs import AskDialog

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp
    from planner.tui.session import Reading, Session

Marked = Claim | Holder | Unmarked | None  # None: no marker wanted (or the file did not read)


class InUseDialog(AskDialog):
    """The question when another window has the file: one sentence saying who has it and since
    when, then the choices one under another, each saying what happens to this window's edits.
    Escape means the safe answer (look only)."""

    PANEL_CLASSES = "panel -narrow -in-use"
    ESCAPE_WORDS = "esc: look only"
    ANSWERS_IN_A_COLUMN = True


class InUseActions:
    """Mixed into `BeltplanApp`: this window's claim on its fleet file's in-use marker."""

    def init_in_use(self: BeltplanApp, mark: bool | None) -> None:
        """`mark`: claim markers at all; None: yes, except in a headless app (tests)."""
        self._mark_in_use = mark
        self._in_use_token = secrets.token_hex(8)  # this window's, in every record it writes
        self._claims: list[Claim] = []  # every claim made, also by a read that was cancelled
        self.claim: Claim | None = None
        self.holder: Holder | None = None  # who has the file, while this window is read-only
        self.read_only = False
        self._in_use_settled = False  # the first successful read of the session has decided
        self._told_unmarked = False

    # -- the session's file -------------------------------------------------------------------
    @property
    def session(self) -> Session:
        return self._session

    @session.setter
    def session(self: BeltplanApp, session: Session) -> None:
        """Switching to another session gives up the marker of the one before."""
        if getattr(self, "_session", None) is not None and session is not self._session:
            self.release_in_use()
        self._session = session

    def release_in_use(self: BeltplanApp) -> None:
        """Remove the markers this window holds (only if still ours) and forget the question."""
        for made in self._claims:
            inuse.release(made)
        self._claims.clear()
        self.claim, self.holder, self.read_only = None, None, False
        self._in_use_settled = self._told_unmarked = False

    def _marking(self: BeltplanApp) -> bool:
        return self._mark_in_use if self._mark_in_use is not None else not self.is_headless

    def _me(self: BeltplanApp) -> inuse.Record:
        return inuse.new_record(clock.utc_now(), token=self._in_use_token)

    # -- claiming (the read worker runs the job in its thread) --------------------------------
    def in_use_job(self: BeltplanApp, session: Session) -> Callable[[Reading], Marked]:
        """The claim to make off the UI thread once `session`'s file has read well."""
        if not self._marking():
            return lambda reading: None
        me, claims = self._me(), self._claims

        def job(reading: Reading) -> Marked:
            if reading.loaded is None:
                return None
            try:
                made = inuse.claim(session.path, me)
            except Exception as exc:  # a bug: the file still opens, without a marker
                return Unmarked(inuse.marker_path(session.path),
                                f"the marker failed ({type(exc).__name__}: {exc})")
            if isinstance(made, Claim):
                claims.append(made)  # at once: the worker may be cancelled before it returns
            return made

        return job

    def settle_in_use(self: BeltplanApp, session: Session, marked: Marked) -> None:
        """On the UI thread, after a read: keep the claim, or say who has the file."""
        if session is not self.session or marked is None:
            return
        first, self._in_use_settled = not self._in_use_settled, True
        if isinstance(marked, Claim):
            self.claim = marked
            if self.read_only:
                self.read_only, self.holder = False, None
                self.say(f"{session.path} is no longer open in another window: this one can "
                         "save now.")
        elif isinstance(marked, Unmarked):
            if not self._told_unmarked:
                self._told_unmarked = True
                self.say(f"No in-use marker beside {session.path}: {marked.reason}. Other "
                         "beltplan windows are not warned that this one has it open; saving "
                         "still refuses a file that changed on disk since it was read.",
                         "warning")
        elif self.read_only:
            self.holder = marked
        elif first:
            self.read_only, self.holder = True, marked  # until the user chooses otherwise
            self._ask_in_use(marked)
        else:
            self.say(f"{session.path} is now also open in {marked.who()}, since "
                     f"{marked.since(clock.utc_now())}. Whichever window saves second will "
                     "be refused and asked to reload.", "warning")
        self._show_titles()

    def _ask_in_use(self: BeltplanApp, held: Holder) -> None:
        path = self.session.path
        rec = held.record
        question = Text(f"{held.user} has had {shown(str(path))} open in another beltplan "
                        f"window since {held.since(clock.utc_now())} (on {held.host}, process "
                        f"{rec.pid}).",
                        style="")
        if not held.same_host:
            question.append(" That window is on another computer, so this one cannot check "
                            "whether it is still running.")
        question.append("\n\nWhat should happen to the changes you make in this window?")

        def done(answer: str | None) -> None:
            if answer == "anyway":
                self.take_over_in_background()
            elif answer == "quit":
                self.exit()
            else:  # look only, esc or a click beside the panel: the safe choice
                self.say(f"Opened {path} read-only: {held.who()} has it open.")

        self.last_message = f"{path} is open in {held.who()}."  # the dialog says so
        self.push_screen(InUseDialog("Already open elsewhere", question, [
            ("read-only", "Look only: my changes stay here, the file is not written", "primary"),
            ("anyway", "Edit here too: whichever window saves second is told the file changed",
             "warning"),
            ("quit", "Leave it to them: close beltplan now", "default"),
        ]), done)

    def take_over_in_background(self: BeltplanApp, then_save: bool = False,
                                then_quit: bool = False) -> None:
        """Make the marker this window's, in a worker; then save when `then_save` (and quit
        after the save when `then_quit`)."""
        self.run_worker(self._take_over_worker(then_save, then_quit), group="in-use",
                        exclusive=True, exit_on_error=False)

    async def _take_over_worker(self: BeltplanApp, then_save: bool,
                                then_quit: bool = False) -> None:
        session, me, claims = self.session, self._me(), self._claims

        def work() -> Claim | Unmarked:
            made = inuse.take_over(session.path, me)
            if isinstance(made, Claim):
                claims.append(made)
            return made

        try:
            made = await off_thread(work)
        except Exception as exc:  # a bug: say so, and stay read-only
            self.log.error("taking over the marker failed", exc)
            self.say(f"The in-use marker could not be taken over ({type(exc).__name__}: "
                     f"{exc}); this window stays read-only.", "error")
            return
        if session is not self.session:
            return
        held = self.holder
        self.read_only, self.holder = False, None
        if isinstance(made, Claim):
            self.claim = made
            other = f"If {held.who()} saves after you" if held else "If another window saves"
            self.say(f"{session.path} is open for editing here. {other}, that save is "
                     "refused until it reloads (and the same the other way round).")
        else:
            self.say(f"{session.path} is open for editing here, without a marker: "
                     f"{made.reason}.", "warning")
        self._show_titles()
        if then_save:
            self.save_now(then_quit=then_quit)

    # -- saving while read-only ---------------------------------------------------------------
    def refuse_read_only(self: BeltplanApp, then_quit: bool = False) -> None:
        """The save of a read-only window: nothing written; say why and the ways out (a save
        asked for on the way out quits once it is done)."""
        session, held = self.session, self.holder
        n = len(session.history)
        whom = f"{held.who()} has it open (since {held.since(clock.utc_now())})" if held \
            else "another window has it open"
        question = Text(f"This window opened {session.path} read-only: {whom}. The file was "
                        f"not touched; your {self._changes()} "
                        f"{'stays' if n == 1 else 'stay'} here.\n\n", style="")
        question.append("Keep a copy writes your version beside it as "
                        f"{session.path.stem}.mine{session.path.suffix}. To save to the file "
                        "itself, Save anyway: this window becomes the one marked as editing, "
                        "and the save still refuses if the file changed on disk meanwhile. "
                        "Or quit, and open it again once the other window is closed.")

        def done(answer: str | None) -> None:
            if answer == "copy":
                self.keep_copy()
            elif answer == "anyway":
                self.take_over_in_background(then_save=True, then_quit=then_quit)

        self.last_message = f"Not saved: {session.path} is open read-only in this window."
        self.push_screen(AskDialog("Read-only", question,
                                   [("keep", "Keep editing", "primary"),
                                    ("copy", "Keep a copy", "default"),
                                    ("anyway", "Save anyway", "warning")]), done)
