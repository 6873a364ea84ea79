"""The workshop week plan: which belt jobs go in which bay on which day, and what that needs.

Pure: no file I/O, no clock (`as_of` and `start` are parameters), no UI. Placement itself is
`planner.schedule`'s; this module chooses the candidates, turns them into job requests, and adds
what a workshop manager reads off the plan: hours per day, the parts to order and by when, the
cost, the risk taken away and who to call.

Rules of this module [trade, no source unless named]:

- Candidates are vehicles with a belt or a wet belt whose status is in the `include` set:
  `near-limit` (the default) books everything due now *and* what falls due soon: overdue,
  no-record and near-limit; `all-due` books only what is already due: overdue and no-record
  (a belt with no record is due now: replace on acquisition). Chains and gears are never
  candidates: they are replaced on condition, not by the calendar.
- Jobs that are due now (overdue, or no belt record) are **required**: the totals give their
  count and cost apart and never set a risk figure against them. Only the near-limit jobs, which
  could in principle wait until their due date, carry "expected loss removed".
- A missing-fact belt (drive type, an interval or the severe-service interval not known) is a
  candidate under both, but never booked: when it is due is not known. It is listed unplaced
  with the reason `MISSING_FACT` and the fact to find, and so reaches the call list. (Once
  overdue on a limit that is known, its status is overdue and it is booked as usual.)
- Priority is the risk model's triage order (`planner.risk`): overdue and no-record first, by
  expected loss.
- Each job takes the vehicle's `labour_hours` (vehicle over engine profile). A candidate without
  them is not dropped: it is listed unplaced with the reason `NO_LABOUR_HOURS`.
- Every belt job is taken to need parts, even when the file lists none (a belt job without a kit
  does not happen): such a job shows "(parts not listed)" in the order list rather than nothing.
- Parts are ordered on `as_of` and arrive `parts_lead_days` calendar days later (the scheduler's
  rule). The **order-by date** of a part is the latest day the workshop can still order it: the
  job's first day minus the lead time, moved back to a working day of the workshop (orders are
  placed from the workshop), never before `as_of`. With `kits_in_stock` there is nothing to
  order: the line says "from stock" and has no order-by date.
- The window is `weeks` x 7 calendar days from `start`; `start` defaults to the first working day
  after `as_of`.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import date, timedelta

from planner.errors import PlannerError
from planner.fleet import Contact, Fleet, Workshop
from planner.plan import Consequence, IntervalBasis, Limit, Status, VehiclePlan
from planner.risk import (
    FleetAssessment,
    Risk,
    RiskModel,
    action_words,
    assess_fleet_plan,
    is_required,
)
from planner.schedule import (
    PARTS_LATE,
    TOO_LONG,
    UNAVAILABLE,
    JobRequest,
    ScheduleError,
    SchedulePlan,
    WorkshopCalendar,
    move_job,
    schedule_jobs,
)

INCLUDE: dict[str, tuple[Status, ...]] = {
    "near-limit": (Status.OVERDUE, Status.NO_RECORD, Status.MISSING_FACT, Status.NEAR_LIMIT),
    "all-due": (Status.OVERDUE, Status.NO_RECORD, Status.MISSING_FACT),
}
DEFAULT_INCLUDE = "near-limit"
MAX_WEEKS = 52
NO_LABOUR_HOURS = "no labour_hours set"
MISSING_FACT = "a fact needed to plan it is missing"
PARTS_NOT_LISTED = "(parts not listed)"

STATUS_WORDS = {
    Status.OVERDUE: "overdue",
    Status.NO_RECORD: "no belt record",
    Status.MISSING_FACT: "a fact is missing",
    Status.NEAR_LIMIT: "near its limit",
    Status.OK: "ok",
    Status.ON_CONDITION: "on condition",
}


@dataclass(frozen=True)
class WeekJob:
    """One candidate: a vehicle whose belt is due, and what its job takes."""

    vehicle_id: str
    label: str
    engine: str  # the profile's description and id, or "own fields"
    drive: str  # "belt" or "wet-belt"
    consequence: Consequence
    status: Status
    hours: float | None  # labour hours; None when the file gives none
    parts: tuple[str, ...]
    parts_cost: float | None
    due_date: date | None
    reason: str  # status in words and the limit that decides
    interval: str  # the interval in force, in words
    expected_loss: float | None
    priority: int  # 0 = first in the triage order
    contact: Contact | None
    unavailable: tuple[tuple[date, date, str], ...]  # (first, last, why)
    plan: VehiclePlan
    risk: Risk | None

    @property
    def required(self) -> bool:
        """Due now (overdue or no belt record): required, not a cost decision."""
        return is_required(self.status)

    @property
    def action(self) -> str:
        """What to do, led by the action: 'replace now', 'find fact now' or 'book soon'."""
        return action_words(self.plan) or "book soon"

    @property
    def status_words(self) -> str:
        """Short status for a call: 'overdue by age', 'near its limit by distance'."""
        words = STATUS_WORDS[self.status]
        limit = self.plan.deciding_limit
        if limit is None or self.status in (Status.NO_RECORD, Status.MISSING_FACT):
            return words
        return f"{words} by {'age' if limit is Limit.TIME else 'distance'}"


@dataclass(frozen=True)
class Segment:
    """A job's hours in one bay on one day."""

    job: WeekJob
    day: date
    bay: int
    hours: float
    start_hour: float  # hours after opening
    day_index: int  # 1 for the job's first day
    day_count: int  # how many days the job spans


