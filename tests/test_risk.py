"""The risk layer over the plan: horizon probability, fleet fit, triage order, optimum cap."""

from __future__ import annotations

import dataclasses
import datetime as dt

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from planner import risk
from planner.fleet import RiskSettings
from planner.plan import plan_fleet, plan_vehicle
from tests.conftest import AS_OF, HEADER, make_fleet

RISK_HEADER = HEADER + """
[risk]
shape = 3.5
share_failed_at_interval = 0.01
horizon_days = 90
"""


def test_default_assumptions_reproduce_the_share_failed_by_the_interval():
    fleet = make_fleet("")
    model = risk.risk_model(fleet, AS_OF)
    assert model.basis == risk.ASSUMED
    # Reference: scipy.stats.weibull_min cdf (general-purpose library).
    assert stats.weibull_min.cdf(1.0, 3.5, scale=model.eta) == pytest.approx(0.01, rel=1e-12)


def test_horizon_probability_matches_scipy_for_a_worked_vehicle():
    # Three values on one line (30,000 km a year), so any weights fit it: 60,000 / 730 km/day;
    # belt at 60,000 of 100,000 km after 24 of 60 months: distance decides (in 487 days).
    fleet = make_fleet("""
        [[vehicles]]
        id = "V"
        engine = "belt"
        in_service = 2024-12-07
        readings = [{ date = 2025-12-07, odometer = 30000 }, { date = 2026-12-07, odometer = 60000 }]
        [[vehicles.belt_jobs]]
        date = 2024-12-07
        odometer = 0
        reason = "scheduled"
    """, RISK_HEADER)
    p = plan_vehicle(fleet.vehicles[0], fleet, AS_OF)
    model = risk.risk_model(fleet, AS_OF)
    r = risk.assess(p, fleet, model, AS_OF)
    rate = 60000 / 730
    u_now = 60000 / 100000
    u_later = (60000 + 90 * rate) / 100000
    assert r.life_used == pytest.approx(u_now)
    # Reference: scipy.stats.weibull_min survival; conditional failure 1 - R(u2)/R(u1)
    # (NIST/SEMATECH e-Handbook §8.1.6.2).
    sf = stats.weibull_min(3.5, scale=model.eta).sf
    assert r.p_fail_horizon == pytest.approx(1 - sf(u_later) / sf(u_now), rel=1e-9)
    assert r.p_fail_before_due == pytest.approx(1 - sf(1.0) / sf(u_now), rel=1e-9)
    assert r.expected_loss == pytest.approx(r.p_fail_horizon * 3000.0)


def test_breakdown_uses_the_fleet_breakdown_cost():
    fleet = make_fleet("""
        [[vehicles]]
        id = "N"
        engine = "belt"
        interference = "non-interference"
        in_service = 2022-01-01
        readings = [{ date = 2026-01-01, odometer = 70000 }, { date = 2026-12-01, odometer = 90000 }]
    """, RISK_HEADER.replace("near_limit_days = 60", "near_limit_days = 60\nbreakdown_cost = 500"))
    a = risk.assess_fleet_plan(fleet, AS_OF)
    r = a.risks["N"]
    assert r.failure_cost == 500
    assert r.expected_loss == pytest.approx(r.p_fail_horizon * 500)


def test_chains_have_no_probability():
    fleet = make_fleet("""
        [[vehicles]]
        id = "C"
        drive = "chain"
        in_service = 2015-01-01
    """)
    a = risk.assess_fleet_plan(fleet, AS_OF)
    assert a.risks["C"].p_fail_horizon is None
    assert a.risks["C"].expected_loss is None


def test_the_busy_overdue_interference_van_comes_before_the_parked_hatchback():
    # The issue's own example: 300 km/day at ~130 % beats a parked non-interference car at ~101 %.
    fleet = make_fleet("""
        [[vehicles]]
        id = "hatch"
        engine = "belt"
        interference = "non-interference"
        in_service = 2021-11-01
        readings = [{ date = 2025-12-01, odometer = 20000 }, { date = 2026-12-01, odometer = 20300 }]
        [[vehicles]]
        id = "van"
        engine = "belt"
        in_service = 2025-09-01
        readings = [{ date = 2025-12-07, odometer = 20000 }, { date = 2026-12-02, odometer = 128500 }]
        [[vehicles]]
        id = "fresh"
        engine = "belt"
        in_service = 2026-06-01
        readings = [{ date = 2026-06-01, odometer = 0 }, { date = 2026-12-01, odometer = 20000 }]
    """, RISK_HEADER)
    a = risk.assess_fleet_plan(fleet, AS_OF)
    by_id = {p.id: p for p in a.plans}
    assert by_id["van"].life_used > 1.25 and 1.0 < by_id["hatch"].life_used < 1.05
    assert [p.id for p in a.plans] == ["van", "hatch", "fresh"]
    assert a.risks["van"].expected_loss > a.risks["hatch"].expected_loss


