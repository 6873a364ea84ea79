"""The workshop week the UI shows: planned from the session's fleet and date, moved by the user.

No Textual here. The plan is `planner.week.plan_week`'s and every move goes through
`planner.week.move`, so the engine's rules (bay hours, parts lead time, unavailable days,
working days) are the only rules; a refusal is the engine's PlannerError, passed on as it is.
The plan lives for this session only: nothing here writes the fleet file. Exports use the
writers of `beltplan week --format …` (`planner.week_export`) and `fileio.write_output`.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from pathlib import Path

from planner import week_export
from planner.errors import PlannerError
from planner.fileio import write_output
from planner.fleet import Fleet
from planner.tui.session import Session
from planner.week import DEFAULT_INCLUDE, WeekPlan, move, plan_week


@dataclass(frozen=True)
class ExportKind:
    """One thing the week view can export."""

    ident: str
    ending: str  # added to the default file name's stem
    words: str  # in the export form
    what: str  # in "Exported … to FILE"


EXPORT_KINDS: tuple[ExportKind, ...] = (
    ExportKind("jobs", "-jobs.csv", "CSV: jobs by day and bay, then those not placed",
               "the jobs as CSV"),
    ExportKind("parts", "-parts.csv", "CSV: the parts order list", "the parts order as CSV"),
    ExportKind("calls", "-calls.csv", "CSV: the customers to call", "the call list as CSV"),
    ExportKind("json", ".json", "JSON: the whole plan", "the plan as JSON"),
    ExportKind("markdown", ".md", "Markdown: the week, the lists, a job sheet per job",
               "the week and job sheets as Markdown"),
    ExportKind("ics", ".ics", "iCalendar: one event per job and day",
               "the calendar (iCalendar)"),
)
EXPORTS: dict[str, ExportKind] = {k.ident: k for k in EXPORT_KINDS}


@dataclass(frozen=True)
class Moved:
    """One move made in this session, with the plan before it (for undo)."""

    before: WeekPlan
    what: str


class WeekState:
    """The week plan being looked at and moved in this session."""

    def __init__(self, session: Session) -> None:
        self.session = session
        self.start: dt.date | None = None  # None: the first working day after the plan date
        self.weeks = 1
        self.include = DEFAULT_INCLUDE
        self.moves: list[Moved] = []
        self.dropped = 0  # moves lost when the fleet or the date changed (the view says so)
        self._week: WeekPlan | None = None
        self._basis: tuple[Fleet, dt.date] | None = None

    # -- the plan -----------------------------------------------------------------------------
    @property
    def stale(self) -> bool:
        """True when the fleet text or the planning date changed since the plan was made."""
        fleet = self.session.fleet
        return (self._week is None or self._basis is None or self._basis[0] is not fleet
                or self._basis[1] != self.session.as_of)

    def plan(self) -> WeekPlan:
        """The current plan; planned again (moves dropped, `dropped` set) when it is stale."""
        if self.stale:
            if self.start is not None and self.start < self.session.as_of:
                self.start = None  # the planning date moved past it: back to the default
            self.dropped = len(self.moves) if self._week is not None else 0
            self._build(self.start, self.weeks, self.include)
        assert self._week is not None
        return self._week

    def _build(self, start: dt.date | None, weeks: int, include: str) -> WeekPlan:
        fleet = self.session.fleet
        if fleet is None:
            raise PlannerError("no fleet loaded", "Fix the fleet file and reload it.")
        week = plan_week(fleet, self.session.as_of, start, weeks, include)
        self._week, self._basis = week, (fleet, self.session.as_of)
        self.start, self.weeks, self.include = start, weeks, include
        self.moves = []
        return week

    def replan(self, start: dt.date | None, weeks: int, include: str) -> WeekPlan:
        """Plan again from scratch with these dates (moves made so far are dropped)."""
        self.dropped = 0
        return self._build(start, weeks, include)

    # -- moving -------------------------------------------------------------------------------
    def move(self, vehicle_id: str, day: dt.date, bay: int) -> WeekPlan:
        """Move a job to start in `bay` on `day` (`planner.week.move`: PlannerError if refused)."""
        before = self.plan()
        after = move(before, vehicle_id, day, bay)
        self.moves.append(Moved(before, f"{vehicle_id} to bay {bay} on {day}"))
        self._week = after
        return after

    def working_days(self) -> list[dt.date]:
        return [d.day for d in self.plan().days if d.working]

    def shift(self, vehicle_id: str, step: int) -> WeekPlan:
        """Move a booked job `step` working days later (negative: earlier), same bay."""
        week = self.plan()
        booking = week.booking(vehicle_id)
        if booking is None:
            raise PlannerError(f"{vehicle_id} is not booked in this plan",
                               "Choose a day and a bay for it with the move form.")
        days = self.working_days()
        k = days.index(booking.first_day) + step
        if k < 0:
            raise PlannerError(f"cannot move {vehicle_id} earlier: the plan starts on "
                               f"{week.start}", "Change the start date to plan earlier days.")
        if k >= len(days):
            raise PlannerError(f"cannot move {vehicle_id} later: the plan ends on {week.end}",
                               "Plan more weeks to move it further.")
        return self.move(vehicle_id, days[k], booking.bay)

    def other_bay(self, vehicle_id: str) -> WeekPlan:
        """Move a booked job to the next bay (after the last: the first), same day."""
        week = self.plan()
        booking = week.booking(vehicle_id)
        if booking is None:
            raise PlannerError(f"{vehicle_id} is not booked in this plan",
                               "Choose a day and a bay for it with the move form.")
        bays = week.calendar.bays
        if bays < 2:
            raise PlannerError(f"cannot move {vehicle_id} to another bay: the workshop has "
                               "one bay", "Set bays in the fleet file's [workshop] table.")
        return self.move(vehicle_id, booking.first_day, booking.bay % bays + 1)

    def undo(self) -> str | None:
        """Take back the last move; returns what it was, or None when there was none."""
        if not self.moves or self.stale:
            return None
        last = self.moves.pop()
        self._week = last.before
        return last.what

    # -- exporting ----------------------------------------------------------------------------
    def export_text(self, kind: str, stamp: dt.datetime) -> str:
        """The text `beltplan week --format …` writes for the plan as it stands now."""
        week = self.plan()
        if kind in ("jobs", "parts", "calls"):
            return week_export.to_csv_text(week, kind)
        if kind == "json":
            return week_export.to_json_text(week)
        if kind == "markdown":
            return week_export.to_markdown_text(week)
        if kind == "ics":
            if not week.bookings:
                raise PlannerError(f"no jobs booked between {week.start} and {week.end}: no "
                                   "calendar written", "An iCalendar file needs at least one "
                                   "event.")
            return week_export.to_ics(week, stamp)
        raise PlannerError(f"unknown export {kind!r}", "choose from: " + ", ".join(EXPORTS))

    def default_path(self, kind: str) -> Path:
        """`<fleet file stem>-week-<start>-jobs.csv` and so on, beside the fleet file."""
        path = self.session.path
        stem = f"{path.stem}-week-{self.plan().start.isoformat()}"
        return path.with_name(stem + EXPORTS[kind].ending)

    def export(self, kind: str, target: str | Path, stamp: dt.datetime) -> Path:
        """Write `kind` to `target` atomically (relative: beside the fleet file), never over
        the fleet file; returns where it went."""
        path = Path(target).expanduser()
        if not path.is_absolute():
            path = self.session.path.parent / path
        if path.resolve() == self.session.path.resolve():
            raise PlannerError(f"refusing to write over the fleet file {path}",
                               "Choose another file name for the export.")
        write_output(path, self.export_text(kind, stamp).encode("utf-8"))
        return path