@dataclass(frozen=True)
class Booking:
    """A placed job: its bay, its days and the hours on each."""

    job: WeekJob
    bay: int
    days: tuple[date, ...]
    hours_by_day: tuple[float, ...]
    start_hour: float  # on the first day; later days start at opening
    parts_ready: date | None  # None: from stock

    @property
    def first_day(self) -> date:
        return self.days[0]

    @property
    def last_day(self) -> date:
        return self.days[-1]

    def segments(self) -> tuple[Segment, ...]:
        n = len(self.days)
        return tuple(
            Segment(self.job, d, self.bay, h, self.start_hour if k == 0 else 0.0, k + 1, n)
            for k, (d, h) in enumerate(zip(self.days, self.hours_by_day, strict=True))
        )


@dataclass(frozen=True)
class BaySlot:
    """One bay on one working day."""

    bay: int
    capacity: float
    booked: float
    segments: tuple[Segment, ...]  # clock order

    @property
    def left(self) -> float:
        return max(self.capacity - self.booked, 0.0)


@dataclass(frozen=True)
class DayPlan:
    """One calendar day of the window; `bays` is empty on a day the workshop does not work."""

    day: date
    working: bool
    closed: bool  # a listed closed date (holiday), as opposed to a day off every week
    bays: tuple[BaySlot, ...]

    @property
    def capacity(self) -> float:
        return sum(b.capacity for b in self.bays)

    @property
    def booked(self) -> float:
        return sum(b.booked for b in self.bays)

    @property
    def left(self) -> float:
        return sum(b.left for b in self.bays)


@dataclass(frozen=True)
class UnplacedJob:
    """A candidate the week has no place for, and why."""

    job: WeekJob
    reason: str  # schedule.NO_CAPACITY, UNAVAILABLE, PARTS_LATE, TOO_LONG, or NO_LABOUR_HOURS
    detail: str  # the particulars, in words


@dataclass(frozen=True)
class PartsLine:
    """One part to order (or take from stock) for the week's jobs."""

    part: str
    quantity: int
    order_by: date | None  # None when the kits are in stock
    vehicles: tuple[str, ...]  # in booking order
    in_stock: bool


@dataclass(frozen=True)
class CallEntry:
    """A customer to call: contact details, what is due and the booking (if any)."""

    vehicle_id: str
    label: str
    name: str
    phone: str
    email: str
    due_date: date | None
    status: Status
    status_words: str  # 'overdue by age', 'near its limit by distance', 'no belt record'
    reason: str  # the long form: status and the deciding limit with its figures
    booked_day: date | None
    bay: int | None
    start_hour: float | None
    not_booked: str  # why not, when not booked
    action: str = ""  # 'replace now' (required) or 'book soon'

    @property
    def booked(self) -> bool:
        return self.booked_day is not None