def _history_fleet(use_fit: bool) -> tuple:
    """Three failures and two replacements on schedule, all on one 100,000 km / 60 month belt."""
    body = """
        [[vehicles]]
        id = "A"
        engine = "belt"
        in_service = 2018-01-01
        readings = [{ date = 2026-12-01, odometer = 150000 }]
        [[vehicles.belt_jobs]]
        date = 2020-01-01
        odometer = 70000
        reason = "failed"
        [[vehicles.belt_jobs]]
        date = 2022-01-01
        odometer = 150000
        reason = "failed"
        [[vehicles]]
        id = "B"
        engine = "belt"
        in_service = 2019-01-01
        readings = [{ date = 2026-12-01, odometer = 190000 }]
        [[vehicles.belt_jobs]]
        date = 2021-01-01
        odometer = 90000
        reason = "failed"
        [[vehicles.belt_jobs]]
        date = 2022-06-01
        odometer = 185000
        reason = "scheduled"
    """
    header = RISK_HEADER.replace("horizon_days = 90",
                                 f"horizon_days = 90\nuse_fleet_fit = {str(use_fit).lower()}")
    return make_fleet(body, header), body


def test_fleet_fit_matches_scipy_censored_mle():
    fleet, _ = _history_fleet(use_fit=True)
    # Life shares by hand (distance decides each time; 60 months = 1826/1827 days):
    # A: 70,000/100,000 (failed); 80,000/100,000 (failed); running since 2022-01-01, 0 km more
    #    -> age 1795 days of the 2022-01-01 + 60 months span.
    # B: 90,000/100,000 (failed); 95,000/100,000 (scheduled); running since 2022-06-01.
    report = risk.fit_from_history(fleet, AS_OF)
    assert (report.failures, report.suspensions) == (3, 3)
    running_a = (AS_OF - dt.date(2022, 1, 1)).days / (dt.date(2027, 1, 1) - dt.date(2022, 1, 1)).days
    running_b = max((AS_OF - dt.date(2022, 6, 1)).days
                    / (dt.date(2027, 6, 1) - dt.date(2022, 6, 1)).days,
                    (190000 - 185000) / 100000)
    data = stats.CensoredData(uncensored=[0.7, 0.8, 0.9], right=[0.95, running_a, running_b])
    # Reference: scipy.stats.weibull_min.fit on CensoredData, location fixed at 0
    # (maximum likelihood with right censoring; W. Nelson, Applied Life Data Analysis, 1982).
    shape, _, scale = stats.weibull_min.fit(data, floc=0)
    assert report.fit.beta == pytest.approx(shape, rel=1e-4)
    assert report.fit.eta == pytest.approx(scale, rel=1e-4)
    model = risk.risk_model(fleet, AS_OF)
    assert model.basis == risk.FLEET_FIT
    assert model.beta == report.fit.beta


def test_fit_is_shown_but_not_used_unless_asked():
    fleet, _ = _history_fleet(use_fit=False)
    model = risk.risk_model(fleet, AS_OF)
    assert model.basis == risk.ASSUMED
    assert model.fit.fit is not None and not model.fit.used
    assert "use_fleet_fit = true" in model.fit.message


def test_too_few_failures_keep_the_assumptions():
    fleet = make_fleet("""
        [[vehicles]]
        id = "A"
        engine = "belt"
        in_service = 2018-01-01
        [[vehicles.belt_jobs]]
        date = 2020-01-01
        odometer = 70000
        reason = "failed"
    """, RISK_HEADER.replace("horizon_days = 90", "horizon_days = 90\nuse_fleet_fit = true"))
    model = risk.risk_model(fleet, AS_OF)
    assert model.basis == risk.ASSUMED
    assert "too few" in model.fit.message and model.fit.failures == 1


def test_replacement_point_is_never_past_the_makers_interval():
    fleet, _ = _history_fleet(use_fit=True)
    model = risk.risk_model(fleet, AS_OF)
    for point in risk.replacement_points(fleet, model):
        assert point.u_star is None or point.u_star <= 1.0
    # A law that wears out late puts the optimum past the interval: it is capped, and the
    # message says to replace at the interval, never that running past it would pay.
    late = dataclasses.replace(model, beta=3.5, eta=5.0)
    capped = risk.replacement_points(fleet, late)[0]
    assert capped.u_star == 1.0 and capped.capped
    assert "replace at the maker's interval, never later" in capped.message


