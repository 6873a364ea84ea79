"""The usage projection and the distance due date: a function of the records, never of the
planning date; never before the belt or the vehicle; the same in miles and in km."""

from __future__ import annotations

import datetime as dt
import math

import numpy as np
import pytest
from dateutil.relativedelta import relativedelta
from hypothesis import HealthCheck, assume, example, given, settings
from hypothesis import strategies as st

from planner.fileio import parse_fleet_text
from planner.plan import (
    Limit,
    Status,
    distance_limit_on_record,
    plan_fleet,
    plan_vehicle,
    usage,
)
from tests.conftest import AS_OF, COURIER, GARAGE, make_fleet

MI_TO_KM = 1.609344  # exactly (NIST SP 811, Appendix B: international mile, 1959)
HALF_LIFE = 180      # days; the rule stated in the README


def plan_one(body: str, as_of: dt.date = AS_OF):
    fleet = make_fleet(body)
    return plan_vehicle(fleet.vehicles[0], fleet, as_of)


# ------------------------------------------------------------------------------------------
# The reference fit: numpy.polyfit with weights. numpy's `w` multiplies the unsquared residual
# (numpy.polyfit documentation: "the weight w[i] applies to the unsquared residual"), so the
# weights of a weighted least-squares fit go in as their square roots. Checked by hand first:

def test_numpy_polyfit_takes_the_square_root_of_the_weights():
    # By hand: x = 0, 1, 2; y = 0, 1, 3; weights 1, 1, 2. Sw = 4, mean x = 5/4, mean y = 7/4;
    # Sxy = 1(-5/4)(-7/4) + 1(-1/4)(-3/4) + 2(3/4)(5/4) = 68/16; Sxx = (25 + 1 + 18)/16 = 44/16;
    # slope = 68/44 = 17/11; intercept = 7/4 - (17/11)(5/4) = -2/11.
    slope, intercept = np.polyfit([0, 1, 2], [0, 1, 3], 1, w=np.sqrt([1, 1, 2]))
    assert slope == pytest.approx(17 / 11, rel=1e-12)
    assert intercept == pytest.approx(-2 / 11, abs=1e-12)


def test_weighted_rate_by_hand():
    # Values 180 and 360 days before the latest (2026-11-30) weigh 1/2 and 1/4 (halving every
    # 180 days). Scaled by 4: weights 1, 2, 4 at x = -360, -180, 0; y = 0, 18000, 27000 (from
    # 40,000). Sw = 7, mean x = -720/7, mean y = 144000/7.
    # Sxx = 1(360^2) + 2(180^2) - 7(720/7)^2 = 194400 - 518400/7 = 842400/7.
    # Sxy = 2(-180)(18000) - 7(-720/7)(144000/7) = -6480000 + 103680000/7 = 58320000/7.
    # Slope = 58320000/842400 = 900/13 km/day; line on 2026-11-30: 144000/7 + (900/13)(720/7)
    # = 360000/13 above 40,000 (= 67,692.3, above the reading of 67,000). Unweighted OLS would
    # give 75 km/day.
    p = plan_one("""
        [[vehicles]]
        id = "H"
        engine = "belt"
        in_service = 2025-12-05
        in_service_odometer = 40000
        readings = [{ date = 2026-06-03, odometer = 58000 }, { date = 2026-11-30, odometer = 67000 }]
    """)
    assert p.usage.daily_distance == pytest.approx(900 / 13, rel=1e-12)
    # Estimate on 2026-12-07, 7 days on: 40000 + (360000 + 7 x 900)/13.
    assert p.usage.est_odometer == pytest.approx(40000 + 366300 / 13, rel=1e-12)
    # Due at 140,000: 360000 + 900k >= 1,300,000 -> k >= 1044.4 -> day 1045 after 2026-11-30
    # (the first day the limit is reached) = 2029-10-10 (by hand: +731 to 2028-11-30, +314).
    assert p.distance_due_date == dt.date(2029, 10, 10)
    assert p.deciding_limit is Limit.DISTANCE  # age: 2025-12-05 + 60 months = 2030-12-05


# ------------------------------------------------------------------------------------------
# Generated vehicles

