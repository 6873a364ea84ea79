"""The planning rules: what is due, when, by which limit, and why. Each rule once, here.

Pure functions over the fleet model: `as_of` (the planning date) is always a parameter. The
outputs are plain frozen dataclasses that exports, the CLI and the UI only display.
"""

from __future__ import annotations

import calendar
import datetime as dt
import math
from dataclasses import dataclass, field
from enum import StrEnum

from planner.fleet import (
    SPEC_FIELDS,
    BeltHistory,
    Drive,
    Duty,
    Fleet,
    Fuel,
    Interference,
    Vehicle,
)

# Usage: every dated odometer value counts, its weight halving every RATE_HALF_LIFE_DAYS back
# from the latest one. Half a year follows a change of route or driver within a season, while a
# year-old value still weighs a quarter, so one year's summer and winter use average out. The
# weights hang on the records only, never on the planning date: a later planning date alone
# moves no due date.
RATE_HALF_LIFE_DAYS = 180
RATE_MIN_SPAN_DAYS = 14
STALE_READING_DAYS = 90
MAX_PROJECTION_DAYS = 36525  # a distance due date beyond a century after the fitting: none
# Distances are compared with a tolerance of a millionth of the interval distance (0.1 km in
# 100,000 km): far below an odometer's last digit, far above floating-point error, and the
# same share in miles and km, so a fleet converted between units gets the same statuses and
# dates.
DISTANCE_TOLERANCE = 1e-6


class Status(StrEnum):
    OVERDUE = "overdue"
    NO_RECORD = "no-record"
    # A fact needed to plan the belt is missing (drive type, an interval, the severe-service
    # interval on severe duty): never safe, needs attention now; overdue on the limits that are
    # known stays overdue.
    MISSING_FACT = "missing-fact"
    NEAR_LIMIT = "near-limit"
    OK = "ok"
    ON_CONDITION = "on-condition"

    @property
    def rank(self) -> int:
        return _STATUS_RANK[self]


_STATUS_RANK = {s: k for k, s in enumerate(Status)}


class Consequence(StrEnum):
    ENGINE_DAMAGE = "engine-damage"
    BREAKDOWN = "breakdown"
    UNVERIFIED = "unverified"

    @property
    def severe(self) -> bool:
        """Engine damage, or unknown and so planned as engine damage."""
        return self is not Consequence.BREAKDOWN


class Limit(StrEnum):
    DISTANCE = "distance"
    TIME = "time"


class IntervalBasis(StrEnum):
    NORMAL = "normal"
    SEVERE = "severe"
    SEVERE_UNKNOWN = "severe duty, no severe interval known"
    SEVERE_PARTIAL = "severe duty, a severe interval known for one limit only"


# What to find for each fact a plan can miss, by the fleet-file key that would hold it.
FACT_WORDS = {
    "drive": "the drive type (belt, wet-belt, chain or gear)",
    "interval_distance": "the maker's replacement interval by distance",
    "interval_months": "the maker's replacement interval by age",
    "severe_interval_distance": "the maker's severe-service interval by distance",
    "severe_interval_months": "the maker's severe-service interval by age",
}


@dataclass(frozen=True)
class Spec:
    """A vehicle's drive after its own fields have overridden its engine profile's."""

    fuel: Fuel | None
    drive: Drive | None  # None: not given (planned as a belt until someone finds out)
    interference: Interference
    interference_given: bool
    interval_distance: float | None
    interval_months: int | None
    interval_basis: IntervalBasis
    labour_hours: float | None
    parts: tuple[str, ...]
    parts_cost: float | None
    failure_cost: float | None
    # Keys of the facts needed to plan this belt that neither vehicle nor profile gives
    # (see FACT_WORDS), in the order to find them.
    missing: tuple[str, ...] = ()

    @property
    def has_interval(self) -> bool:
        """Replaced by interval: a belt or wet belt, or a drive not yet known (it may be one)."""
        return self.drive is None or self.drive.has_interval

    @property
    def drive_word(self) -> str:
        return self.drive.value if self.drive is not None else "unknown"


