"""The week view's forms: move a job, the plan's dates, export. No Textual here.

Each `submit` does the work through `WeekState` (so `planner.week`'s rules decide) and returns
the result; a refusal is a PlannerError, which the form shows in place and stays open.
"""

from __future__ import annotations

import datetime as dt
from typing import Any

from rich.text import Text

from planner.errors import PlannerError, Problem
from planner.tui import clock
from planner.tui.forms import FormField, FormSpec
from planner.tui.look import DIM, field_text, literal
from planner.tui.week_state import EXPORT_KINDS, WeekState
from planner.week import INCLUDE, MAX_WEEKS, WeekPlan, default_start
from planner.week_export import day_text, hours_text

F = FormField
INCLUDE_WORDS = {"near-limit": "near-limit: overdue, no-record and near the limit",
                 "all-due": "all-due: overdue and no-record only"}


def _day_choice(week: WeekPlan, day: dt.date) -> str:
    """`Tue 2026-12-08 · free: bay 1 0.5 h, bay 2 8 h`."""
    plan = next(d for d in week.days if d.day == day)
    free = ", ".join(f"bay {b.bay} {hours_text(b.left)}" for b in plan.bays)
    return f"{day_text(day)} · free: {free}"


def move_form(state: WeekState, vehicle_id: str) -> FormSpec:
    """Choose the day and bay a job starts in; `week.move` accepts it or says why not."""
    week = state.plan()
    job = week.job(vehicle_id)
    assert job is not None
    booking = week.booking(vehicle_id)
    days = state.working_days()
    intro = literal(vehicle_id, "bold")
    if job.label:
        intro.append(" ")
        intro.append(field_text(job.label))
    hours = "no labour hours set" if job.hours is None else hours_text(job.hours)
    if booking is not None:
        intro.append(f"\n{hours}, now in bay {booking.bay} from {day_text(booking.first_day)}",
                     style=DIM)
    else:
        intro.append(f"\n{hours}, not placed", style=DIM)
    intro.append("\nThe planner's rules apply: bay hours, parts arrival, the days the vehicle "
                 "is away. Other jobs stay where they are.", style=DIM)
    first = booking.first_day if booking is not None else (days[0] if days else None)

    def submit(v: dict[str, Any]) -> WeekPlan:
        return state.move(vehicle_id, dt.date.fromisoformat(v["day"]), int(v["bay"]))

    return FormSpec(f"Move the job on {vehicle_id}", [
        F("day", "first day", "choice", first.isoformat() if first else None, required=True,
          choices=tuple((d.isoformat(), _day_choice(week, d)) for d in days)),
        F("bay", "bay", "choice", str(booking.bay if booking is not None else 1),
          required=True, choices=tuple((str(b), str(b))
                                       for b in range(1, week.calendar.bays + 1))),
    ], submit, intro=intro, apply_words="Move", subject=vehicle_id)


def dates_form(state: WeekState) -> FormSpec:
    """The plan's start day, number of weeks and which vehicles to book; plans again."""
    week = state.plan()
    as_of = state.session.as_of
    first = default_start(week.calendar, as_of)

    def submit(v: dict[str, Any]) -> WeekPlan:
        problems = []
        weeks = v["weeks"]
        if not float(weeks).is_integer() or not 1 <= weeks <= MAX_WEEKS:
            problems.append(Problem(f"{weeks:g} weeks: give a whole number from 1 to "
                                    f"{MAX_WEEKS}", ("weeks",)))
        if v["start"] < as_of:
            problems.append(Problem(f"the plan cannot start before the planning date ({as_of})",
                                    ("start",), hint="change the planning date in the list (d)"))
        if problems:
            raise PlannerError("not planned", problems=problems)
        start = None if v["start"] == first else v["start"]
        return state.replan(start, int(weeks), v["include"])

    quick = [
        ("next working day", {"start": first.isoformat()}),
        ("a week later", {"start": (week.start + dt.timedelta(days=7)).isoformat()}),
        ("one week", {"weeks": "1"}),
        ("two weeks", {"weeks": "2"}),
    ]
    intro = Text(f"Planning date {as_of} (change it in the list). Planning again drops the "
                 "moves made so far.", style=DIM)
    return FormSpec("Week plan dates", [
        F("start", "first day", "date", week.start, required=True,
          help="the plan covers whole weeks of calendar days from here"),
        F("weeks", "weeks", "number", str(week.weeks), required=True),
        F("include", "book", "choice", week.include, required=True,
          choices=tuple((k, INCLUDE_WORDS.get(k, k)) for k in INCLUDE)),
    ], submit, intro=intro, quick=quick, apply_words="Plan")


def export_form(state: WeekState) -> FormSpec:
    """Export the week as it stands (moves included) with `beltplan week`'s writers."""
    def submit(v: dict[str, Any]) -> tuple[str, Any]:
        # The clock is read here, at the edge: an iCalendar DTSTAMP is when the file was made.
        return v["kind"], state.export(v["kind"], v["file"], clock.utc_now())

    def changed(name: str, value: Any, form: Any) -> None:
        if name == "kind" and value:
            form.set_raw("file", state.default_path(value).name)

    n = len(state.plan().bookings)
    intro = Text(f"The week as shown, {n} booked job{'s' if n != 1 else ''} and every move "
                 "made; the same writers as beltplan week --format.", style=DIM)
    return FormSpec("Export the week", [
        F("kind", "what", "choice", "jobs", required=True,
          choices=tuple((k.ident, k.words) for k in EXPORT_KINDS)),
        F("file", "file", "text", state.default_path("jobs").name, required=True,
          help="replaced if it exists; relative names go beside the fleet file"),
    ], submit, intro=intro, changed=changed, apply_words="Export")

