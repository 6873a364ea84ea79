"""Failure risk: how likely each cam drive is to fail, what that would cost, and what comes first.

Life is the share of the maker's interval used (the larger of the distance and age shares, see
`plan.life_fraction`), and failure life follows a two-parameter Weibull law in it (NIST/SEMATECH
e-Handbook §8.1.6.2). Its parameters are assumptions from the [risk] table, or a censored
maximum-likelihood fit to the fleet's own job history when the file asks for it. Pure: no I/O,
no clock; the numerics are in `planner.reliability`.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from dataclasses import dataclass

from planner import reliability
from planner.fleet import BeltHistory, Fleet, JobReason, Vehicle
from planner.formats import percent
from planner.plan import (
    Consequence,
    Install,
    Spec,
    Status,
    VehiclePlan,
    assumed_install,
    consequence_of,
    life_fraction,
    plans_in_file_order,
    resolve_spec,
    sort_key,
    usage,
)

MIN_FAILURES_FOR_FIT = 3
ASSUMED = "assumed"
FLEET_FIT = "fleet fit"

# Jobs that are due now: past a limit, or a belt of unknown age (replaced on acquisition).
# They are required, never weighed against cost: no risk figure is set against them.
REQUIRED_STATUSES = (Status.OVERDUE, Status.NO_RECORD)
EXTRAPOLATION_NOTE = ("past the maker's interval the risk model extrapolates beyond the maker's "
                      "data: its figures are no reason to wait; replace now")
FIT_INTERVAL_NOTE = ("The fleet fit changes only the probabilities: statuses still follow the "
                     "maker's interval, and the fit never lengthens it.")


def is_required(status: Status) -> bool:
    """A job that is due now (overdue or no belt record): required, not a cost decision."""
    return status in REQUIRED_STATUSES


def action_words(p: VehiclePlan) -> str | None:
    """What to do, in two or three words, led by the action; None when nothing is due."""
    if p.status is Status.OVERDUE:
        return "replace now"
    if p.status is Status.NO_RECORD:
        return "replace now"
    if p.status is Status.MISSING_FACT:  # the interval in force is not known: it may be due
        return "find fact now"
    if p.status is Status.NEAR_LIMIT:
        return "book soon"
    return None


@dataclass(frozen=True)
class FitReport:
    """What the fleet's own history says, and whether it is used."""

    failures: int
    suspensions: int
    fit: reliability.WeibullFit | None
    used: bool
    message: str


@dataclass(frozen=True)
class RiskModel:
    """The Weibull law in force, in units of the interval used, and where it comes from."""

    beta: float
    eta: float
    basis: str  # ASSUMED or FLEET_FIT
    share_failed_at_interval: float
    horizon_days: int
    fit: FitReport

    @property
    def share_failed_at_interval_now(self) -> float:
        """The share of belts this law has failed by the maker's interval."""
        return reliability.weibull_cdf(1.0, self.beta, self.eta)

    def interval_note(self) -> str | None:
        """For a fleet fit in force: it never lengthens the maker's interval (said whatever the
        fit, so that no fit, however long its life, reads as leave to run past)."""
        if self.basis == FLEET_FIT:
            return FIT_INTERVAL_NOTE
        return None

    def describe(self) -> str:
        """One line that goes with every risk figure."""
        source = ("fitted to this fleet's job history"
                  if self.basis == FLEET_FIT else "assumed in the [risk] table, not measured")
        line = (f"Risk model: Weibull shape {self.beta:.2f}, with "
                f"{percent(self.share_failed_at_interval_now)} of belts failed by the maker's "
                f"interval, {source}; horizon {self.horizon_days} days. Probabilities are "
                "planning estimates only; past the maker's interval they extrapolate beyond "
                "the maker's data.")
        note = self.interval_note()
        return f"{line} {note}" if note else line

    def as_dict(self) -> dict:
        fit = self.fit.fit
        return {
            "basis": self.basis,
            "shape": round(self.beta, 4),
            "scale": round(self.eta, 4),
            "share_failed_at_interval": round(
                reliability.weibull_cdf(1.0, self.beta, self.eta), 6),
            "horizon_days": self.horizon_days,
            "life_unit": "share of the maker's interval (distance or age, whichever is larger)",
            "interval_note": self.interval_note(),
            "fleet_fit": {
                "failures": self.fit.failures,
                "suspensions": self.fit.suspensions,
                "shape": None if fit is None else round(fit.beta, 4),
                "scale": None if fit is None else round(fit.eta, 4),
                "used": self.fit.used,
                "message": self.fit.message,
            },
        }


