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

RATE_WINDOW_DAYS = 365
RATE_MIN_SPAN_DAYS = 14
STALE_READING_DAYS = 90
MAX_PROJECTION_DAYS = 36525


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
    """Distance per day and the estimated odometer on the planning date."""

    daily_distance: float | None
    basis: str
    last_date: dt.date | None
    last_odometer: float | None
    est_odometer: float | None


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


def least_squares_slope(points: list[tuple[dt.date, float]]) -> float:
    """Ordinary least-squares slope of odometer on day number (distance per day)."""
    # One pass, offsets from the first point keep the sums small (this runs for every vehicle).
    x0, y0 = points[0][0].toordinal(), points[0][1]
    n = len(points)
    sx = sy = sxx = sxy = 0.0
    for day, odo in points:
        x = day.toordinal() - x0
        y = odo - y0
        sx += x
        sy += y
        sxx += x * x
        sxy += x * y
    return (n * sxy - sx * sy) / (n * sxx - sx * sx)


def _spans(points: list[tuple[dt.date, float]]) -> bool:
    return len(points) >= 2 and (points[-1][0] - points[0][0]).days >= RATE_MIN_SPAN_DAYS


def usage(vehicle: Vehicle, fleet: Fleet, as_of: dt.date) -> Usage:
    """Usage rate and estimated odometer: recent window, else all values, else the default."""
    points = odometer_points(vehicle, as_of)
    if not points:
        return Usage(None, "not yet in service on the planning date", None, None, None)
    recent = [p for p in points if (as_of - p[0]).days <= RATE_WINDOW_DAYS]
    rate: float | None
    if _spans(recent):
        rate, basis = least_squares_slope(recent), f"least squares, {len(recent)} values " \
            f"in the last {RATE_WINDOW_DAYS} days"
    elif _spans(points):
        rate, basis = least_squares_slope(points), f"least squares, all {len(points)} values"
    elif fleet.fleet.default_daily_distance is not None:
        rate, basis = fleet.fleet.default_daily_distance, "fleet default (too few readings)"
    else:
        rate, basis = None, "no usage data"
    if rate is not None:
        rate = max(rate, 0.0)
    last_date, last_odo = points[-1]
    est = last_odo + (rate or 0.0) * (as_of - last_date).days
    return Usage(rate, basis, last_date, last_odo, est)


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
    time_due = add_months(install.date, spec.interval_months)
    distance_due: dt.date | None = None
    if use.daily_distance:
        # Floor: the day on which the limit is reached, never a day late. A projection past a
        # century means "not by distance" (a parked vehicle), which the age limit overtakes.
        days = remaining / use.daily_distance
        if days < MAX_PROJECTION_DAYS:
            distance_due = as_of + dt.timedelta(days=math.floor(days))
    elif remaining <= 0:
        distance_due = use.last_date
    if distance_due is not None and distance_due < time_due:
        due, deciding = distance_due, Limit.DISTANCE
    else:
        due, deciding = time_due, Limit.TIME
    days_left = (due - as_of).days

    if remaining <= 0 or time_due <= as_of:
        status = Status.OVERDUE
    elif remaining <= fleet.fleet.near_limit_distance or days_left <= fleet.fleet.near_limit_days:
        status = Status.NEAR_LIMIT
    else:
        status = Status.OK

    notes.insert(0, _deciding_note(deciding, status, spec, install, due, remaining, unit))
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
        if use.est_odometer is not None and use.est_odometer >= due_odometer:
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
    return VehiclePlan(vehicle, spec, status, consequence, install, use,
                       due_odometer=due_odometer, distance_remaining=remaining,
                       time_due_date=time_due, distance_due_date=None, due_date=None,
                       days_remaining=None, deciding_limit=None, notes=tuple(notes))


def _deciding_note(limit: Limit, status: Status, spec: Spec, install: Install, due: dt.date,
                   remaining: float, unit: str) -> str:
    if limit is Limit.TIME:
        what = f"age limit decides: {spec.interval_months} months from {install.date} -> {due}"
    else:
        what = (f"distance limit decides: {spec.interval_distance:,.0f} {unit} from "
                f"{install.odometer:,.0f} {unit} -> projected {due}")
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