@st.composite
def histories(draw, max_readings: int = 8):
    """A vehicle's dated odometer values: (in service, odometer, [(date, odometer), ...])."""
    start = draw(st.dates(dt.date(2015, 1, 1), dt.date(2025, 1, 1)))
    odo = draw(st.integers(0, 200_000))
    n = draw(st.integers(1, max_readings))
    day, value, readings = start, odo, []
    for _ in range(n):
        day += dt.timedelta(days=draw(st.integers(1, 400)))
        value += draw(st.integers(0, 60_000))
        readings.append((day, value))
    return start, odo, readings


def vehicle_text(start, odo, readings, interval=100_000, months=120, extra="") -> str:
    rows = ", ".join(f"{{ date = {d.isoformat()}, odometer = {o!r} }}" for d, o in readings)
    return f"""
        [[vehicles]]
        id = "G"
        drive = "belt"
        interference = "interference"
        interval_distance = {interval!r}
        interval_months = {months}
        in_service = {start.isoformat()}
        in_service_odometer = {odo!r}
        readings = [{rows}]
        {extra}
    """


def _points(start, odo, readings):
    return [(start, odo), *readings]


@given(histories())
def test_rate_matches_a_reference_weighted_fit(history):
    start, odo, readings = history
    points = _points(*history)
    assume((points[-1][0] - points[0][0]).days >= 14)
    fleet = make_fleet(vehicle_text(start, odo, readings))
    u = usage(fleet.vehicles[0], fleet, points[-1][0])
    last = points[-1][0].toordinal()
    x = np.array([d.toordinal() - last for d, _ in points], dtype=float)
    y = np.array([o for _, o in points], dtype=float)
    w = 2.0 ** (x / HALF_LIFE)
    # Reference: numpy.polyfit, weights as square roots (see the hand-worked check above).
    slope, intercept = np.polyfit(x, y, 1, w=np.sqrt(w))
    scale = max(1.0, float(np.ptp(y)))
    assert u.daily_distance == pytest.approx(max(slope, 0.0), abs=1e-7 * scale)
    # The projection starts from the fitted line on the latest date, never below the latest
    # value; on that day itself the estimate is the value read.
    assert u.line_odometer == pytest.approx(max(intercept, y[-1]), abs=1e-7 * scale)
    assert u.est_odometer == y[-1]


@given(histories(), st.integers(1, 400))
def test_a_latest_value_above_the_line_projects_on_from_that_value(history, after):
    # Use has picked up: the latest value lies above the fitted line. The estimate runs on from
    # that value at the fitted rate (never pausing until the line catches up, which would date
    # the limit later than the reading allows).
    start, odo, readings = history
    points = _points(*history)
    assume((points[-1][0] - points[0][0]).days >= 14)
    last = points[-1][0].toordinal()
    x = np.array([d.toordinal() - last for d, _ in points], dtype=float)
    y = np.array([o for _, o in points], dtype=float)
    # Reference: numpy.polyfit, weights as square roots.
    slope, intercept = np.polyfit(x, y, 1, w=np.sqrt(2.0 ** (x / HALF_LIFE)))
    scale = max(1.0, float(np.ptp(y)))
    assume(slope > 0 and y[-1] > intercept + 1e-6 * scale)
    fleet = make_fleet(vehicle_text(start, odo, readings))
    as_of = points[-1][0] + dt.timedelta(days=after)
    u = usage(fleet.vehicles[0], fleet, as_of)
    assert u.est_odometer == pytest.approx(y[-1] + slope * after, abs=1e-6 * scale)


def _fit_quantities(p):
    return (p.usage.daily_distance, p.due_odometer, p.distance_due_date, p.time_due_date,
            p.due_date, p.deciding_limit)


@given(histories(), st.integers(0, 200), st.integers(1, 2000))
def test_a_later_planning_date_alone_never_moves_a_due_date(history, after, later):
    start, odo, readings = history
    fleet = make_fleet(vehicle_text(start, odo, readings))
    first = readings[-1][0] + dt.timedelta(days=after)
    second = first + dt.timedelta(days=later)
    a = plan_vehicle(fleet.vehicles[0], fleet, first)
    b = plan_vehicle(fleet.vehicles[0], fleet, second)
    assert _fit_quantities(a) == _fit_quantities(b)