def test_replacement_point_with_costs_from_the_profile():
    fleet = make_fleet("""
        [[vehicles]]
        id = "A"
        engine = "belt"
        in_service = 2024-01-01
    """, RISK_HEADER.replace("near_limit_days = 60", "near_limit_days = 60\nlabour_rate = 50"))
    model = dataclasses.replace(risk.risk_model(fleet, AS_OF), beta=4.0, eta=1.2)
    point = risk.replacement_points(fleet, model)[0]
    assert point.planned_cost == pytest.approx(200 + 3 * 50)       # parts + hours x rate
    assert point.failure_cost == pytest.approx(350 + 3000)         # the job plus the damage
    # Reference: scipy.optimize.minimize_scalar on the Barlow & Proschan cost rate with
    # scipy.integrate.quad for the integral of R.
    from scipy import integrate, optimize

    sf = stats.weibull_min(4.0, scale=1.2).sf

    def cost_rate(u):
        return (350 * sf(u) + 3350 * (1 - sf(u))) / integrate.quad(sf, 0, u)[0]

    best = optimize.minimize_scalar(cost_rate, bounds=(0.05, 1.0), method="bounded",
                                    options={"xatol": 1e-9})
    assert point.u_star == pytest.approx(best.x, rel=1e-4)
    assert not point.capped


# -- properties -------------------------------------------------------------------------------

def _vehicle_fleet(rate: float, age_days: int, horizon: int):
    in_service = AS_OF - dt.timedelta(days=age_days)
    odo = rate * age_days
    header = RISK_HEADER.replace("horizon_days = 90", f"horizon_days = {horizon}")
    return make_fleet(f"""
        [[vehicles]]
        id = "P"
        engine = "belt"
        in_service = {in_service.isoformat()}
        readings = [{{ date = {in_service.isoformat()}, odometer = 0 }},
                    {{ date = {AS_OF.isoformat()}, odometer = {odo:.3f} }}]
    """, header)


def _p(rate: float, age_days: int, horizon: int) -> float:
    fleet = _vehicle_fleet(rate, age_days, horizon)
    a = risk.assess_fleet_plan(fleet, AS_OF)
    return a.risks["P"].p_fail_horizon


rates = st.floats(0, 400)
ages = st.integers(20, 4000)
horizons = st.integers(1, 720)


@settings(max_examples=60, deadline=None)
@given(rates, ages, horizons)
def test_probability_is_a_probability(rate, age, horizon):
    assert 0.0 <= _p(rate, age, horizon) <= 1.0


@settings(max_examples=40, deadline=None)
@given(rates, ages, horizons, horizons)
def test_probability_grows_with_the_horizon(rate, age, h1, h2):
    lo, hi = sorted((h1, h2))
    assert _p(rate, age, lo) <= _p(rate, age, hi) + 1e-12


@settings(max_examples=40, deadline=None)
@given(rates, rates, ages, horizons)
def test_probability_grows_with_the_usage_rate(r1, r2, age, horizon):
    lo, hi = sorted((r1, r2))
    assert _p(lo, age, horizon) <= _p(hi, age, horizon) + 1e-12


@settings(max_examples=40, deadline=None)
@given(st.floats(0.0, 3.0), st.floats(0.0, 3.0), st.floats(0.0, 0.5),
       st.floats(1.1, 8.0))
def test_probability_grows_with_life_used(u1, u2, du, beta):
    # With wear-out (shape > 1) the same step of life is riskier the older the belt.
    from planner.reliability import conditional_failure, eta_from_share

    eta = eta_from_share(0.01, beta)
    lo, hi = sorted((u1, u2))
    assert conditional_failure(lo, lo + du, beta, eta) <= conditional_failure(hi, hi + du, beta,
                                                                               eta) + 1e-12


@settings(max_examples=30, deadline=None)
@given(st.lists(st.tuples(rates, ages), min_size=2, max_size=6))
def test_expected_loss_ordering_is_the_triage_order_within_a_group(vehicles):
    body = ""
    for k, (rate, age) in enumerate(vehicles):
        start = AS_OF - dt.timedelta(days=age)
        body += f"""
[[vehicles]]
id = "V{k}"
engine = "belt"
in_service = {start.isoformat()}
readings = [{{ date = {start.isoformat()}, odometer = 0 }},
            {{ date = {AS_OF.isoformat()}, odometer = {rate * age:.3f} }}]
"""
    fleet = make_fleet(body, RISK_HEADER)
    a = risk.assess_fleet_plan(fleet, AS_OF)
    urgent = {"overdue", "no-record"}
    for first, second in zip(a.plans, a.plans[1:], strict=False):
        if (first.status.value in urgent) == (second.status.value in urgent):
            assert a.risks[first.id].expected_loss >= a.risks[second.id].expected_loss
        else:
            assert first.status.value in urgent  # a group never comes after a lower one


def test_risk_settings_are_validated():
    with pytest.raises(ValueError):
        RiskSettings(share_failed_at_interval=1.5)


def test_plans_and_assessment_agree():
    fleet, _ = _history_fleet(use_fit=False)
    a = risk.assess_fleet_plan(fleet, AS_OF, order="due-date")
    assert [p.id for p in a.plans] == [p.id for p in plan_fleet(fleet, AS_OF)]
