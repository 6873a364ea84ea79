"""Workshop week plan: put belt jobs on bay-days, with parts lead time and unavailability.

Pure: no file I/O, no clock (the start date is a parameter), no UI. The rules are common practice
of workshop planning [trade, no source]:

- Jobs are taken in triage order (priority 0 first; equal priorities keep the input order).
- Each goes on the earliest working day, then the lowest-numbered bay, where it fits. A working
  day is a listed weekday, not closed, inside the window of `days` calendar days from `start`.
- Parts ordered on `order_date` arrive on `order_date + parts_lead_days` and the job may be done
  that same day. No wait when kits are in stock or the job needs no parts.
- A job longer than a bay day spans consecutive working days of ONE bay: `hours_per_day` on each
  day but the last, the remainder on the last. Every day but the last must be an empty bay-day
  (the car comes in at opening and stays); the last needs the remainder free. The car stays in
  over nights and closed days, so the vehicle must be available on every calendar day from the
  first day to the last.
- Clock layout of a bay-day: a job continuing from the day before runs first, from opening; jobs
  starting that day follow in booking order. `start_hour` is the hours booked before the job on
  its first day, so segments never overlap and a calendar event starts at opening + start_hour.
- A job that fits nowhere is never dropped: it is listed as unplaced with the most specific reason.
  A job needing more working days than the window has is unplaced at once (`TOO_LONG`), so a
  tiny bay day can never make the scheduler build or try millions of days.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace
from datetime import date, timedelta
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # the core takes any object with Workshop's fields; no import at run time
    from planner.fleet import Workshop

EPS = 1e-9  # float slack: sums like 0.1 + 0.2 are not exact
WEEKDAYS = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")

NO_CAPACITY = "no capacity in the window"
UNAVAILABLE = "vehicle unavailable in the window"
PARTS_LATE = "parts not in time"
TOO_LONG = "longer than the window's working days"

BayDay = tuple[date, int]
# No window reaches this many working days (the week plan's is a few weeks): a job needing more
# is unplaced before its day-by-day split is built.
MAX_SPAN_DAYS = 100_000


class ScheduleError(ValueError):
    """A request the rules refuse (bad input, or a move that does not fit); the message says why."""


@dataclass(frozen=True)
class JobRequest:
    """One belt job to book, independent of the fleet model."""

    key: str  # vehicle id
    hours: float  # labour hours (> 0)
    priority: int  # 0 = most urgent (position in the triage order)
    unavailable: tuple[tuple[date, date], ...] = ()  # inclusive ranges the vehicle can't come
    needs_parts: bool = True  # False when there is nothing to order

    def available(self, first: date, last: date) -> bool:
        """True when no unavailable range touches the days `first`..`last` (inclusive)."""
        return not any(s <= last and first <= e for s, e in self.unavailable)


@dataclass(frozen=True)
class WorkshopCalendar:
    """Bays, hours and days of the workshop, as the scheduler needs them."""

    bays: int
    hours_per_day: float
    weekdays: frozenset[int]  # 0 = Monday, as date.weekday()
    closed: frozenset[date] = frozenset()
    parts_lead_days: int = 0
    kits_in_stock: bool = False

    @classmethod
    def from_workshop(cls, ws: Workshop) -> WorkshopCalendar:
        """The calendar of a fleet file's [workshop] table."""
        return cls(
            bays=ws.bays,
            hours_per_day=ws.hours_per_day,
            weekdays=frozenset(WEEKDAYS.index(w) for w in ws.weekdays),
            closed=frozenset(ws.closed),
            parts_lead_days=ws.parts_lead_days,
            kits_in_stock=ws.kits_in_stock,
        )

    def is_working(self, day: date) -> bool:
        return day.weekday() in self.weekdays and day not in self.closed

    def working_days(self, start: date, days: int) -> tuple[date, ...]:
        """Working days among the `days` calendar days from `start`."""
        window = (start + timedelta(n) for n in range(max(days, 0)))
        return tuple(d for d in window if self.is_working(d))

    def parts_ready(self, job: JobRequest, order_date: date) -> date | None:
        """First day the job's parts are on hand; None when there is nothing to wait for."""
        if self.kits_in_stock or not job.needs_parts:
            return None
        return order_date + timedelta(self.parts_lead_days)


@dataclass(frozen=True)
class Placement:
    """A booked job: one bay, its working days and the hours on each."""

    key: str
    bay: int  # from 1
    days: tuple[date, ...]
    hours_by_day: tuple[float, ...]
    start_hour: float  # hours booked in the bay before this job on its first day


@dataclass(frozen=True)
class Unplaced:
    key: str
    reason: str  # NO_CAPACITY, UNAVAILABLE, PARTS_LATE or TOO_LONG