@given(histories(), st.integers(1, 300), st.integers(0, 100))
# 2.7 km/day: the limit lies about a century ahead, where "no distance due date" begins.
@example((dt.date(2015, 1, 1), 0, [(dt.date(2015, 9, 20), 712)]), 11, 0)
def test_a_reading_on_the_fitted_line_changes_nothing(history, gap, after):
    start, odo, readings = history
    points = _points(*history)
    assume((points[-1][0] - points[0][0]).days >= 14)
    last = points[-1][0].toordinal()
    x = np.array([d.toordinal() - last for d, _ in points], dtype=float)
    y = np.array([o for _, o in points], dtype=float)
    # The line from the reference fit (numpy.polyfit, square-root weights), not from the code.
    slope, intercept = np.polyfit(x, y, 1, w=np.sqrt(2.0 ** (x / HALF_LIFE)))
    assume(slope > 0)
    on_line = float(intercept + slope * gap)
    assume(on_line >= y[-1])       # odometers only go forward
    # The projection runs from the fitted line where the latest value is not above it (a latest
    # value above the line is the case of the next test).
    assume(y[-1] <= intercept)
    due_odometer = odo + 100_000
    assume(on_line < due_odometer - 1)  # a reading past the limit dates it from the readings
    new_day = points[-1][0] + dt.timedelta(days=gap)
    as_of = new_day + dt.timedelta(days=after)
    before = make_fleet(vehicle_text(start, odo, readings))
    with_new = make_fleet(vehicle_text(start, odo, [*readings, (new_day, on_line)]))
    a = plan_vehicle(before.vehicles[0], before, as_of)
    b = plan_vehicle(with_new.vehicles[0], with_new, as_of)
    scale = max(1.0, float(np.ptp(y)))
    assert b.usage.daily_distance == pytest.approx(a.usage.daily_distance, abs=1e-7 * scale)
    assert b.usage.est_odometer == pytest.approx(a.usage.est_odometer, abs=1e-6 * scale)
    if (a.distance_due_date, a.due_date, a.status) != (b.distance_due_date, b.due_date,
                                                       b.status):
        # Only where the line crosses the limit within rounding of a whole day (the same line,
        # fitted again from other values, may then land a bit either side of midnight).
        crossing = (due_odometer - 0.1 - (intercept + slope * gap)) / slope  # days after
        assert abs(crossing - round(crossing)) < 1e-6, crossing
        assert abs((b.distance_due_date - a.distance_due_date).days) == 1


@given(histories(), st.integers(0, 400))
def test_a_due_date_never_lies_before_the_belt_or_the_vehicle(history, after):
    start, odo, readings = history
    fleet = make_fleet(vehicle_text(start, odo, readings, interval=20_000))
    p = plan_vehicle(fleet.vehicles[0], fleet, readings[-1][0] + dt.timedelta(days=after))
    if p.distance_due_date is not None:
        assert p.distance_due_date >= start
        assert p.distance_due_date >= p.install.date
    assert p.due_date >= start


@given(histories(), st.integers(0, 400))
def test_on_its_due_date_a_belt_is_overdue_whichever_limit_decides(history, after):
    start, odo, readings = history
    fleet = make_fleet(vehicle_text(start, odo, readings, months=48))
    last = readings[-1][0]
    first = plan_vehicle(fleet.vehicles[0], fleet, last + dt.timedelta(days=after))
    due = first.due_date
    assume(due - dt.timedelta(days=1) >= last)  # no record between the two planning dates
    on_it = plan_vehicle(fleet.vehicles[0], fleet, due)
    day_before = plan_vehicle(fleet.vehicles[0], fleet, due - dt.timedelta(days=1))
    assert on_it.status is Status.OVERDUE
    assert day_before.status is not Status.OVERDUE
    assert on_it.due_date == day_before.due_date == due


# ------------------------------------------------------------------------------------------
# The shipped examples at a run of planning dates

def _record_dates(vehicle) -> list[dt.date]:
    return [vehicle.in_service, *(r.date for r in vehicle.readings),
            *(j.date for j in vehicle.belt_jobs)]