@dataclass(frozen=True)
class Install:
    """The belt now running: when and at what odometer it went in, and how we know."""

    date: dt.date
    odometer: float
    source: str  # "belt job (scheduled)", "factory belt", "assumed: as old as the vehicle"
    assumed: bool = False


@dataclass(frozen=True)
class Usage:
    """Distance per day and the estimated odometer on the planning date.

    The projection is a line through (`last_date`, `line_odometer`) rising `daily_distance` a
    day (`odometer_on`); it starts from the fitted line's value on the latest date, or from the
    latest value itself where that lies above the line."""

    daily_distance: float | None
    basis: str
    last_date: dt.date | None
    last_odometer: float | None
    est_odometer: float | None
    # Where the projection stands on `last_date`: the fitted line's value, or the latest value
    # where that is higher (and for the fleet default).
    line_odometer: float | None = None

    def odometer_on(self, day: dt.date) -> float | None:
        """The projected odometer on `day` (on or after `last_date`). On the latest value's own
        day it is that value: a projection never contradicts a reading."""
        if self.last_odometer is None or self.last_date is None:
            return None
        if self.daily_distance is None or self.line_odometer is None or day <= self.last_date:
            return self.last_odometer
        line = self.line_odometer + self.daily_distance * (day - self.last_date).days
        return max(line, self.last_odometer)


@dataclass(frozen=True)
class VehiclePlan:
    """Everything the planner concludes about one vehicle on one planning date."""

    vehicle: Vehicle
    spec: Spec
    status: Status
    consequence: Consequence
    install: Install | None
    usage: Usage
    due_odometer: float | None
    distance_remaining: float | None
    time_due_date: dt.date | None
    distance_due_date: dt.date | None
    due_date: dt.date | None
    days_remaining: int | None
    deciding_limit: Limit | None
    notes: tuple[str, ...]
    # Share of the interval used: the larger of distance and age fractions (1.0 = at the limit).
    life_used: float | None = None
    # The vehicle's id, kept here: sorting and indexing 100,000 plans by id then touches no
    # vehicle (scattered in memory, which made the plan grow faster than the fleet).
    id: str = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "id", self.vehicle.id)


def resolve_spec(vehicle: Vehicle, fleet: Fleet) -> Spec:
    """Merge the engine profile and the vehicle's own fields (the vehicle's win)."""
    profile = fleet.engines.get(vehicle.engine) if vehicle.engine else None
    merged = {}
    for name in SPEC_FIELDS:
        own = getattr(vehicle, name)
        merged[name] = own if own is not None else getattr(profile, name, None)
    drive = merged["drive"]
    distance, months = merged["interval_distance"], merged["interval_months"]
    basis = IntervalBasis.NORMAL
    missing: list[str] = []
    if drive is None:
        missing.append("drive")
    elif drive.has_interval:
        missing += [k for k in ("interval_distance", "interval_months") if merged[k] is None]
    if vehicle.duty is Duty.SEVERE and (drive is None or drive.has_interval):
        sev_d, sev_m = merged["severe_interval_distance"], merged["severe_interval_months"]
        if sev_d is None and sev_m is None:
            basis = IntervalBasis.SEVERE_UNKNOWN
        else:
            basis = IntervalBasis.SEVERE if None not in (sev_d, sev_m) else \
                IntervalBasis.SEVERE_PARTIAL
            distance = sev_d if sev_d is not None else distance
            months = sev_m if sev_m is not None else months
        missing += [k for k, v in (("severe_interval_distance", sev_d),
                                   ("severe_interval_months", sev_m)) if v is None]
    return Spec(
        fuel=merged["fuel"],
        drive=drive,
        interference=merged["interference"] or Interference.UNKNOWN,
        interference_given=merged["interference"] is not None,
        interval_distance=distance,
        interval_months=months,
        interval_basis=basis,
        labour_hours=merged["labour_hours"],
        parts=tuple(merged["parts"] or ()),
        parts_cost=merged["parts_cost"],
        failure_cost=merged["failure_cost"],
        missing=tuple(missing),
    )