@dataclass(frozen=True)
class WeekPlan:
    """The week plan and everything derived from it. Rebuilt whole after every move."""

    fleet_name: str
    as_of: date
    start: date
    weeks: int
    include: str
    unit: str
    currency: str
    labour_rate: float
    workshop: Workshop
    calendar: WorkshopCalendar
    jobs: tuple[WeekJob, ...]  # every candidate, triage order
    requests: tuple[JobRequest, ...]  # those with hours, as given to the scheduler
    schedule: SchedulePlan
    days: tuple[DayPlan, ...]  # every calendar day of the window
    bookings: tuple[Booking, ...]  # first day, bay, clock order
    unplaced: tuple[UnplacedJob, ...]  # triage order
    parts_order: tuple[PartsLine, ...]  # order-by date, then part
    call_list: tuple[CallEntry, ...]  # booked first (by day and time), then the unbooked
    labour_hours: float
    labour_cost: float
    parts_cost: float
    parts_cost_unknown: tuple[str, ...]  # booked jobs without a parts_cost
    expected_loss_removed: float  # near-limit jobs only: required jobs carry no risk figure
    loss_unknown: tuple[str, ...]  # booked near-limit jobs whose expected loss is unknown
    risk_model: RiskModel
    risk_assumptions: str
    notes: tuple[str, ...]
    required_jobs: tuple[str, ...]  # booked jobs due now (overdue, no record), booking order
    required_hours: float
    required_cost: float  # labour and parts of the required jobs
    near_limit_jobs: tuple[str, ...]  # the other booked jobs
    near_limit_cost: float
    fleet: Fleet = field(repr=False, compare=False)  # kept so a move can rebuild the plan

    @property
    def end(self) -> date:
        """Last calendar day of the window."""
        return self.start + timedelta(days=7 * self.weeks - 1)

    @property
    def total_cost(self) -> float:
        return self.labour_cost + self.parts_cost

    @property
    def capacity(self) -> float:
        return sum(d.capacity for d in self.days)

    def job(self, vehicle_id: str) -> WeekJob | None:
        return next((j for j in self.jobs if j.vehicle_id == vehicle_id), None)

    def booking(self, vehicle_id: str) -> Booking | None:
        return next((b for b in self.bookings if b.job.vehicle_id == vehicle_id), None)


# -- candidates --------------------------------------------------------------------------------


def candidates(assessment: FleetAssessment, include: str = DEFAULT_INCLUDE) -> list[VehiclePlan]:
    """Belts and wet belts whose status is in `include`, in the assessment's (triage) order."""
    if include not in INCLUDE:
        raise PlannerError(f"unknown --include {include!r}",
                           f"choose from: {', '.join(INCLUDE)}")
    wanted = INCLUDE[include]
    return [p for p in assessment.plans if p.spec.has_interval and p.status in wanted]


def interval_words(p: VehiclePlan, unit: str) -> str:
    """The interval in force: distance and age, whichever first, and on which basis."""
    s = p.spec
    parts = []
    if s.interval_distance is not None:
        parts.append(f"{s.interval_distance:,.0f} {unit}")
    if s.interval_months is not None:
        parts.append(f"{s.interval_months} months")
    text = " or ".join(parts) + (", whichever comes first" if len(parts) == 2 else "")
    text = text or "no interval given"
    if s.interval_basis is IntervalBasis.SEVERE:
        text += " (severe-service interval)"
    elif s.interval_basis is IntervalBasis.SEVERE_UNKNOWN:
        text += " (normal interval: severe duty, but no severe-service interval known)"
    elif s.interval_basis is IntervalBasis.SEVERE_PARTIAL:
        text += " (severe duty: a severe-service figure for one limit only)"
    return text


def reason_words(p: VehiclePlan) -> str:
    """Status in words and the deciding limit (the plan's first note says which and when)."""
    first = p.notes[0] if p.notes else ""
    if p.status in (Status.NO_RECORD, Status.MISSING_FACT):
        return first or STATUS_WORDS[p.status]
    return f"{STATUS_WORDS[p.status]}: {first}" if first else STATUS_WORDS[p.status]


def make_job(p: VehiclePlan, risk: Risk | None, priority: int, unit: str,
             fleet: Fleet) -> WeekJob:
    """A candidate's job as the week plan shows it."""
    v = p.vehicle
    profile = fleet.engines.get(v.engine) if v.engine else None
    engine = v.engine or "own fields (no engine profile)"
    if profile is not None and profile.description:
        engine = f"{profile.description} ({v.engine})"
    return WeekJob(
        vehicle_id=v.id,
        label=v.label,
        engine=engine,
        drive=p.spec.drive_word,
        consequence=p.consequence,
        status=p.status,
        hours=p.spec.labour_hours,
        parts=p.spec.parts,
        parts_cost=p.spec.parts_cost,
        due_date=p.due_date,
        reason=reason_words(p),
        interval=interval_words(p, unit),
        expected_loss=None if risk is None else risk.expected_loss,
        priority=priority,
        contact=v.contact,
        unavailable=tuple((r.start, r.end, r.reason) for r in v.unavailable),
        plan=p,
        risk=risk,
    )