@pytest.mark.parametrize("path", [COURIER, GARAGE], ids=["courier", "garage"])
def test_the_examples_keep_their_due_dates_while_no_record_is_added(path):
    fleet = parse_fleet_text(path.read_text(encoding="utf-8"), path.name)
    days = [dt.date(2026, 6, 1) + dt.timedelta(days=5 * k) for k in range(80)]  # to 2027-08
    plans = {d: {p.id: p for p in plan_fleet(fleet, d)} for d in days}
    compared = 0
    for v in fleet.vehicles:
        records = _record_dates(v)
        for d1, d2 in zip(days, days[1:], strict=False):
            if any(d1 < r <= d2 for r in records):
                continue
            a, b = plans[d1][v.id], plans[d2][v.id]
            assert (a.due_date, a.distance_due_date, a.due_odometer) == \
                (b.due_date, b.distance_due_date, b.due_odometer), (v.id, d1, d2)
            compared += 1
    assert compared > len(fleet.vehicles) * 50  # the records leave most pairs to compare


# ------------------------------------------------------------------------------------------
# A limit passed long ago: dated between the two values that bracket it

def test_a_limit_passed_long_ago_is_dated_between_the_values_around_it():
    # In service 2014-03-01 at 0; 120,000 by 2016-03-01 (731 days, 2016-02-29 included); the
    # 100,000 limit is 5/6 of the way: 731 x 5/6 = 609.17 days -> the first day it is reached
    # is day 610 = 2015-11-01 (2014-03-01 + 365 = 2015-03-01, + 245 = 2015-11-01).
    # Projecting back from today's rate (600 km in 28 days) would put it in 2001.
    p = plan_one("""
        [[vehicles]]
        id = "OLD"
        drive = "belt"
        interference = "interference"
        interval_distance = 100000
        interval_months = 240
        in_service = 2014-03-01
        readings = [
          { date = 2016-03-01, odometer = 120000 },
          { date = 2026-11-01, odometer = 300000 },
          { date = 2026-11-29, odometer = 300600 },
        ]
    """)
    assert p.distance_due_date == dt.date(2015, 11, 1)
    assert p.due_date == dt.date(2015, 11, 1)
    assert p.deciding_limit is Limit.DISTANCE
    assert p.status is Status.OVERDUE
    assert p.notes[0].endswith("reached 2015-11-01, between two recorded values")


# ------------------------------------------------------------------------------------------
# Rounding: the due date is the first day the limit is reached, for both limits

ROUNDING = """
    [[vehicles]]
    id = "RD"
    engine = "belt"
    interval_distance = 100050
    in_service = 2025-01-01
    in_service_odometer = 23500
    readings = [{ date = 2026-01-01, odometer = 60000 }, { date = 2026-11-27, odometer = 93000 }]
"""


def test_a_distance_due_date_is_the_first_day_the_limit_is_reached():
    # Three values on one line of 100 km/day (365 days x 100 = 36,500; 330 x 100 = 33,000), so
    # any weights give that line. Due at 23,500 + 100,050 = 123,550; on 2026-12-07 the estimate
    # is 94,000, 29,550 left = 295.5 days: the first whole day at or past it -> AS_OF + 296.
    due = AS_OF + dt.timedelta(days=296)
    p = plan_one(ROUNDING)
    assert p.usage.daily_distance == pytest.approx(100.0, rel=1e-12)
    assert p.distance_due_date == due and p.deciding_limit is Limit.DISTANCE
    on_it = plan_one(ROUNDING, due)
    day_before = plan_one(ROUNDING, due - dt.timedelta(days=1))
    assert on_it.status is Status.OVERDUE and on_it.due_date == due
    assert day_before.status is Status.NEAR_LIMIT          # 50 km left (by hand)
    assert day_before.distance_remaining == pytest.approx(50.0, abs=1e-6)


def test_an_age_due_date_is_overdue_on_the_day_and_not_before():
    body = """
        [[vehicles]]
        id = "AG"
        engine = "belt"
        in_service = 2022-03-31
        readings = [{ date = 2026-01-01, odometer = 20000 }]
    """
    due = dt.date(2027, 3, 31)  # 2022-03-31 + 60 months (dateutil relativedelta semantics)
    assert plan_one(body, due).status is Status.OVERDUE
    assert plan_one(body, due - dt.timedelta(days=1)).status is Status.NEAR_LIMIT