@dataclass(frozen=True)
class Risk:
    """One vehicle's risk figures; None where the model does not apply (chains, gears)."""

    life_used: float | None
    p_fail_horizon: float | None
    p_fail_before_due: float | None
    failure_cost: float | None
    expected_loss: float | None
    basis: str | None
    notes: tuple[str, ...] = ()
    extrapolated: bool = False  # figures reach past the maker's interval (or its record)


# -- the fleet's own history -------------------------------------------------------------------

def life_records(vehicle: Vehicle, fleet: Fleet, as_of: dt.date,
                 plan: VehiclePlan | None = None) -> tuple[list[float], list[float]]:
    """Lives of the vehicle's belts as interval shares: (failed, right-censored).

    A `failed` job ends a belt's life with a failure; a `scheduled` or `precaution` job, and the
    belt still running on `as_of`, are suspensions (Nelson, Applied Life Data Analysis). A belt
    whose start is unknown (bought used, before the first job) is left out.
    """
    spec = plan.spec if plan is not None else resolve_spec(vehicle, fleet)
    if not spec.has_interval:
        return [], []
    failed: list[float] = []
    censored: list[float] = []
    start = (Install(vehicle.in_service, vehicle.in_service_odometer, "factory belt")
             if vehicle.belt_history is BeltHistory.KNOWN else None)
    jobs = sorted((j for j in vehicle.belt_jobs if j.date <= as_of),
                  key=lambda j: (j.date, j.odometer))
    for job in jobs:
        if start is not None:
            u = life_fraction(spec, start, job.odometer, job.date)
            if u is not None and u > 0:
                (failed if job.reason is JobReason.FAILED else censored).append(u)
        start = Install(job.date, job.odometer, "job")
    if start is not None:  # the running belt: censored at its life so far
        est = (plan.usage if plan is not None else usage(vehicle, fleet, as_of)).est_odometer
        u = life_fraction(spec, start, est, as_of)
        if u is not None and u > 0:
            censored.append(u)
    return failed, censored


def fit_from_history(fleet: Fleet, as_of: dt.date,
                     plans: Sequence[VehiclePlan] | None = None, fit: bool = True) -> FitReport:
    """Censored maximum-likelihood Weibull fit to every belt life in the file.

    `plans` (of the same date) saves resolving each vehicle's spec and usage again; with
    `fit=False` only the failures and suspensions are counted.
    """
    failed: list[float] = []
    censored: list[float] = []
    by_id = {p.id: p for p in plans} if plans is not None else {}
    for v in fleet.vehicles:
        f, c = life_records(v, fleet, as_of, by_id.get(v.id))
        failed += f
        censored += c
    if len(failed) < MIN_FAILURES_FOR_FIT:
        return FitReport(len(failed), len(censored), None, False,
                         f"{len(failed)} recorded failure{'s' if len(failed) != 1 else ''}: too "
                         f"few to fit (at least {MIN_FAILURES_FOR_FIT}); the assumptions stay")
    if not fit:
        return FitReport(len(failed), len(censored), None, False,
                         "fit not computed here: see `beltplan risk`")
    try:
        result = reliability.fit_weibull_censored(failed, censored)
    except ValueError as exc:
        return FitReport(len(failed), len(censored), None, False,
                         f"no fit: {exc}; the assumptions stay")
    used = fleet.risk.use_fleet_fit
    return FitReport(len(failed), len(censored), result, used,
                     "fit in use ([risk] use_fleet_fit = true)" if used else
                     "fit shown only; set [risk] use_fleet_fit = true to use it")


def fitted_model(fleet: Fleet, report: FitReport) -> RiskModel | None:
    """The law the fleet's own history gives, whether or not it is in force."""
    if report.fit is None:
        return None
    return RiskModel(report.fit.beta, report.fit.eta, FLEET_FIT,
                     fleet.risk.share_failed_at_interval, fleet.risk.horizon_days, report)