def request_of(job: WeekJob) -> JobRequest:
    """The scheduler's view of a job (only for jobs with hours)."""
    assert job.hours is not None
    return JobRequest(
        key=job.vehicle_id,
        hours=job.hours,
        priority=job.priority,
        unavailable=tuple((a, b) for a, b, _ in job.unavailable),
        needs_parts=True,  # see the module notes: a belt job always has a kit
    )


def default_start(calendar: WorkshopCalendar, as_of: date) -> date:
    """The first working day after `as_of` (the day after, if the workshop never works)."""
    for n in range(1, 367):
        day = as_of + timedelta(days=n)
        if calendar.is_working(day):
            return day
    return as_of + timedelta(days=1)


def order_by_date(first_day: date, calendar: WorkshopCalendar, as_of: date) -> date | None:
    """Latest day to order parts so they arrive by `first_day`; None when kits are in stock."""
    if calendar.kits_in_stock:
        return None
    day = first_day - timedelta(days=calendar.parts_lead_days)
    while day > as_of and not calendar.is_working(day):
        day -= timedelta(days=1)
    return max(day, as_of)


# -- the plan ----------------------------------------------------------------------------------



@dataclass(frozen=True)
class _Context:
    """What a week plan is built from, before and after a move."""

    fleet: Fleet
    as_of: date
    start: date
    weeks: int
    include: str
    calendar: WorkshopCalendar
    jobs: tuple[WeekJob, ...]
    requests: tuple[JobRequest, ...]
    model: RiskModel

    @property
    def end(self) -> date:
        return self.start + timedelta(days=7 * self.weeks - 1)

    def request(self, key: str) -> JobRequest:
        return next(r for r in self.requests if r.key == key)


def plan_week(fleet: Fleet, as_of: date, start: date | None = None, weeks: int = 1,
              include: str = DEFAULT_INCLUDE) -> WeekPlan:
    """Plan the workshop's week(s): candidates in triage order, booked by `planner.schedule`.

    Raises PlannerError for a bad `weeks` or `include`, or a `start` before `as_of`.
    """
    if not 1 <= weeks <= MAX_WEEKS:
        raise PlannerError(f"--weeks must be between 1 and {MAX_WEEKS}, not {weeks}")
    if include not in INCLUDE:
        raise PlannerError(f"unknown --include {include!r}", f"choose from: {', '.join(INCLUDE)}")
    calendar = WorkshopCalendar.from_workshop(fleet.workshop)
    if start is None:
        start = default_start(calendar, as_of)
    elif start < as_of:
        raise PlannerError(f"the week cannot start ({start}) before the planning date ({as_of})",
                           "Give --start on or after --as-of.")
    assessment = assess_fleet_plan(fleet, as_of, "triage")
    jobs = tuple(make_job(p, assessment.risks.get(p.id), n, fleet.unit, fleet)
                 for n, p in enumerate(candidates(assessment, include)))
    requests = tuple(request_of(j) for j in jobs if _bookable(j))
    ctx = _Context(fleet, as_of, start, weeks, include, calendar, jobs, requests,
                   assessment.model)
    return _assemble(ctx, schedule_jobs(requests, calendar, start, 7 * weeks, as_of))


def _bookable(job: WeekJob) -> bool:
    """A job the scheduler may book: hours known, and not waiting for a missing fact (its
    interval in force is not known, so neither is when it is due; it is listed, not booked)."""
    return job.hours is not None and job.status is not Status.MISSING_FACT


def move(week: WeekPlan, vehicle_id: str, day: date, bay: int) -> WeekPlan:
    """Move a job (booked or unplaced) to start in `bay` on `day`; every other job stays.

    The scheduler's rules apply (`planner.schedule.move_job`); a refusal raises PlannerError
    saying why. Returns a new plan with every total, the parts list and the call list redone.
    """
    job = week.job(vehicle_id)
    if job is None:
        raise PlannerError(f"cannot move {vehicle_id}: it is not a job in this week plan")
    if job.status is Status.MISSING_FACT:
        raise PlannerError(f"cannot book {vehicle_id}: {MISSING_FACT}",
                           job.plan.notes[0] if job.plan.notes else "")
    if job.hours is None:
        raise PlannerError(f"cannot move {vehicle_id}: {NO_LABOUR_HOURS}",
                           "Set labour_hours on its engine profile or on the vehicle.")
    ctx = _Context(week.fleet, week.as_of, week.start, week.weeks, week.include, week.calendar,
                   week.jobs, week.requests, week.risk_model)
    try:
        schedule = move_job(week.schedule, ctx.requests, ctx.calendar, vehicle_id, day, bay,
                            ctx.as_of)
    except ScheduleError as exc:
        raise PlannerError(str(exc)) from None
    return _assemble(ctx, schedule)