def missing_fact_note(spec: Spec) -> str:
    """What is missing and what to find, in one note (the plan's first for MISSING_FACT)."""
    words = " and ".join(f"{FACT_WORDS[k]} ({k})" for k in spec.missing)
    note = f"missing fact: find {words}, and set {'them' if len(spec.missing) > 1 else 'it'} " \
        "on the engine profile or the vehicle"
    if spec.interval_basis is IntervalBasis.SEVERE_UNKNOWN and spec.interval_distance is not None \
            and spec.interval_months is not None:
        note += ("; until then the normal interval gives the latest the belt can be due: the "
                 "maker's severe-service interval is usually shorter")
    elif spec.interval_basis is IntervalBasis.SEVERE_PARTIAL:
        note += "; if the maker gives no separate severe figure for that limit, set it to the " \
            "normal one"
    return note


def consequence_of(spec: Spec) -> Consequence:
    return {
        Interference.INTERFERENCE: Consequence.ENGINE_DAMAGE,
        Interference.NON_INTERFERENCE: Consequence.BREAKDOWN,
        Interference.UNKNOWN: Consequence.UNVERIFIED,
    }[spec.interference]


def current_install(vehicle: Vehicle, as_of: dt.date) -> Install | None:
    """The latest belt job on or before `as_of`; else the factory belt if history is known."""
    jobs = [j for j in vehicle.belt_jobs if j.date <= as_of]
    if jobs:
        last = max(jobs, key=lambda j: (j.date, j.odometer))
        return Install(last.date, last.odometer, f"belt job of {last.date} ({last.reason.value})")
    if vehicle.belt_history is BeltHistory.KNOWN:
        return Install(vehicle.in_service, vehicle.in_service_odometer, "factory belt")
    return None


def assumed_install(vehicle: Vehicle) -> Install:
    """For unknown history: assume the belt is as old as the vehicle (field notes).

    The vehicle's whole odometer counts; its age runs from first registration when known, else
    from entering service (which understates the age of a car bought used).
    """
    start = vehicle.first_registered or vehicle.in_service
    return Install(start, 0.0, "assumed: as old as the vehicle (no belt record)", assumed=True)


def odometer_points(vehicle: Vehicle, as_of: dt.date) -> list[tuple[dt.date, float]]:
    """Dated odometer values known on `as_of`: in service, readings and belt jobs."""
    points = [(vehicle.in_service, vehicle.in_service_odometer)]
    points += [(r.date, r.odometer) for r in vehicle.readings if r.date <= as_of]
    points += [(j.date, j.odometer) for j in vehicle.belt_jobs if j.date <= as_of]
    return sorted(p for p in points if p[0] <= as_of)


def weighted_fit(points: list[tuple[dt.date, float]],
                 half_life: float = RATE_HALF_LIFE_DAYS) -> tuple[float, float] | None:
    """Weighted least-squares line of odometer on day: (distance per day, value on the latest
    date), or None when the values fix no slope. Slope and intercept are both free; a value
    `a` days before the latest weighs 2^(-a/half_life). `points` sorted by date."""
    # One pass (this runs for every vehicle), West's weighted update of the means and the
    # co-moments, offsets from the latest point: stable where the textbook sums cancel.
    last_day, last_odo = points[-1][0].toordinal(), points[-1][1]
    decay = math.log(2.0) / half_life  # 2^(x/h) = e^(x ln2/h)
    sw = mx = my = sxx = sxy = 0.0
    for day, odo in points:
        x = float(day.toordinal() - last_day)
        y = odo - last_odo
        w = math.exp(x * decay)
        sw += w
        dx = x - mx
        mx += dx * w / sw
        my += (y - my) * w / sw
        sxx += w * dx * (x - mx)
        sxy += w * dx * (y - my)
    if not sxx > 0.0:
        return None
    slope = sxy / sxx
    return slope, last_odo + my - slope * mx


def _spans(points: list[tuple[dt.date, float]]) -> bool:
    return len(points) >= 2 and (points[-1][0] - points[0][0]).days >= RATE_MIN_SPAN_DAYS