def risk_model(fleet: Fleet, as_of: dt.date, plans: Sequence[VehiclePlan] | None = None,
               always_fit: bool = True) -> RiskModel:
    """The law in force: the fleet fit when asked for and available, else the assumptions.

    With `always_fit=False` the fit is computed only when the file asks to use it.
    """
    settings = fleet.risk
    report = fit_from_history(fleet, as_of, plans, fit=always_fit or settings.use_fleet_fit)
    fitted = fitted_model(fleet, report)
    if report.used and fitted is not None:
        return fitted
    eta = reliability.eta_from_share(settings.share_failed_at_interval, settings.shape)
    return RiskModel(settings.shape, eta, ASSUMED, settings.share_failed_at_interval,
                     settings.horizon_days, report)


# -- per vehicle -------------------------------------------------------------------------------

def _install_for_risk(p: VehiclePlan) -> Install | None:
    return p.install if p.install is not None else (
        assumed_install(p.vehicle) if p.status is Status.NO_RECORD else None)


def failure_cost(p: VehiclePlan, fleet: Fleet) -> float | None:
    """Engine damage (and unverified, planned as such): the profile's estimate; else breakdown."""
    if p.consequence is Consequence.BREAKDOWN:
        return fleet.fleet.breakdown_cost
    return p.spec.failure_cost


def assess(p: VehiclePlan, fleet: Fleet, model: RiskModel, as_of: dt.date) -> Risk:
    """Probability of failure within the horizon and before the due date, and expected loss."""
    install = _install_for_risk(p)
    if p.status is Status.MISSING_FACT:  # the interval in force is not known: no figure
        return Risk(None, None, None, None, None, None,
                    ("no risk figure while a fact is missing: the interval in force is not "
                     "known",))
    if not p.spec.has_interval or install is None or p.life_used is None:
        return Risk(None, None, None, None, None, None,
                    ("no interval-based risk: replaced on condition",)
                    if not p.spec.has_interval else ())
    notes = []
    if install.assumed:
        notes.append("risk assumes the belt is as old as the vehicle (no belt record)")
    horizon = dt.timedelta(days=model.horizon_days)
    rate = p.usage.daily_distance
    est = p.usage.est_odometer
    later_odo = None if est is None else est + (rate or 0.0) * model.horizon_days
    if rate is None:
        notes.append("no usage rate: the horizon risk counts ageing only")
    u_now = p.life_used
    u_later = life_fraction(p.spec, install, later_odo, as_of + horizon)
    u_later = max(u_now, u_later if u_later is not None else u_now)
    p_h = reliability.conditional_failure(u_now, u_later, model.beta, model.eta)
    p_due = None
    if p.status in (Status.OK, Status.NEAR_LIMIT) and u_now < 1.0:
        p_due = reliability.conditional_failure(u_now, 1.0, model.beta, model.eta)
    extrapolated = is_required(p.status) or u_later > 1.0
    if extrapolated:
        notes.append(EXTRAPOLATION_NOTE if is_required(p.status) else
                     "within the horizon the belt passes the maker's interval: the risk model "
                     "extrapolates beyond the maker's data; book the job before the due date")
    cost = failure_cost(p, fleet)
    if cost is None:
        notes.append("no failure_cost for this engine: the expected loss is unknown; set it")
    loss = None if cost is None else p_h * cost
    return Risk(u_now, p_h, p_due, cost, loss, model.basis, tuple(notes), extrapolated)


def assess_fleet(plans: Sequence[VehiclePlan], fleet: Fleet, model: RiskModel,
                 as_of: dt.date) -> dict[str, Risk]:
    return {p.id: assess(p, fleet, model, as_of) for p in plans}