@dataclass(frozen=True)
class SchedulePlan:
    """The week plan. Placements are in day, bay, start order; unplaced in triage order."""

    placements: tuple[Placement, ...]
    unplaced: tuple[Unplaced, ...]
    working_days: tuple[date, ...]
    capacity: dict[BayDay, float]  # every working (day, bay) -> hours_per_day
    used: dict[BayDay, float]  # same keys -> hours booked

    def hours_left(self, day: date, bay: int) -> float:
        """Hours still free in `bay` on `day` (0 on a day outside the plan)."""
        return max(self.capacity.get((day, bay), 0.0) - self.used.get((day, bay), 0.0), 0.0)

    def jobs_on(self, day: date) -> tuple[Placement, ...]:
        """Placements that occupy `day`, by bay then clock order (a continuing job first)."""
        on = [p for p in self.placements if day in p.days]
        return tuple(sorted(on, key=lambda p: (p.bay, p.days[0] == day, p.start_hour)))

    def placement(self, key: str) -> Placement | None:
        return next((p for p in self.placements if p.key == key), None)


def days_needed(hours: float, hours_per_day: float) -> float:
    """Working days a job spans (an int, or inf for more days than any window holds)."""
    ratio = hours / hours_per_day
    if not ratio < MAX_SPAN_DAYS:  # also inf and nan: a tiny bay day never builds a huge split
        return math.inf
    return max(1, math.ceil(ratio - EPS))  # 16 h of 8 h days is 2 days, not 3


def split_hours(hours: float, hours_per_day: float) -> tuple[float, ...]:
    """Hours on each day of a job: full bay days, the remainder last."""
    n = days_needed(hours, hours_per_day)
    if n == math.inf:
        raise ScheduleError(f"a job of {hours:g} h at {hours_per_day:g} h a day spans more than "
                            f"{MAX_SPAN_DAYS:,} days")
    n = int(n)
    return (hours_per_day,) * (n - 1) + (hours - hours_per_day * (n - 1),)


def _fmt(hours: float) -> str:
    return f"{0.0 if abs(hours) < EPS else hours:g}"


def _check(
    job: JobRequest,
    cal: WorkshopCalendar,
    wdays: Sequence[date],
    used: dict[BayDay, float],
    i: int,
    bay: int,
    ready: date | None,
) -> str | None:
    """Why `job` cannot start on working day `wdays[i]` in `bay`, or None when it fits."""
    day = wdays[i]
    if ready is not None and day < ready:
        return f"the parts arrive on {ready}, after {day}"
    n = days_needed(job.hours, cal.hours_per_day)
    if n > len(wdays) - i:
        return (f"the job needs {n:g} working days from {day}; the window ends first"
                if n < math.inf else f"the job needs more than {MAX_SPAN_DAYS:,} working days")
    split = split_hours(job.hours, cal.hours_per_day)
    span = wdays[i : i + len(split)]
    if len(span) < len(split):
        return f"the job needs {len(split)} working days from {day}; the window ends first"
    if not job.available(span[0], span[-1]):
        return f"vehicle {job.key} is unavailable between {span[0]} and {span[-1]}"
    for n, (d, h) in enumerate(zip(span, split, strict=True)):
        booked = used.get((d, bay), 0.0)
        if n < len(split) - 1 and booked > EPS:  # car stays in the bay: needs the whole day
            return f"bay {bay} is not free all day on {d}; a job over several days needs whole days"
        left = cal.hours_per_day - booked
        if h > left + EPS:
            return f"bay {bay} has {_fmt(left)} h left on {d}, the job needs {_fmt(h)} h"
    return None


def _unplaced_reason(
    job: JobRequest, cal: WorkshopCalendar, wdays: Sequence[date], ready: date | None
) -> str:
    """The most specific reason a job fits nowhere: parts, then the vehicle, else capacity."""
    n = days_needed(job.hours, cal.hours_per_day)
    if n > len(wdays):
        return TOO_LONG if wdays else NO_CAPACITY
    n = int(n)
    starts = range(len(wdays) - n + 1)
    if not starts:  # no working days, or fewer than the job needs
        return NO_CAPACITY
    parts_ok = {i for i in starts if ready is None or wdays[i] >= ready}
    vehicle_ok = {i for i in starts if job.available(wdays[i], wdays[i + n - 1])}
    if not parts_ok:  # parts arrive after the last possible start
        return PARTS_LATE
    if not vehicle_ok:
        return UNAVAILABLE
    if not parts_ok & vehicle_ok:  # the vehicle could come, but only before the parts do
        return PARTS_LATE
    return NO_CAPACITY


def _span(
    job: JobRequest, cal: WorkshopCalendar, wdays: Sequence[date], i: int, bay: int
) -> Placement:
    split = split_hours(job.hours, cal.hours_per_day)
    return Placement(job.key, bay, tuple(wdays[i : i + len(split)]), split, 0.0)


def _used(placements: Iterable[Placement]) -> dict[BayDay, float]:
    used: dict[BayDay, float] = {}
    for p in placements:
        for d, h in zip(p.days, p.hours_by_day, strict=True):
            used[(d, p.bay)] = used.get((d, p.bay), 0.0) + h
    return used


