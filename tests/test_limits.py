"""Settings at the edge of their ranges, and histories that push the numerics: an error that
names the field, or a finite answer, never a traceback."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate, stats

from planner.cli import main
from planner.errors import PlannerError
from planner.reliability import (
    _life_integral,
    age_replacement_cost_rate,
    conditional_failure,
    eta_from_share,
    fit_weibull_censored,
    optimal_replacement,
)
from planner.risk import assess_fleet_plan, replacement_points, risk_model
from tests.conftest import AS_OF, HEADER, fleet_text, make_fleet

VEHICLE = """
[[vehicles]]
id = "V1"
engine = "belt"
in_service = 2024-01-01
readings = [{ date = 2026-11-01, odometer = 60000 }]
"""


def _with_risk(risk: str) -> str:
    return HEADER + "\n[risk]\n" + risk + "\n"


# -- ranges of the settings ------------------------------------------------------------------

@pytest.mark.parametrize(("table", "key", "value"), [
    ("risk", "shape", "0.003"),        # eta = 1/(-ln 0.99)^(1/0.003) underflows: was a ZeroDivision
    ("risk", "shape", "0.49"),
    ("risk", "shape", "20.5"),
    ("risk", "share_failed_at_interval", "0.00009"),
    ("risk", "share_failed_at_interval", "0.51"),
    ("workshop", "hours_per_day", "1e-300"),
    ("workshop", "hours_per_day", "0.49"),
])
def test_a_setting_out_of_its_range_is_an_error_naming_the_field(table, key, value):
    header = HEADER + f"\n[{table}]\n{key} = {value}\n"
    with pytest.raises(PlannerError) as caught:
        make_fleet(VEHICLE, header)
    [problem] = caught.value.problems
    assert problem.field == f"{table}.{key}" or problem.field.endswith(key), problem


@pytest.mark.parametrize("shape", ["0.5", "20.0"])
@pytest.mark.parametrize("share", ["0.0001", "0.5"])
def test_every_corner_of_the_risk_ranges_gives_finite_figures(shape, share, tmp_path, capsys):
    header = _with_risk(f"shape = {shape}\nshare_failed_at_interval = {share}")
    fleet = make_fleet(VEHICLE, header)
    assessment = assess_fleet_plan(fleet, AS_OF)
    for r in assessment.risks.values():
        for p in (r.p_fail_horizon, r.p_fail_before_due):
            assert p is None or 0.0 <= p <= 1.0
        assert r.expected_loss is None or math.isfinite(r.expected_loss)
    for point in replacement_points(fleet, assessment.model):
        assert point.u_star is None or 0.0 < point.u_star <= 1.0
    path = tmp_path / "fleet.toml"
    path.write_text(fleet_text(VEHICLE, header), encoding="utf-8")
    for command in ("list", "risk", "week"):
        assert main([command, str(path), "--as-of", "2026-12-07"]) == 0, command
    capsys.readouterr()


def test_shape_0_003_gives_exit_2_in_every_command(tmp_path, capsys):
    path = tmp_path / "fleet.toml"
    path.write_text(fleet_text(VEHICLE, _with_risk("shape = 0.003")), encoding="utf-8")
    for command in ("check", "list", "risk", "week"):
        extra = [] if command == "check" else ["--as-of", "2026-12-07"]
        assert main([command, str(path), *extra]) == 2
        err = capsys.readouterr().err
        assert "shape" in err and f"{path}" in err
        # The fix names the range and why, not a typing slip ("a minus sign").
        assert "set shape to 0.5 or more" in err and "minus sign" not in err


# -- a fleet fit with failures close together -----------------------------------------------

# Four failures at 50,000-50,060 km on a 100,000 km interval: life shares 0.5-0.5006, so the
# maximum-likelihood shape is in the thousands.
FAILURES = [0.5, 0.5002, 0.5004, 0.5006]


def _sf(x: float, beta: float, eta: float) -> float:
    return float(stats.weibull_min.sf(x, beta, scale=eta))


def test_a_steep_fit_gives_a_finite_life_integral_matching_quad():
    fit = fit_weibull_censored(FAILURES, [0.1, 0.2])
    assert fit.beta > 1000  # the case that overflowed
    for u in (0.3, 0.5, 0.5004, 1.0):
        got = _life_integral(u, fit.beta, fit.eta)
        # reference: scipy.integrate.quad over scipy.stats.weibull_min.sf (general-purpose
        # library), with the step at eta given as a break point
        want, _ = integrate.quad(_sf, 0, u, args=(fit.beta, fit.eta), points=[fit.eta],
                                 epsabs=0, epsrel=1e-12, limit=500)
        assert got == pytest.approx(want, rel=1e-9)


def test_a_steep_fit_gives_a_finite_cost_rate_and_optimum():
    fit = fit_weibull_censored(FAILURES, [0.1, 0.2])
    cp, cf = 300.0, 3300.0
    rate = age_replacement_cost_rate(1.0, fit.beta, fit.eta, cp, cf)
    # reference: Barlow & Proschan's C(u) with R and the integral from scipy (general-purpose)
    life, _ = integrate.quad(_sf, 0, 1.0, args=(fit.beta, fit.eta), points=[fit.eta],
                             epsabs=0, epsrel=1e-12, limit=500)
    r1 = _sf(1.0, fit.beta, fit.eta)
    assert rate == pytest.approx((cp * r1 + cf * (1 - r1)) / life, rel=1e-9)
    best = optimal_replacement(fit.beta, fit.eta, cp, cf, upper=1.0)
    assert best is not None and math.isfinite(best.cost_rate)
    # Every belt lives to ~eta and then fails at once: replace just before eta
    assert 0.45 < best.u_star < fit.eta


def test_a_steep_fit_gives_finite_conditional_probabilities():
    fit = fit_weibull_censored(FAILURES, [0.1, 0.2])
    for t_now, t_later in ((0.3, 0.45), (0.49, 0.5), (0.5, 0.5003), (0.5003, 0.51)):
        got = conditional_failure(t_now, t_later, fit.beta, fit.eta)
        # reference: scipy.stats.weibull_min.logsf (general-purpose library)
        d = (stats.weibull_min.logsf(t_later, fit.beta, scale=fit.eta)
             - stats.weibull_min.logsf(t_now, fit.beta, scale=fit.eta))
        assert got == pytest.approx(-math.expm1(d), rel=1e-7, abs=1e-300)
    # Past eta the hazards overflow scipy's logsf too: H(0.6) = (0.6/0.5004)^beta > e^400
    # (ln 1.199 = 0.18, times beta > 2000), so a belt of 0.6 fails before 0.9 for certain.
    assert conditional_failure(0.6, 0.9, fit.beta, fit.eta) == 1.0
    assert conditional_failure(0.9, 1.0, fit.beta, fit.eta) == 1.0


STEEP_FLEET = "".join(f"""
[[vehicles]]
id = "V{k}"
engine = "belt"
in_service = 2024-01-01
readings = [{{ date = 2026-11-01, odometer = {80000 + k * 1000} }}]
belt_jobs = [{{ date = 2026-0{k + 1}-01, odometer = {50000 + 20 * k}, reason = "failed" }}]
""" for k in range(4))


def test_beltplan_risk_with_a_steep_fleet_fit_exits_0(tmp_path, capsys):
    path = tmp_path / "fleet.toml"
    text = fleet_text(STEEP_FLEET, _with_risk("use_fleet_fit = true"))
    path.write_text(text, encoding="utf-8")
    fleet = make_fleet(STEEP_FLEET, _with_risk("use_fleet_fit = true"))
    model = risk_model(fleet, AS_OF)
    assert model.beta > 1000  # the fit is in force, and steep
    assert main(["risk", str(path), "--as-of", "2026-12-07"]) == 0
    assert "Traceback" not in capsys.readouterr().err


# -- a bay day too short for any job ----------------------------------------------------------

def _calendar(hours_per_day: float):
    from planner.schedule import WorkshopCalendar
    return WorkshopCalendar(bays=2, hours_per_day=hours_per_day, weekdays=frozenset(range(5)))


@pytest.mark.parametrize("hours_per_day", [1e-300, 1e-6, 0.01])
def test_a_job_longer_than_the_windows_working_days_is_unplaced_with_a_reason(hours_per_day):
    from datetime import date

    from planner.schedule import TOO_LONG, JobRequest, schedule_jobs
    # 3 h at 0.01 h a day is 300 working days; the window of 14 days from Monday 2026-12-07
    # has 10 (two weeks of Monday to Friday). Smaller days need ever more: never built.
    jobs = [JobRequest("V1", 3.0, 0, needs_parts=False)]
    plan = schedule_jobs(jobs, _calendar(hours_per_day), date(2026, 12, 7), 14, date(2026, 12, 7))
    assert plan.placements == ()
    assert [(u.key, u.reason) for u in plan.unplaced] == [("V1", TOO_LONG)]


def test_a_job_that_just_fits_the_window_is_still_placed():
    from datetime import date

    from planner.schedule import JobRequest, schedule_jobs
    # 10 working days of 0.5 h hold 5 h exactly: days 2026-12-07 to 2026-12-18
    jobs = [JobRequest("V1", 5.0, 0, needs_parts=False)]
    plan = schedule_jobs(jobs, _calendar(0.5), date(2026, 12, 7), 14, date(2026, 12, 7))
    [p] = plan.placements
    assert (p.days[0], p.days[-1], len(p.days)) == (date(2026, 12, 7), date(2026, 12, 18), 10)


# -- dates outside the file's years -----------------------------------------------------------

@pytest.mark.parametrize("args", [
    ["list", "--as-of", "9999-12-31"],
    ["week", "--as-of", "9999-12-31"],
    ["risk", "--as-of", "2101-01-01"],
    ["list", "--as-of", "1949-12-31"],
    ["week", "--as-of", "2026-12-07", "--start", "9999-12-27"],
])
def test_a_date_outside_1950_2100_is_exit_2_with_the_range(args):
    import subprocess
    import sys

    from tests.conftest import COURIER, ROOT
    command, *rest = args
    run = subprocess.run([sys.executable, "-m", "planner", command, str(COURIER), *rest],
                         capture_output=True, text=True, cwd=ROOT)
    assert run.returncode == 2, run.stderr
    assert "Traceback" not in run.stderr
    assert "1950-01-01 to 2100-12-31" in run.stderr


@pytest.mark.parametrize("day", ["1950-01-01", "2100-12-31"])
def test_the_ends_of_the_range_still_plan(day, capsys):
    from tests.conftest import COURIER
    for command in ("list", "risk", "week"):
        assert main([command, str(COURIER), "--as-of", day]) == 0, command
    capsys.readouterr()


@pytest.mark.parametrize("text", ["2101-01-01", "9999-12-31", "1949-12-31"])
def test_a_form_date_outside_the_files_years_is_refused(text):
    from planner.tui.forms import FormField, convert
    with pytest.raises(ValueError, match="1950-01-01 to 2100-12-31"):
        convert(FormField("as_of", "plan as of", "date", required=True), text)


def test_the_ui_date_dialog_refuses_a_year_the_file_refuses():
    from textual.widgets import Input

    from tests.test_tui_support import SMALL, make_app, opened, screen_name, sync, text_of, until

    @sync
    async def run() -> None:
        app = make_app()
        async with app.run_test(size=SMALL) as pilot:
            await opened(pilot)
            await pilot.press("d")
            await until(pilot, lambda: screen_name(app) == "FormScreen")
            app.screen.query_one("#f-as_of", Input).value = "9999-12-31"
            await pilot.press("enter")
            await pilot.pause()
            assert screen_name(app) == "FormScreen"  # not applied
            assert "1950-01-01 to 2100-12-31" in text_of(app.screen.query_one("#problems"))
            assert app.session.as_of == AS_OF

    run()


# -- property: any law in the settings' ranges, or a fit however steep, gives finite figures --

SHAPES = st.floats(0.5, 20.0)
SHARES = st.floats(0.0001, 0.5)
FIT_SHAPES = st.floats(0.5, 1e5)  # a fit is bounded by no range (its finder stops at 1e7)
AGES = st.floats(0.0, 50.0)  # life used, in intervals


@settings(max_examples=200, deadline=None)
@given(SHAPES, SHARES, AGES, st.floats(0.0, 10.0))
def test_probabilities_in_the_ranges_are_finite_and_in_0_1(beta, share, u_now, more):
    eta = eta_from_share(share, beta)
    assert math.isfinite(eta) and eta > 0
    p = conditional_failure(u_now, u_now + more, beta, eta)
    assert 0.0 <= p <= 1.0


@settings(max_examples=200, deadline=None)
@given(FIT_SHAPES, st.floats(0.05, 5.0), st.floats(0.01, 3.0), AGES, st.floats(0.0, 10.0))
def test_a_steep_law_gives_a_finite_integral_cost_and_probability(beta, eta, u, u_now, more):
    life = _life_integral(u, beta, eta)
    # the integral of R over [0, u] lies between u R(u) and u (R falls from 1)
    assert 0.0 < life <= u * (1 + 1e-12)
    rate = age_replacement_cost_rate(u, beta, eta, 300.0, 3300.0)
    assert math.isfinite(rate) and rate > 0
    assert 0.0 <= conditional_failure(u_now, u_now + more, beta, eta) <= 1.0


def test_the_ui_at_the_edges_of_the_ranges_opens_the_week_and_about(tmp_path):
    from tests.test_tui_support import SMALL, make_app, opened, screen_name, sync, until

    # Shape 20, half failed by the interval, a half-hour bay day: the 3 h job of the header's
    # profile needs 6 working days, more than the week's 5, so it is listed as too long.
    header = HEADER + ("\n[risk]\nshape = 20.0\nshare_failed_at_interval = 0.5\n"
                       "\n[workshop]\nhours_per_day = 0.5\n")
    path = tmp_path / "fleet.toml"
    body = VEHICLE.replace("2024-01-01", "2021-01-01")  # age limit passed: overdue
    path.write_text(fleet_text(body, header), encoding="utf-8")

    @sync
    async def run() -> None:
        app = make_app(path)
        async with app.run_test(size=SMALL) as pilot:
            await opened(pilot)
            assert screen_name(app) == "MainScreen"
            await pilot.press("w")
            await until(pilot, lambda: screen_name(app) == "WeekScreen", what="week view")
            week = app.week_state().plan()
            assert [(u.job.vehicle_id, u.reason) for u in week.unplaced] == [
                ("V1", "longer than the window's working days")]
            await pilot.press("escape")
            await until(pilot, lambda: screen_name(app) == "MainScreen", what="back")
            await pilot.press("i")
            await until(pilot, lambda: screen_name(app) == "AboutScreen", what="about")
        assert app.return_code in (None, 0)

    run()
