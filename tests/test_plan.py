"""The planning rules, each on a small fleet whose answer is worked out by hand."""

from __future__ import annotations

import datetime as dt

import numpy as np
from dateutil.relativedelta import relativedelta
from hypothesis import given
from hypothesis import strategies as st

from planner.plan import (
    Consequence,
    IntervalBasis,
    Limit,
    Status,
    add_months,
    plan_fleet,
    plan_vehicle,
    usage,
)
from tests.conftest import AS_OF, HEADER, make_fleet


def plan_one(body: str, as_of: dt.date = AS_OF, header: str | None = None):
    fleet = make_fleet(body) if header is None else make_fleet(body, header)
    return plan_vehicle(fleet.vehicles[0], fleet, as_of)


def test_time_limit_decides_for_a_low_mileage_vehicle():
    # Rubber ages when parked: 60 months from 2022-01-15 is 2027-01-15, long before 100,000 km
    # (whichever comes first: common practice, no source).
    p = plan_one("""
        [[vehicles]]
        id = "A"
        engine = "belt"
        in_service = 2022-01-15
        readings = [{ date = 2025-12-10, odometer = 20000 }, { date = 2026-12-01, odometer = 25000 }]
    """)
    assert p.deciding_limit is Limit.TIME
    assert p.time_due_date == dt.date(2027, 1, 15)
    assert p.due_date == dt.date(2027, 1, 15)
    assert p.days_remaining == 39
    assert p.status is Status.NEAR_LIMIT  # 39 days <= 60 days
    assert p.distance_remaining > 70000


def test_distance_limit_decides_for_a_high_mileage_vehicle():
    # Three values on one line of 100 km/day (by hand: 36,500 km in 365 days, 33,000 in 330),
    # so every weighting fits that line; est. on 2026-12-07 = 93,000 + 10 x 100. Due at
    # 23,500 + 76,500 = 100,000: 6,000 km left = exactly 60 days.
    p = plan_one("""
        [[vehicles]]
        id = "B"
        engine = "belt"
        interval_distance = 76500
        in_service = 2025-01-01
        in_service_odometer = 23500
        readings = [{ date = 2026-01-01, odometer = 60000 }, { date = 2026-11-27, odometer = 93000 }]
    """)
    assert abs(p.usage.daily_distance - 100.0) < 1e-9
    assert abs(p.usage.est_odometer - 94000) < 1e-6
    assert abs(p.distance_remaining - 6000) < 1e-6
    assert p.distance_due_date == AS_OF + dt.timedelta(days=60)
    assert p.deciding_limit is Limit.DISTANCE
    assert p.due_date == p.distance_due_date
    assert p.time_due_date == dt.date(2030, 1, 1)


def test_overdue_when_either_limit_is_reached():
    by_distance = plan_one("""
        [[vehicles]]
        id = "C"
        engine = "belt"
        in_service = 2025-01-01
        readings = [{ date = 2026-01-01, odometer = 70000 }, { date = 2026-12-01, odometer = 101000 }]
    """)
    assert by_distance.status is Status.OVERDUE
    assert by_distance.distance_remaining < 0
    assert by_distance.due_date < AS_OF
    on_the_day = plan_one("""
        [[vehicles]]
        id = "D"
        engine = "belt"
        in_service = 2021-12-07
        readings = [{ date = 2026-01-01, odometer = 1000 }, { date = 2026-12-01, odometer = 2000 }]
    """)
    # 60 months from 2021-12-07 is 2026-12-07: the limit is reached on the planning date.
    assert on_the_day.time_due_date == AS_OF
    assert on_the_day.status is Status.OVERDUE
    assert any("sudden engine stop" in n for n in on_the_day.notes)


def test_near_limit_by_distance_alone():
    p = plan_one("""
        [[vehicles]]
        id = "E"
        engine = "belt"
        in_service = 2025-06-01
        readings = [{ date = 2026-06-01, odometer = 80000 }, { date = 2026-12-07, odometer = 96000 }]
    """)
    assert 0 < p.distance_remaining <= 5000
    assert p.status is Status.NEAR_LIMIT


def test_severe_duty_uses_the_severe_interval():
    p = plan_one("""
        [[vehicles]]
        id = "S"
        engine = "belt"
        duty = "severe"
        in_service = 2024-01-01
        readings = [{ date = 2026-01-01, odometer = 30000 }, { date = 2026-12-01, odometer = 50000 }]
    """)
    assert p.spec.interval_basis is IntervalBasis.SEVERE
    assert p.spec.interval_distance == 80000
    assert p.spec.interval_months == 48
    assert p.time_due_date == dt.date(2028, 1, 1)
    assert any("severe-service interval is in force" in n for n in p.notes)