def usage(vehicle: Vehicle, fleet: Fleet, as_of: dt.date) -> Usage:
    """Usage rate and estimated odometer from the records alone (the planning date only picks
    which records exist yet): a recency-weighted fit of every value, else the fleet default."""
    points = odometer_points(vehicle, as_of)
    if not points:
        return Usage(None, "not yet in service on the planning date", None, None, None)
    last_date, last_odo = points[-1]
    fit = weighted_fit(points) if _spans(points) else None
    rate: float | None
    if fit is not None:
        (rate, line), basis = fit, (f"fit of {len(points)} values, weight halving every "
                                    f"{RATE_HALF_LIFE_DAYS} days back from {last_date}")
    elif fleet.fleet.default_daily_distance is not None:
        rate, line = fleet.fleet.default_daily_distance, last_odo
        basis = "fleet default (too few readings)"
    else:
        rate, line, basis = None, None, "no usage data"
    if rate is not None and rate < 0.0:  # odometers only go forward, so only by rounding
        rate = 0.0
    if line is not None:
        # Never below what was read: where the latest value lies above the fitted line (use has
        # picked up), the projection runs on from it at the fitted rate. Pausing until the line
        # caught up would date a limit later than the records allow.
        line = max(line, last_odo)
    use = Usage(rate, basis, last_date, last_odo, None, line)
    return Usage(rate, basis, last_date, last_odo, use.odometer_on(as_of), line)


def distance_tolerance(spec: Spec) -> float:
    """How close to a distance limit counts as at it (see DISTANCE_TOLERANCE)."""
    return (spec.interval_distance or 0.0) * DISTANCE_TOLERANCE


def distance_due_date(vehicle: Vehicle, install: Install, use: Usage, due_odometer: float,
                      tolerance: float, as_of: dt.date) -> dt.date | None:
    """The first day on which the distance limit counts as reached, or None (no usage data, or
    not within a century of the belt's fitting). Depends on the records alone.

    Passed within the records: interpolated between the two values around it, never projected
    backwards. Beyond them: the first day the projection (`Usage.odometer_on`) reaches it.
    Never before the belt was fitted nor before the vehicle entered service."""
    target = due_odometer - tolerance
    if use.last_date is None or use.last_odometer is None:
        return None
    if use.last_odometer >= target:
        due = _passed_between(odometer_points(vehicle, as_of), install, target)
        return max(due, install.date)  # the in-service day: `plan_vehicle`, for both limits
    last = use.last_date
    if (use.odometer_on(last) or 0.0) >= target:
        # The fitted line is past it already (use has slowed), but the latest reading is not:
        # the first day after that reading, never a day whose own reading says otherwise.
        return last + dt.timedelta(days=1)
    if not use.daily_distance or use.line_odometer is None:
        return None
    days = (target - use.line_odometer) / use.daily_distance
    # A century after the fitting means "not by distance" (a parked vehicle: the age limit
    # comes first). Counted from the fitting, which no reading moves.
    if (last - install.date).days + days >= MAX_PROJECTION_DAYS:
        return None
    line, rate, floor = use.line_odometer, use.daily_distance, use.last_odometer

    def reached(k: int) -> bool:  # the same arithmetic as Usage.odometer_on
        return max(line + rate * k, floor) >= target

    # Settle the rounding on the projection itself, so the status on a day and the due date
    # agree to the last floating-point bit.
    k = max(math.ceil(days), 1)
    while k > 1 and reached(k - 1):
        k -= 1
    while not reached(k):
        k += 1
    return last + dt.timedelta(days=k)


def distance_limit_on_record(plan: VehiclePlan) -> bool:
    """Whether a recorded odometer value is already at or past the distance limit (its due date
    then lies between two recorded values, not in a projection)."""
    last, due = plan.usage.last_odometer, plan.due_odometer
    return (last is not None and due is not None
            and last >= due - distance_tolerance(plan.spec))


def _passed_between(points: list[tuple[dt.date, float]], install: Install,
                    target: float) -> dt.date:
    """The first day the straight line between the two values around `target` reaches it."""
    before = (install.date, install.odometer)
    for point in points:
        if point < before:
            continue
        if point[1] >= target:
            (d0, y0), (d1, y1) = before, point
            span = (d1 - d0).days
            if span == 0 or y1 <= y0:
                return d1
            k = math.ceil((target - y0) / (y1 - y0) * span)
            return d0 + dt.timedelta(days=min(max(k, 0), span))
        before = point
    return points[-1][0]  # not reached after all: cannot happen when called as above