# ------------------------------------------------------------------------------------------
# Miles and kilometres: the same statuses, dates and limits

def test_a_threshold_met_exactly_reads_the_same_in_both_units():
    # In miles: due at 82,900 + 17,103 = 100,003; the latest value 97,503 lies above the fitted
    # line (use sped up), so the estimate is 97,503 and exactly 2,500 mi are left: near-limit
    # (distance left <= 2,500). Converted, 4,023.36 km left against a 4,023.36 km threshold
    # (in floating point the difference comes out as 4,023.360000000015).
    def fleet_in(factor: float, unit: str):
        header = f"""\
schema = 1
[fleet]
name = "Units"
distance_unit = "{unit}"
near_limit_distance = {2500 * factor!r}
near_limit_days = 60
"""
        return make_fleet(f"""
            [[vehicles]]
            id = "U"
            drive = "belt"
            interference = "interference"
            interval_distance = {17103 * factor!r}
            interval_months = 120
            in_service = 2022-12-07
            in_service_odometer = {80000 * factor!r}
            readings = [{{ date = 2026-12-07, odometer = {97503 * factor!r} }}]
            [[vehicles.belt_jobs]]
            date = 2024-12-07
            odometer = {82900 * factor!r}
            reason = "scheduled"
        """, header)

    mi, km = fleet_in(1.0, "mi"), fleet_in(MI_TO_KM, "km")
    a = plan_vehicle(mi.vehicles[0], mi, AS_OF)
    b = plan_vehicle(km.vehicles[0], km, AS_OF)
    assert a.distance_remaining == pytest.approx(2500, abs=1e-6)
    assert a.status is Status.NEAR_LIMIT
    assert b.status is Status.NEAR_LIMIT


@st.composite
def unit_fleets(draw):
    start, odo, readings = draw(histories(max_readings=6))
    interval = draw(st.integers(5_000, 150_000))
    months = draw(st.integers(12, 180))
    near_distance = draw(st.integers(0, 10_000))
    near_days = draw(st.integers(0, 120))
    default = draw(st.none() | st.integers(0, 300))
    job = None
    if draw(st.booleans()):
        k = draw(st.integers(0, len(readings) - 1))
        job = readings[k]
    after = draw(st.integers(0, 3000))
    return start, odo, readings, interval, months, near_distance, near_days, default, job, after


def _unit_fleet(data, factor: float, unit: str):
    start, odo, readings, interval, months, near_distance, near_days, default, job, _ = data
    header = f"""\
schema = 1
[fleet]
name = "Units"
distance_unit = "{unit}"
near_limit_distance = {near_distance * factor!r}
near_limit_days = {near_days}
"""
    if default is not None:
        header += f"default_daily_distance = {default * factor!r}\n"
    extra = ""
    if job is not None:
        extra = f"""
        [[vehicles.belt_jobs]]
        date = {job[0].isoformat()}
        odometer = {job[1] * factor!r}
        reason = "scheduled"
        """
    scaled = [(d, o * factor) for d, o in readings]
    return make_fleet(vehicle_text(start, odo * factor, scaled, interval * factor, months, extra),
                      header)


@settings(suppress_health_check=[HealthCheck.too_slow])
@given(unit_fleets())
def test_the_same_fleet_in_miles_and_in_km_plans_the_same(data):
    # 1 mi = 1.609344 km exactly (NIST SP 811): every distance in the file converted.
    mi, km = _unit_fleet(data, 1.0, "mi"), _unit_fleet(data, MI_TO_KM, "km")
    as_of = data[2][-1][0] + dt.timedelta(days=data[-1])
    a = plan_vehicle(mi.vehicles[0], mi, as_of)
    b = plan_vehicle(km.vehicles[0], km, as_of)
    assert b.status is a.status
    assert (b.due_date, b.distance_due_date, b.time_due_date, b.deciding_limit) == \
        (a.due_date, a.distance_due_date, a.time_due_date, a.deciding_limit)
    assert b.due_odometer == pytest.approx(a.due_odometer * MI_TO_KM, rel=1e-12)
    assert math.isclose(b.distance_remaining, a.distance_remaining * MI_TO_KM,
                        rel_tol=1e-9, abs_tol=1e-6)