def test_severe_duty_without_a_severe_interval_says_so():
    p = plan_one("""
        [[vehicles]]
        id = "S2"
        drive = "belt"
        interference = "interference"
        interval_distance = 100000
        interval_months = 60
        duty = "severe"
        in_service = 2024-01-01
        readings = [{ date = 2026-01-01, odometer = 30000 }, { date = 2026-12-01, odometer = 50000 }]
    """)
    assert p.spec.interval_basis is IntervalBasis.SEVERE_UNKNOWN
    assert p.spec.interval_distance == 100000
    assert p.status is Status.MISSING_FACT
    assert "the maker's severe-service interval" in p.notes[0]


def test_unknown_history_is_no_record():
    p = plan_one("""
        [[vehicles]]
        id = "U"
        engine = "belt"
        belt_history = "unknown"
        in_service = 2026-03-01
        in_service_odometer = 88000
        readings = [{ date = 2026-11-01, odometer = 95000 }]
    """)
    assert p.status is Status.NO_RECORD
    assert p.install is None and p.due_date is None
    assert any("replace on acquisition" in n for n in p.notes)
    # Risk assumes a belt as old as the vehicle: the whole odometer counts (field notes).
    assert p.life_used is not None and p.life_used > 0.95


def test_unknown_history_with_a_recorded_job_is_planned_from_the_job():
    p = plan_one("""
        [[vehicles]]
        id = "U2"
        engine = "belt"
        belt_history = "unknown"
        in_service = 2025-03-01
        in_service_odometer = 88000
        readings = [{ date = 2026-11-01, odometer = 99000 }]
        [[vehicles.belt_jobs]]
        date = 2025-03-10
        odometer = 88100
        reason = "precaution"
    """)
    assert p.status is Status.OK
    assert p.install.date == dt.date(2025, 3, 10)
    assert p.due_odometer == 188100


def test_unknown_interference_is_unverified_and_a_diesel_gets_the_note():
    p = plan_one("""
        [[vehicles]]
        id = "X"
        fuel = "diesel"
        drive = "belt"
        interference = "unknown"
        interval_distance = 100000
        interval_months = 60
        in_service = 2024-01-01
    """)
    assert p.consequence is Consequence.UNVERIFIED
    assert p.consequence.severe  # ordered and costed as engine damage
    assert any("diesels" in n and "interference" in n for n in p.notes)


def test_missing_interference_is_planned_as_unverified():
    p = plan_one("""
        [[vehicles]]
        id = "X2"
        drive = "belt"
        interval_distance = 100000
        interval_months = 60
        in_service = 2024-01-01
    """)
    assert p.consequence is Consequence.UNVERIFIED
    assert any("not recorded" in n for n in p.notes)


def test_chain_and_gear_are_on_condition():
    fleet = make_fleet("""
        [[vehicles]]
        id = "CH"
        drive = "chain"
        interference = "interference"
        in_service = 2010-01-01
        [[vehicles]]
        id = "GR"
        drive = "gear"
        interference = "non-interference"
        in_service = 2010-01-01
    """)
    for p in plan_fleet(fleet, AS_OF):
        assert p.status is Status.ON_CONDITION
        assert p.due_date is None and p.days_remaining is None
    chain = next(p for p in plan_fleet(fleet, AS_OF) if p.id == "CH")
    assert any("on condition" in n for n in chain.notes)


def test_vehicle_fields_override_the_profile():
    p = plan_one("""
        [[vehicles]]
        id = "O"
        engine = "belt"
        interval_months = 36
        interference = "non-interference"
        in_service = 2024-01-10
    """)
    assert p.spec.interval_months == 36          # vehicle's own
    assert p.spec.interval_distance == 100000    # profile's
    assert p.consequence is Consequence.BREAKDOWN
    assert p.time_due_date == dt.date(2027, 1, 10)


def test_no_usage_data():
    p = plan_one("""
        [[vehicles]]
        id = "N"
        engine = "belt"
        in_service = 2026-11-30
    """)
    assert p.usage.daily_distance is None
    assert p.distance_due_date is None
    assert any("no usage data" in n for n in p.notes)


def test_default_daily_distance_is_used_when_readings_are_too_few():
    header_with_default = HEADER.replace(
        "near_limit_days = 60", "near_limit_days = 60\ndefault_daily_distance = 50")
    p = plan_one("""
        [[vehicles]]
        id = "N2"
        engine = "belt"
        in_service = 2026-11-30
        in_service_odometer = 1000
    """, header=header_with_default)
    assert p.usage.daily_distance == 50
    assert abs(p.usage.est_odometer - (1000 + 7 * 50)) < 1e-9
    assert any("fleet default" in n for n in p.notes)


def test_stale_reading_is_noted():
    p = plan_one("""
        [[vehicles]]
        id = "ST"
        engine = "belt"
        in_service = 2024-01-01
        readings = [{ date = 2025-06-01, odometer = 20000 }, { date = 2026-05-01, odometer = 30000 }]
    """)
    assert any("220 days old" in n for n in p.notes)  # 2026-05-01 -> 2026-12-07 = 220 days