def add_months(day: dt.date, months: int) -> dt.date:
    """Calendar months with end-of-month clipping (2024-02-29 + 36 months = 2027-02-28).

    The semantics of python-dateutil's `relativedelta(months=…)`, which the tests check it
    against; written out because it runs for every belt on every plan.
    """
    year, month = divmod(day.year * 12 + (day.month - 1) + months, 12)
    month += 1
    if day.day <= 28:  # every month has it: the common case needs no calendar
        return dt.date(year, month, day.day)
    return dt.date(year, month, min(day.day, calendar.monthrange(year, month)[1]))


def life_fraction(spec: Spec, install: Install, est_odometer: float | None,
                  as_of: dt.date) -> float | None:
    """Share of the interval used on `as_of`: the larger of the distance and age fractions."""
    if spec.interval_distance is None or spec.interval_months is None:
        return None
    span_days = (add_months(install.date, spec.interval_months) - install.date).days
    by_time = (as_of - install.date).days / span_days
    if est_odometer is None:
        return max(by_time, 0.0)
    by_distance = (est_odometer - install.odometer) / spec.interval_distance
    return max(by_time, by_distance, 0.0)


def plan_vehicle(vehicle: Vehicle, fleet: Fleet, as_of: dt.date,
                 spec: Spec | None = None) -> VehiclePlan:
    """Apply every planning rule to one vehicle (`spec`: its resolved spec, if known)."""
    spec = spec or resolve_spec(vehicle, fleet)
    consequence = consequence_of(spec)
    use = usage(vehicle, fleet, as_of)
    unit = fleet.unit
    notes: list[str] = []

    if consequence is Consequence.UNVERIFIED:
        notes.append("interference not verified: planned and costed as an interference engine "
                     "until someone checks it" if spec.interference_given else
                     "interference status not recorded: planned as an interference engine "
                     "until someone checks it")
        if spec.fuel is Fuel.DIESEL:
            notes.append("diesel: high compression leaves almost no valve clearance, so diesels "
                         "are almost always interference engines")
    if spec.interval_basis is IntervalBasis.SEVERE:
        notes.append("severe duty: the severe-service interval is in force")
    elif spec.interval_basis is IntervalBasis.SEVERE_PARTIAL:
        notes.append(_partial_severe_note(spec, unit))
    if spec.drive is Drive.WET_BELT:
        notes.append("wet belt: runs in oil; a missed oil service or wrong oil shortens its life, "
                     "and belt debris can block the oil pick-up")
    if use.daily_distance is None:
        notes.append("no usage data: the distance limit cannot be projected; add odometer "
                     "readings")
    elif use.basis.startswith("fleet default"):
        notes.append(f"usage from the fleet default of {use.daily_distance:g} {unit}/day: add "
                     "odometer readings for a real projection")
    if use.last_date is not None and (as_of - use.last_date).days > STALE_READING_DAYS:
        notes.append(f"last odometer value is {(as_of - use.last_date).days} days old "
                     f"({use.last_date}): the estimate may be far off")
    earlier = [j for j in vehicle.belt_jobs if j.date < vehicle.in_service and j.date <= as_of]
    if earlier:
        notes.append(f"belt job of {max(j.date for j in earlier)} is dated before the vehicle "
                     f"entered service ({vehicle.in_service}): a previous owner's record")
    later = sum(1 for r in vehicle.readings if r.date > as_of) + sum(
        1 for j in vehicle.belt_jobs if j.date > as_of)
    if later:
        notes.append(f"{later} record{'s' if later != 1 else ''} dated after the planning date "
                     "ignored")

    empty = dict(due_odometer=None, distance_remaining=None, time_due_date=None,
                 distance_due_date=None, due_date=None, days_remaining=None,
                 deciding_limit=None)
    if not spec.has_interval:
        notes.insert(0, f"timing {spec.drive.value}: no fixed interval; replaced on condition "
                     "(rattle at cold start, stretch beyond the maker's limit, cam/crank "
                     "correlation fault)" if spec.drive is Drive.CHAIN else
                     "gear drive: no routine replacement")
        install = current_install(vehicle, as_of)
        return VehiclePlan(vehicle, spec, Status.ON_CONDITION, consequence, install, use,
                           notes=tuple(notes), **empty)

    install = current_install(vehicle, as_of)
    if install is None:
        notes.insert(0, "no belt record (bought used): replace on acquisition rather than "
                     "trust the odometer")
        if spec.missing:
            notes.insert(1, missing_fact_note(spec))
        life = life_fraction(spec, assumed_install(vehicle), use.est_odometer, as_of)
        return VehiclePlan(vehicle, spec, Status.NO_RECORD, consequence, None, use,
                           notes=tuple(notes), life_used=life, **empty)
    if spec.interval_distance is None or spec.interval_months is None:
        return _plan_without_interval(vehicle, spec, consequence, install, use, notes, as_of,
                                      unit)

    due_odometer = install.odometer + spec.interval_distance
    est = use.est_odometer if use.est_odometer is not None else install.odometer
    remaining = due_odometer - est
    tolerance = distance_tolerance(spec)
    time_due = add_months(install.date, spec.interval_months)
    # Each due date is the first day its limit is reached; on and after it the belt is overdue.
    distance_due = distance_due_date(vehicle, install, use, due_odometer, tolerance, as_of)
    if distance_due is not None and distance_due < time_due:
        due, deciding = distance_due, Limit.DISTANCE
    else:
        due, deciding = time_due, Limit.TIME
    limit_day = due  # the deciding limit's own date, for the deciding note
    # No due date before the vehicle entered service: a previous owner's belt whose limits
    # passed before we had it is due from that day; a note keeps each limit's own date.
    for name, day in (("age", time_due), ("distance", distance_due)):
        if day is not None and day < vehicle.in_service:
            notes.append(f"the {name} limit was reached on {day}, before the vehicle entered "
                         f"service: due from {vehicle.in_service}, the day it did")
    time_due = max(time_due, vehicle.in_service)
    if distance_due is not None:
        distance_due = max(distance_due, vehicle.in_service)
    due = max(due, vehicle.in_service)
    days_left = (due - as_of).days

    if due <= as_of or remaining <= tolerance:
        status = Status.OVERDUE
    elif (remaining <= fleet.fleet.near_limit_distance + tolerance
          or days_left <= fleet.fleet.near_limit_days):
        status = Status.NEAR_LIMIT
    else:
        status = Status.OK

    on_record = use.last_odometer is not None and use.last_odometer >= due_odometer - tolerance
    notes.insert(0, _deciding_note(deciding, status, spec, install, limit_day, remaining, unit,
                                   within_records=on_record))
    if status is Status.OVERDUE:
        notes.insert(1, "past its interval: treat it as at risk of a sudden engine stop and "
                     "book the job now")
    if spec.missing:  # severe duty without its severe interval: never ok, never lowered
        if status is Status.OVERDUE:
            notes.insert(2, missing_fact_note(spec))
        else:
            status = Status.MISSING_FACT
            notes.insert(0, missing_fact_note(spec))
    return VehiclePlan(
        vehicle, spec, status, consequence, install, use,
        due_odometer=due_odometer,
        distance_remaining=remaining,
        time_due_date=time_due,
        distance_due_date=distance_due,
        due_date=due,
        days_remaining=days_left,
        deciding_limit=deciding,
        notes=tuple(notes),
        life_used=life_fraction(spec, install, est, as_of),
    )