def _assemble(ctx: _Context, schedule: SchedulePlan) -> WeekPlan:
    cal, fleet = ctx.calendar, ctx.fleet
    by_id = {j.vehicle_id: j for j in ctx.jobs}
    bookings = tuple(
        Booking(by_id[p.key], p.bay, p.days, p.hours_by_day, p.start_hour,
                cal.parts_ready(ctx.request(p.key), ctx.as_of))
        for p in schedule.placements
    )
    unplaced = _unplaced(ctx, schedule)
    hours = sum(sum(b.hours_by_day) for b in bookings)
    rate = fleet.fleet.labour_rate
    no_cost = tuple(b.job.vehicle_id for b in bookings if b.job.parts_cost is None)
    required = [b for b in bookings if b.job.required]
    near = [b for b in bookings if not b.job.required]
    loss_unknown = tuple(b.job.vehicle_id for b in near if b.job.expected_loss is None)
    return WeekPlan(
        fleet_name=fleet.fleet.name,
        as_of=ctx.as_of,
        start=ctx.start,
        weeks=ctx.weeks,
        include=ctx.include,
        unit=fleet.unit,
        currency=fleet.fleet.currency,
        labour_rate=rate,
        workshop=fleet.workshop,
        calendar=cal,
        jobs=ctx.jobs,
        requests=ctx.requests,
        schedule=schedule,
        days=_days(ctx, schedule, bookings),
        bookings=bookings,
        unplaced=unplaced,
        parts_order=_parts_order(ctx, bookings),
        call_list=_call_list(bookings, unplaced),
        labour_hours=hours,
        labour_cost=hours * rate,
        parts_cost=sum(b.job.parts_cost or 0.0 for b in bookings),
        parts_cost_unknown=no_cost,
        expected_loss_removed=sum(b.job.expected_loss or 0.0 for b in near),
        loss_unknown=loss_unknown,
        risk_model=ctx.model,
        risk_assumptions=ctx.model.describe(),
        notes=_notes(ctx, bookings, no_cost, loss_unknown),
        required_jobs=tuple(b.job.vehicle_id for b in required),
        required_hours=sum(sum(b.hours_by_day) for b in required),
        required_cost=sum(_cost(b, rate) for b in required),
        near_limit_jobs=tuple(b.job.vehicle_id for b in near),
        near_limit_cost=sum(_cost(b, rate) for b in near),
        fleet=fleet,
    )


def _cost(b: Booking, rate: float) -> float:
    """A booked job's labour (its hours x the rate) and parts."""
    return sum(b.hours_by_day) * rate + (b.job.parts_cost or 0.0)


def _days(ctx: _Context, schedule: SchedulePlan,
          bookings: Sequence[Booking]) -> tuple[DayPlan, ...]:
    segments: dict[tuple[date, int], list[Segment]] = {}
    for b in bookings:
        for s in b.segments():
            segments.setdefault((s.day, s.bay), []).append(s)
    working = set(schedule.working_days)
    out = []
    for n in range(7 * ctx.weeks):
        day = ctx.start + timedelta(days=n)
        bays: tuple[BaySlot, ...] = ()
        if day in working:
            bays = tuple(
                BaySlot(bay, schedule.capacity[(day, bay)], schedule.used[(day, bay)],
                        tuple(sorted(segments.get((day, bay), []), key=lambda s: s.start_hour)))
                for bay in range(1, ctx.calendar.bays + 1)
            )
        out.append(DayPlan(day, day in working, day in ctx.calendar.closed, bays))
    return tuple(out)