def _layout(booked: Sequence[Placement]) -> tuple[Placement, ...]:
    """Set start_hour: per bay-day a continuing job first, then first days in `booked` order."""
    filled: dict[BayDay, float] = {}
    for p in booked:
        for d, h in zip(p.days[1:], p.hours_by_day[1:], strict=True):
            filled[(d, p.bay)] = filled.get((d, p.bay), 0.0) + h
    out = []
    for p in booked:
        start = filled.get((p.days[0], p.bay), 0.0)
        filled[(p.days[0], p.bay)] = start + p.hours_by_day[0]
        out.append(replace(p, start_hour=start))
    return tuple(sorted(out, key=lambda p: (p.days[0], p.bay, p.start_hour)))


def _plan(
    booked: Sequence[Placement],
    unplaced: Sequence[Unplaced],
    wdays: tuple[date, ...],
    cal: WorkshopCalendar,
) -> SchedulePlan:
    capacity = {(d, b): cal.hours_per_day for d in wdays for b in range(1, cal.bays + 1)}
    used = dict.fromkeys(capacity, 0.0) | _used(booked)
    return SchedulePlan(_layout(booked), tuple(unplaced), wdays, capacity, used)


def _validate(jobs: Sequence[JobRequest], cal: WorkshopCalendar) -> None:
    if cal.bays < 1 or not cal.hours_per_day > 0:
        raise ScheduleError("the workshop needs at least one bay and some hours per day")
    seen: set[str] = set()
    for job in jobs:
        if job.key in seen:
            raise ScheduleError(f"job {job.key} is listed twice")
        if not (job.hours > 0 and math.isfinite(job.hours)):
            raise ScheduleError(f"job {job.key} needs a positive number of hours, not {job.hours}")
        seen.add(job.key)


def schedule_jobs(
    jobs: Sequence[JobRequest],
    calendar: WorkshopCalendar,
    start: date,
    days: int,
    order_date: date,
) -> SchedulePlan:
    """Book `jobs` greedily in triage order into the window of `days` days from `start`."""
    _validate(jobs, calendar)
    wdays = calendar.working_days(start, days)
    used: dict[BayDay, float] = {}
    booked: list[Placement] = []
    unplaced: list[Unplaced] = []
    bays = range(1, calendar.bays + 1)
    for job in sorted(jobs, key=lambda j: j.priority):  # stable: ties keep the input order
        ready = calendar.parts_ready(job, order_date)
        if days_needed(job.hours, calendar.hours_per_day) > len(wdays):
            unplaced.append(Unplaced(job.key, TOO_LONG if wdays else NO_CAPACITY))
            continue
        slot = next(
            (
                (i, b)
                for i in range(len(wdays))
                for b in bays
                if _check(job, calendar, wdays, used, i, b, ready) is None
            ),
            None,
        )
        if slot is None:
            unplaced.append(Unplaced(job.key, _unplaced_reason(job, calendar, wdays, ready)))
            continue
        p = _span(job, calendar, wdays, *slot)
        booked.append(p)
        for d, h in zip(p.days, p.hours_by_day, strict=True):
            used[(d, p.bay)] = used.get((d, p.bay), 0.0) + h
    return _plan(booked, unplaced, wdays, calendar)


def _not_working(cal: WorkshopCalendar, wdays: Sequence[date], day: date) -> str:
    if day in cal.closed:
        return f"the workshop is closed on {day}"
    if day.weekday() not in cal.weekdays:
        return f"{day} is a {WEEKDAYS[day.weekday()]}, not a working day"
    span = f" ({wdays[0]} to {wdays[-1]})" if wdays else ""
    return f"{day} is outside the plan's working days{span}"


def move_job(
    plan: SchedulePlan,
    jobs: Sequence[JobRequest],
    calendar: WorkshopCalendar,
    key: str,
    day: date,
    bay: int,
    order_date: date,
) -> SchedulePlan:
    """Move job `key` to start in `bay` on `day`, leaving every other job where it is.

    An unplaced job may be moved in too (it leaves the unplaced list). The same rules as
    `schedule_jobs` apply, counting the other jobs' hours only; a refusal raises ScheduleError
    saying why. Jobs sharing a bay-day are laid out again so the clock order has no gaps.
    """
    job = next((j for j in jobs if j.key == key), None)
    if job is None:
        raise ScheduleError(f"there is no job {key} to move")
    if plan.placement(key) is None and all(u.key != key for u in plan.unplaced):
        raise ScheduleError(f"job {key} is not in this plan")
    wdays = plan.working_days
    if day not in wdays:
        raise ScheduleError(f"cannot move {key} to {day}: {_not_working(calendar, wdays, day)}")
    if not 1 <= bay <= calendar.bays:
        raise ScheduleError(
            f"cannot move {key} to bay {bay}: the workshop has bays 1 to {calendar.bays}"
        )
    others = [p for p in plan.placements if p.key != key]
    ready = calendar.parts_ready(job, order_date)
    why = _check(job, calendar, wdays, _used(others), wdays.index(day), bay, ready)
    if why is not None:
        raise ScheduleError(f"cannot move {key} to bay {bay} on {day}: {why}")
    moved = _span(job, calendar, wdays, wdays.index(day), bay)
    unplaced = [u for u in plan.unplaced if u.key != key]
    return _plan([*others, moved], unplaced, wdays, calendar)