def _partial_severe_note(spec: Spec, unit: str) -> str:
    """Severe duty with a severe figure for one limit only: which limit is which."""
    if "severe_interval_months" in spec.missing:
        return (f"severe duty: the severe-service distance interval ({spec.interval_distance:,.0f} "
                f"{unit}) is used with the normal age interval ({spec.interval_months} months): "
                "no severe-service age interval is known (severe_interval_months)")
    return (f"severe duty: the severe-service age interval ({spec.interval_months} months) is "
            f"used with the normal distance interval ({spec.interval_distance:,.0f} {unit}): "
            "no severe-service distance interval is known (severe_interval_distance)")


def _plan_without_interval(vehicle: Vehicle, spec: Spec, consequence: Consequence,
                           install: Install, use: Usage, notes: list[str], as_of: dt.date,
                           unit: str) -> VehiclePlan:
    """A belt whose drive type or interval is not known: it cannot be planned as "not yet
    due". Overdue when a limit that is known has been reached, else MISSING_FACT; no due date
    is made up and no probability is computed (`life_used` stays unknown)."""
    due_odometer = time_due = None
    passed = []
    if spec.interval_months is not None:
        time_due = add_months(install.date, spec.interval_months)
        if time_due <= as_of:
            passed.append(f"age limit reached: {spec.interval_months} months from "
                          f"{install.date} -> {time_due}")
    if spec.interval_distance is not None:
        due_odometer = install.odometer + spec.interval_distance
        if (use.est_odometer is not None
                and use.est_odometer >= due_odometer - distance_tolerance(spec)):
            passed.append(f"distance limit reached: {spec.interval_distance:,.0f} {unit} from "
                          f"{install.odometer:,.0f} {unit} -> {due_odometer:,.0f} {unit}")
    remaining = None
    if due_odometer is not None and use.est_odometer is not None:
        remaining = due_odometer - use.est_odometer
    if passed:
        status = Status.OVERDUE
        notes[:0] = [passed[0], "past its interval: treat it as at risk of a sudden engine stop "
                     "and book the job now", missing_fact_note(spec)]
    else:
        status = Status.MISSING_FACT
        notes.insert(0, missing_fact_note(spec))
    # A known age limit already reached dates the job (never before entering service); a
    # limit still ahead is no due date while the other is unknown.
    due = None
    if time_due is not None and time_due <= as_of:
        time_due = due = max(time_due, vehicle.in_service)
    return VehiclePlan(vehicle, spec, status, consequence, install, use,
                       due_odometer=due_odometer, distance_remaining=remaining,
                       time_due_date=time_due, distance_due_date=None, due_date=due,
                       days_remaining=None if due is None else (due - as_of).days,
                       deciding_limit=None if due is None else Limit.TIME,
                       notes=tuple(notes))