def triage_key(p: VehiclePlan, r: Risk) -> tuple:
    """Overdue and no-record first, then missing-fact (needs attention now: a fact to find
    before the belt can be planned), then the rest; within each, the larger expected loss
    first; equal keys keep the default order (`plan.sort_key`: see `triage`).

    An unknown expected loss (no cost given) sorts as the largest: unknown must not look safe.
    Chains and gears come last, as on condition.
    """
    group = 0 if p.status in (Status.OVERDUE, Status.NO_RECORD) else (
        1 if p.status is Status.MISSING_FACT else 3 if p.status is Status.ON_CONDITION else 2)
    loss = r.expected_loss
    unknown_loss = loss is None and group < 3
    return (group, 0 if unknown_loss else 1, -(loss or 0.0))


def triage(plans: Sequence[VehiclePlan], risks: dict[str, Risk]) -> list[VehiclePlan]:
    """The triage order: what to book first. `plans` come in the default order, as
    `plan_fleet` gives them: Python's sort is stable (documented for `sorted`), so plans with
    equal triage keys keep that order, and it need not be keyed again."""
    return sorted(plans, key=lambda p: triage_key(p, risks[p.id]))


@dataclass(frozen=True)
class ReplacementPoint:
    """Cost-optimal replacement age for one engine profile, never past the maker's interval."""

    profile: str
    planned_cost: float
    failure_cost: float
    u_star: float | None
    capped: bool
    message: str


def replacement_point(profile_id: str, spec: Spec, fleet: Fleet,
                      model: RiskModel, consequence: Consequence) -> ReplacementPoint:
    """Age replacement policy (Barlow & Proschan): minimise cost per unit of life.

    Cp = parts + labour hours x labour rate; Cf = Cp + the failure cost (the belt job is done in
    either case). The answer is capped at the maker's interval (1.0): never beyond it.
    """
    cp = (spec.parts_cost or 0.0) + (spec.labour_hours or 0.0) * fleet.fleet.labour_rate
    loss = fleet.fleet.breakdown_cost if consequence is Consequence.BREAKDOWN else \
        spec.failure_cost
    if cp <= 0 or loss is None:
        return ReplacementPoint(profile_id, cp, loss or 0.0, None, False,
                                "needs parts_cost or labour_hours and a failure_cost")
    cf = cp + loss
    best = reliability.optimal_replacement(model.beta, model.eta, cp, cf, upper=1.0)
    if best is None:
        return ReplacementPoint(profile_id, cp, cf, None, False,
                                "no cost optimum (shape <= 1): replace at the maker's interval")
    if best.at_upper_bound:
        return ReplacementPoint(profile_id, cp, cf, 1.0, True,
                                "no earlier point costs less: replace at the maker's interval, "
                                "never later")
    return ReplacementPoint(profile_id, cp, cf, best.u_star, False,
                            "replacing before the maker's interval costs less per unit of life")


def replacement_points(fleet: Fleet, model: RiskModel) -> list[ReplacementPoint]:
    """One cost-optimal point per engine profile in use (or per vehicle without a profile)."""
    seen: dict[str, ReplacementPoint] = {}
    for v in fleet.vehicles:
        key = v.engine or f"vehicle {v.id}"
        if key in seen:
            continue
        spec = resolve_spec(v.model_copy(update={"duty": v.duty.NORMAL}), fleet)
        if spec.has_interval:
            seen[key] = replacement_point(key, spec, fleet, model, consequence_of(spec))
    return list(seen.values())


ORDERS = ("triage", "due-date")


@dataclass(frozen=True)
class FleetAssessment:
    """The whole picture on one planning date: plans in order, their risks, the model used."""

    as_of: dt.date
    plans: tuple[VehiclePlan, ...]
    risks: dict[str, Risk]
    model: RiskModel


def assess_fleet_plan(fleet: Fleet, as_of: dt.date, order: str = "triage") -> FleetAssessment:
    """Plan every vehicle, assess its risk, and order: `triage` (default) or `due-date`."""
    if order not in ORDERS:
        raise ValueError(f"unknown order {order!r}")
    made = plans_in_file_order(fleet, as_of)
    model = risk_model(fleet, as_of, made, always_fit=False)
    risks = assess_fleet(made, fleet, model, as_of)
    plans = sorted(made, key=sort_key)  # the default (due-date) order
    if order == "triage":
        plans = triage(plans, risks)
    return FleetAssessment(as_of, tuple(plans), risks, model)