def test_records_after_the_planning_date_are_ignored():
    p = plan_one("""
        [[vehicles]]
        id = "F"
        engine = "belt"
        in_service = 2024-01-01
        readings = [{ date = 2026-01-01, odometer = 30000 }, { date = 2027-06-01, odometer = 90000 }]
        [[vehicles.belt_jobs]]
        date = 2027-05-01
        odometer = 85000
        reason = "scheduled"
    """)
    assert p.install.date == dt.date(2024, 1, 1)
    assert p.usage.last_date == dt.date(2026, 1, 1)
    assert any("2 records dated after the planning date" in n for n in p.notes)


def test_month_end_and_leap_day_clipping():
    # python-dateutil relativedelta semantics (calendar months, clipped to the month's end).
    assert add_months(dt.date(2024, 2, 29), 36) == dt.date(2027, 2, 28)
    assert add_months(dt.date(2024, 2, 29), 48) == dt.date(2028, 2, 29)
    assert add_months(dt.date(2023, 8, 31), 6) == dt.date(2024, 2, 29)  # by hand: leap year
    p = plan_one("""
        [[vehicles]]
        id = "L"
        engine = "belt"
        interval_months = 36
        in_service = 2024-02-29
    """)
    assert p.time_due_date == dt.date(2024, 2, 29) + relativedelta(months=36)


@given(st.dates(dt.date(1990, 1, 1), dt.date(2090, 1, 1)), st.integers(1, 240))
def test_add_months_matches_dateutil(start, months):
    # Reference: python-dateutil relativedelta (general-purpose library).
    assert add_months(start, months) == start + relativedelta(months=months)


def test_usage_rate_matches_a_reference_weighted_fit():
    fleet = make_fleet("""
        [[vehicles]]
        id = "R"
        engine = "belt"
        in_service = 2020-01-01
        readings = [
          { date = 2025-12-20, odometer = 50000 },
          { date = 2026-02-11, odometer = 53900 },
          { date = 2026-05-03, odometer = 61250 },
          { date = 2026-08-29, odometer = 69800 },
          { date = 2026-11-30, odometer = 77020 },
        ]
    """)
    v = fleet.vehicles[0]
    u = usage(v, fleet, AS_OF)
    # Reference: numpy.polyfit with weights; numpy's w multiplies the unsquared residual, so the
    # weights 2^(-age/180) go in as square roots (numpy.polyfit documentation). Every value
    # counts, the in-service one of 2020 too (with a weight of about 2^-13).
    days = [v.in_service.toordinal()] + [r.date.toordinal() for r in v.readings]
    odos = [0.0] + [r.odometer for r in v.readings]
    x = np.array(days, dtype=float) - days[-1]
    slope, _ = np.polyfit(x, odos, 1, w=np.sqrt(2.0 ** (x / 180)))
    assert abs(u.daily_distance - slope) < 1e-9
    assert u.basis == "fit of 6 values, weight halving every 180 days back from 2026-11-30"


def test_an_old_value_counts_less_but_still_counts():
    # Two recent values 183 days apart at 18,250 km (99.7 km/day), and the 2018 and 2019 values:
    # the old 365-day window dropped those; now the 2019 one weighs 2^(-2891/180), about 1.5e-5
    # of the latest (the 2018 one less), so they pull the rate only a little, and down: they lie
    # above the recent line extended back (5,000 km in 2019 against about -170,000).
    fleet = make_fleet("""
        [[vehicles]]
        id = "W"
        engine = "belt"
        in_service = 2018-01-01
        readings = [
          { date = 2019-01-01, odometer = 5000 },
          { date = 2026-06-01, odometer = 100000 },
          { date = 2026-12-01, odometer = 118250 },
        ]
    """)
    u = usage(fleet.vehicles[0], fleet, AS_OF)
    assert 18250 / 183 - 5 < u.daily_distance < 18250 / 183


def test_default_order_puts_engine_damage_first_within_a_status():
    fleet = make_fleet("""
        [[vehicles]]
        id = "late-breakdown"
        engine = "belt"
        interference = "non-interference"
        in_service = 2020-01-01
        [[vehicles]]
        id = "ok"
        engine = "belt"
        in_service = 2026-01-01
        [[vehicles]]
        id = "late-damage"
        engine = "belt"
        in_service = 2021-06-01
        [[vehicles]]
        id = "chain"
        drive = "chain"
        in_service = 2010-01-01
        [[vehicles]]
        id = "used"
        engine = "belt"
        belt_history = "unknown"
        in_service = 2026-01-01
    """)
    order = [p.id for p in plan_fleet(fleet, AS_OF)]
    assert order == ["late-damage", "late-breakdown", "used", "ok", "chain"]