def _unplaced(ctx: _Context, schedule: SchedulePlan) -> tuple[UnplacedJob, ...]:
    """Every candidate without a booking, in triage order, with the reason and particulars."""
    reasons = {u.key: u.reason for u in schedule.unplaced}
    wdays = schedule.working_days
    out = []
    for job in ctx.jobs:
        if job.status is Status.MISSING_FACT:
            out.append(UnplacedJob(job, MISSING_FACT, job.plan.notes[0].removeprefix(
                "missing fact: ")))
            continue
        if job.hours is None:
            out.append(UnplacedJob(job, NO_LABOUR_HOURS,
                                   "set labour_hours on its engine profile or on the vehicle"))
            continue
        reason = reasons.get(job.vehicle_id)
        if reason is None:
            continue
        if reason == UNAVAILABLE:
            away = [f"{a} to {b}" + (f" ({why})" if why else "")
                    for a, b, why in job.unavailable
                    if wdays and a <= wdays[-1] and wdays[0] <= b]
            detail = "away " + "; ".join(away) if away else "away on the days it would need"
        elif reason == PARTS_LATE:
            ready = ctx.calendar.parts_ready(ctx.request(job.vehicle_id), ctx.as_of)
            detail = (f"parts ordered on {ctx.as_of} arrive on {ready}, too late for a day "
                      "the vehicle can come in this window")
        elif reason == TOO_LONG:
            detail = (f"{job.hours:g} h needed at {ctx.calendar.hours_per_day:g} h a bay day: "
                      f"more than the {len(wdays)} working days between {ctx.start} and "
                      f"{ctx.end}")
        else:
            detail = (f"{job.hours:g} h needed; no bay has room for it between {ctx.start} "
                      f"and {ctx.end}")
        out.append(UnplacedJob(job, reason, detail))
    return tuple(out)


def _parts_order(ctx: _Context, bookings: Sequence[Booking]) -> tuple[PartsLine, ...]:
    """One line per part and order-by date; a vehicle's list counts once per job."""
    lines: dict[tuple[str, date | None], tuple[int, list[str]]] = {}
    for b in sorted(bookings, key=lambda b: (b.first_day, b.bay, b.start_hour)):
        when = order_by_date(b.first_day, ctx.calendar, ctx.as_of)
        for part, qty in Counter(b.job.parts or (PARTS_NOT_LISTED,)).items():
            count, who = lines.get((part, when), (0, []))
            lines[(part, when)] = (count + qty, [*who, b.job.vehicle_id])
    rows = [PartsLine(part, qty, when, tuple(who), ctx.calendar.kits_in_stock)
            for (part, when), (qty, who) in lines.items()]
    return tuple(sorted(rows, key=lambda r: (r.order_by or date.min, r.part)))


def _call_list(bookings: Sequence[Booking],
               unplaced: Sequence[UnplacedJob]) -> tuple[CallEntry, ...]:
    """Customers with a contact: booked ones by day and time, then the unbooked, triage order."""
    out = []
    for b in bookings:
        if b.job.contact is not None:
            out.append(_call(b.job, b.job.contact, b.first_day, b.bay, b.start_hour, ""))
    for u in unplaced:
        if u.job.contact is not None:
            out.append(_call(u.job, u.job.contact, None, None, None, f"{u.reason}: {u.detail}"))
    return tuple(out)


def _call(job: WeekJob, c: Contact, day: date | None, bay: int | None, start: float | None,
          why: str) -> CallEntry:
    return CallEntry(job.vehicle_id, job.label, c.name, c.phone, c.email, job.due_date,
                     job.status, job.status_words, job.reason, day, bay, start, why, job.action)


def _notes(ctx: _Context, bookings: Sequence[Booking], no_cost: Sequence[str],
           loss_unknown: Sequence[str]) -> tuple[str, ...]:
    notes = []
    lead = ctx.calendar.parts_lead_days
    if ctx.calendar.kits_in_stock:
        notes.append("kits in stock ([workshop] kits_in_stock = true): no parts wait; check the "
                     "shelf and reorder what the week uses")
    else:
        notes.append(f"parts ordered on {ctx.as_of} arrive {lead} calendar "
                     f"day{'s' if lead != 1 else ''} later, on "
                     f"{ctx.as_of + timedelta(days=lead)} ([workshop] parts_lead_days)")
    unlisted = [b.job.vehicle_id for b in bookings if not b.job.parts]
    if unlisted:
        notes.append(f"no parts listed for {', '.join(unlisted)}: identify the kit before "
                     "ordering")
    if no_cost:
        notes.append(f"no parts_cost for {', '.join(no_cost)}: the parts cost is understated")
    if ctx.fleet.fleet.labour_rate == 0:
        notes.append("no labour_rate in [fleet]: labour is costed at 0")
    if loss_unknown:
        notes.append(f"expected loss unknown for {', '.join(loss_unknown)} (no failure_cost): "
                     "the risk removed by the near-limit jobs is understated")
    return tuple(notes)