def _deciding_note(limit: Limit, status: Status, spec: Spec, install: Install, due: dt.date,
                   remaining: float, unit: str, within_records: bool = False) -> str:
    if limit is Limit.TIME:
        what = f"age limit decides: {spec.interval_months} months from {install.date} -> {due}"
    else:
        what = (f"distance limit decides: {spec.interval_distance:,.0f} {unit} from "
                f"{install.odometer:,.0f} {unit} -> ")
        if within_records:  # always overdue: a recorded value is past the limit
            return what + f"reached {due}, between two recorded values"
        what += f"projected {due}"
    if status is Status.OVERDUE:
        return what + " (reached)"
    return what + f"; {remaining:,.0f} {unit} left"


def sort_key(p: VehiclePlan) -> tuple:
    """Default order: status, then engine-damage/unverified before breakdown, then due date."""
    due = p.due_date.toordinal() if p.due_date else 0
    return (p.status.rank, 0 if p.consequence.severe else 1, due, p.id)


_SPEC_SET = frozenset(SPEC_FIELDS)


def plan_fleet(fleet: Fleet, as_of: dt.date) -> list[VehiclePlan]:
    """Every vehicle's plan, in the default order."""
    plans = plans_in_file_order(fleet, as_of)
    plans.sort(key=sort_key)
    return plans


def plans_in_file_order(fleet: Fleet, as_of: dt.date) -> list[VehiclePlan]:
    """Every vehicle's plan, in the order of the file (the order they are made in, so that
    work going through them all reads memory in order: at 100,000 vehicles that counts)."""
    shared: dict[tuple[str | None, Duty], Spec] = {}  # vehicles that override nothing share one
    plans = []
    for v in fleet.vehicles:
        if v.model_fields_set.isdisjoint(_SPEC_SET):
            key = (v.engine, v.duty)
            spec = shared.get(key)
            if spec is None:
                spec = shared[key] = resolve_spec(v, fleet)
        else:
            spec = resolve_spec(v, fleet)
        plans.append(plan_vehicle(v, fleet, as_of, spec))
    return plans