def test_a_fitted_line_past_the_limit_is_a_projection_not_a_record():
    # Use slowed down: 94,000 km by 2025-07-01, only 95,000 by 2025-12-01. The fitted line
    # stands above the limit of 100,000 on the latest date (reference below), the readings do
    # not: due the day after the latest reading (never on a day whose own reading is short of
    # the limit), overdue, and said to be a projection, never "between two recorded values".
    body = """
        [[vehicles]]
        id = "SL"
        engine = "belt"
        in_service = 2025-01-01
        readings = [{ date = 2025-07-01, odometer = 94000 }, { date = 2025-12-01, odometer = 95000 }]
    """
    x = np.array([-334.0, -153.0, 0.0])  # days before 2025-12-01
    # Reference: numpy.polyfit with square-root weights: about 103,069 km on 2025-12-01.
    _, on_last = np.polyfit(x, [0, 94000, 95000], 1, w=np.sqrt(2.0 ** (x / HALF_LIFE)))
    assert on_last > 100000
    p = plan_one(body, dt.date(2025, 12, 10))
    assert p.distance_due_date == dt.date(2025, 12, 2)
    assert p.status is Status.OVERDUE
    assert not distance_limit_on_record(p)
    assert "projected 2025-12-02" in p.notes[0]
    assert "recorded values" not in p.notes[0]


def test_a_previous_owners_belt_past_its_age_limit_is_due_from_entering_service():
    # A belt job from before the vehicle entered service (a previous owner's receipt): its age
    # limit, 2017-05-10 + 67 months = 2022-12-10 (dateutil's calendar months), passed before
    # the vehicle entered service on 2024-03-01. The limit's own date is kept; the vehicle's
    # due date is never before it entered service, and it is overdue.
    p = plan_one("""
        [[vehicles]]
        id = "P"
        interference = "interference"
        drive = "belt"
        interval_distance = 97300
        interval_months = 67
        in_service = 2024-03-01
        in_service_odometer = 88000
        readings = [{ date = 2026-11-01, odometer = 120000 }]
        [[vehicles.belt_jobs]]
        date = 2017-05-10
        odometer = 41000
        reason = "scheduled"
    """)
    assert dt.date(2017, 5, 10) + relativedelta(months=67) == dt.date(2022, 12, 10)
    assert p.time_due_date == p.due_date == dt.date(2024, 3, 1)
    assert p.status is Status.OVERDUE and p.deciding_limit is Limit.TIME
    assert any("age limit was reached on 2022-12-10, before the vehicle entered service" in n
               for n in p.notes)
    assert "-> 2022-12-10" in p.notes[0]  # the deciding note keeps the limit's own date


def test_a_previous_owners_belt_past_its_distance_limit_is_due_from_entering_service():
    # A previous owner's job on 2015-01-01 at 10,000 km; limit 10,000 + 90,000 = 100,000 km.
    # The vehicle entered service on 2024-01-01 at 110,000 km: the limit was passed between
    # those two values, 90,000 / 100,000 of the 3,287 days (9 years, two leap days) = 2,958.3
    # -> day 2,959 = 2023-02-07 (2015-01-01 + 2,922 days = 2023-01-01, + 37). The limit keeps
    # that date in a note; every due date of the vehicle is its in-service day.
    p = plan_one("""
        [[vehicles]]
        id = "P"
        interference = "interference"
        drive = "belt"
        interval_distance = 90000
        interval_months = 119
        in_service = 2024-01-01
        in_service_odometer = 110000
        readings = [{ date = 2026-11-01, odometer = 150000 }]
        [[vehicles.belt_jobs]]
        date = 2015-01-01
        odometer = 10000
        reason = "scheduled"
    """)
    assert (dt.date(2024, 1, 1) - dt.date(2015, 1, 1)).days == 3287
    assert p.deciding_limit is Limit.DISTANCE and p.status is Status.OVERDUE
    assert p.due_date == p.distance_due_date == dt.date(2024, 1, 1)
    assert any("distance limit was reached on 2023-02-07" in n for n in p.notes)
    # The age limit, 2015-01-01 + 119 months = 2024-12-01 (dateutil), lies after it: kept.
    assert p.time_due_date == dt.date(2015, 1, 1) + relativedelta(months=119)
