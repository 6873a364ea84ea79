"""The week plan (planner.week) on small fleets whose answer is worked out by hand.

Sources: the placement rules are common practice of workshop planning [trade, no source], as is
the order-by rule (latest working day of the workshop, lead time counted in calendar days);
every expected plan is a worked example in the comments beside it. Placement itself is tested
in tests/test_schedule.py; here the week level: candidates, job requests, bookkeeping, parts,
the call list and moves.
"""

from __future__ import annotations

import subprocess
import sys
from collections import Counter
from datetime import date, timedelta

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planner.errors import PlannerError
from planner.plan import Status
from planner.risk import assess_fleet_plan
from planner.schedule import NO_CAPACITY, PARTS_LATE, UNAVAILABLE, WorkshopCalendar
from planner.week import (
    NO_LABOUR_HOURS,
    PARTS_NOT_LISTED,
    default_start,
    move,
    order_by_date,
    plan_week,
)
from tests.conftest import HEADER, make_fleet

FRI = date(2026, 12, 4)  # planning day: a Friday
MON = date(2026, 12, 7)  # the week planned: Mon 7 .. Sun 13 December 2026
TUE, WED, THU, NEXT_FRI, SAT = (MON + timedelta(n) for n in range(1, 6))

# Overdue by age: 60 months from 2018-01-01 = 2023-01-01; 90,000 of 100,000 km.
OVERDUE = """
in_service = 2018-01-01
readings = [{ date = 2026-01-01, odometer = 80000 }, { date = 2026-11-20, odometer = 90000 }]
"""
# Due soon by age: 60 months from 2022-01-15 = 2027-01-15, 42 days after FRI (<= 60).
NEAR_LIMIT = """
in_service = 2022-01-15
readings = [{ date = 2025-12-10, odometer = 20000 }, { date = 2026-12-01, odometer = 25000 }]
"""
# Ok: 2024-01-01 + 60 months = 2029-01-01, 5,000 km used.
OK = """
in_service = 2024-01-01
readings = [{ date = 2025-12-01, odometer = 4000 }, { date = 2026-12-01, odometer = 5000 }]
"""


def workshop(bays=2, hours=8.0, lead=2, kits=False, closed=(), weekdays=None) -> str:
    text = f"[workshop]\nbays = {bays}\nhours_per_day = {hours}\nparts_lead_days = {lead}\n"
    text += f"kits_in_stock = {'true' if kits else 'false'}\n"
    if closed:
        text += "closed = [" + ", ".join(d.isoformat() for d in closed) + "]\n"
    if weekdays is not None:
        text += "weekdays = [" + ", ".join(f'"{w}"' for w in weekdays) + "]\n"
    return text


def vehicle(vid: str, hours: float | None = 3.0, cost: float = 3000.0, state: str = OVERDUE,
            extra: str = "", engine: str = "belt") -> str:
    """A vehicle block; `cost` (failure_cost) fixes its place in the triage order."""
    own = f"labour_hours = {hours}\n" if hours is not None else ""
    return (f"[[vehicles]]\nid = \"{vid}\"\nlabel = \"car {vid}\"\nengine = \"{engine}\"\n"
            f"failure_cost = {cost}\n{own}{state}{extra}\n")


def fleet_of(*blocks: str, ws: str | None = None, rate: float = 50.0, header: str = HEADER):
    head = header.replace('near_limit_days = 60\n',
                          f'near_limit_days = 60\nlabour_rate = {rate}\ncurrency = "EUR"\n')
    return make_fleet((ws if ws is not None else workshop()) + "\n" + "".join(blocks), head)


def where(week) -> dict[str, tuple]:
    """vehicle -> (bay, days, hours by day, start hour)."""
    return {b.job.vehicle_id: (b.bay, b.days, b.hours_by_day, b.start_hour)
            for b in week.bookings}


FIVE = [("A", 3.5, 5000), ("B", 6, 4000), ("C", 2, 3000), ("D", 5, 2000), ("E", 4, 1000)]


def five_jobs(**ws):
    return fleet_of(*(vehicle(v, h, c) for v, h, c in FIVE), ws=workshop(**ws))


# ---------------------------------------------------------------- worked examples (by hand)


def test_two_bays_eight_hours_five_jobs():
    # Five overdue cars, equal life used, failure costs 5000..1000 -> triage order A..E.
    # Parts ordered Fri 4 Dec, 2 days -> on hand Sun 6: Monday is fine. By hand:
    # A 3.5 Mon b1 [0, 3.5); B 6: b1 has 4.5 -> Mon b2 [0, 6); C 2 -> Mon b1 [3.5, 5.5);
    # D 5: Mon b1 2.5, b2 2 -> Tue b1 [0, 5); E 4: Tue b1 3 -> Tue b2 [0, 4).
    fleet = five_jobs()
    week = plan_week(fleet, FRI)
    assert week.start == MON and week.end == MON + timedelta(6)
    assert [j.vehicle_id for j in week.jobs] == list("ABCDE")
    assert where(week) == {
        "A": (1, (MON,), (3.5,), 0.0),
        "B": (2, (MON,), (6.0,), 0.0),
        "C": (1, (MON,), (2.0,), 3.5),
        "D": (1, (TUE,), (5.0,), 0.0),
        "E": (2, (TUE,), (4.0,), 0.0),
    }
    assert week.unplaced == ()
    days = {d.day: d for d in week.days}
    assert (days[MON].booked, days[MON].capacity, days[MON].left) == (11.5, 16.0, 4.5)
    assert (days[TUE].booked, days[TUE].left) == (9.0, 7.0)
    assert days[WED].booked == 0.0 and days[SAT].working is False and days[SAT].bays == ()
    assert [s.job.vehicle_id for s in days[MON].bays[0].segments] == ["A", "C"]
    # Totals: 20.5 h x 50 = 1025; parts 5 x 200 = 1000.
    assert week.labour_hours == 20.5 and week.labour_cost == 1025.0
    assert week.parts_cost == 1000.0 and week.total_cost == 2025.0
    assert week.capacity == 80.0  # 5 days x 2 bays x 8 h
    # Equal life used -> equal probability p for all five.
    a = assess_fleet_plan(fleet, FRI)
    p = a.risks["A"].p_fail_horizon
    assert all(abs(a.risks[v].p_fail_horizon - p) < 1e-15 for v in "BCDE")
    # All five are overdue: required jobs, costed apart, with no risk figure set against them.
    assert week.required_jobs == tuple("ACBDE") and week.required_cost == 2025.0
    assert week.near_limit_jobs == () and week.expected_loss_removed == 0
    assert "Weibull" in week.risk_assumptions and "assumed" in week.risk_assumptions


def test_job_longer_than_a_day_spans_two_days_of_one_bay():
    # One bay. L 12 h: Mon 8 h + Tue 4 h. S 3 h (next in triage): Mon full -> Tue after L's
    # 4 h: [4, 7). T 2 h: Tue 1 h left -> Wed [0, 2).
    fleet = fleet_of(vehicle("L", 12, 5000), vehicle("S", 3, 4000), vehicle("T", 2, 3000),
                     ws=workshop(bays=1))
    week = plan_week(fleet, FRI)
    assert where(week) == {
        "L": (1, (MON, TUE), (8.0, 4.0), 0.0),
        "S": (1, (TUE,), (3.0,), 4.0),
        "T": (1, (WED,), (2.0,), 0.0),
    }
    segs = week.booking("L").segments()
    assert [(s.day, s.hours, s.start_hour, s.day_index, s.day_count) for s in segs] == [
        (MON, 8.0, 0.0, 1, 2), (TUE, 4.0, 0.0, 2, 2)]
    tue = next(d for d in week.days if d.day == TUE).bays[0]
    assert [s.job.vehicle_id for s in tue.segments] == ["L", "S"] and tue.left == 1.0
    assert week.labour_hours == 17.0


def test_holiday_in_the_week():
    # Tue 8 Dec closed. One bay: X 6 h Mon; Y 6 h Wed (Tue closed); Z 12 h: Mon and Wed are
    # not empty -> Thu 8 h + Fri 4 h.  Capacity: 4 working days x 8 h = 32 h.
    fleet = fleet_of(vehicle("X", 6, 5000), vehicle("Y", 6, 4000), vehicle("Z", 12, 3000),
                     ws=workshop(bays=1, closed=[TUE]))
    week = plan_week(fleet, FRI)
    assert where(week) == {
        "X": (1, (MON,), (6.0,), 0.0),
        "Y": (1, (WED,), (6.0,), 0.0),
        "Z": (1, (THU, NEXT_FRI), (8.0, 4.0), 0.0),
    }
    tue = next(d for d in week.days if d.day == TUE)
    assert (tue.working, tue.closed, tue.bays) == (False, True, ())
    assert week.capacity == 32.0
    assert TUE not in week.schedule.working_days


def test_long_job_over_a_holiday():
    # Tue closed: a 12 h job from Monday runs Mon 8 h + Wed 4 h (the car stays in).
    fleet = fleet_of(vehicle("L", 12), ws=workshop(bays=1, closed=[TUE]))
    assert where(plan_week(fleet, FRI))["L"] == (1, (MON, WED), (8.0, 4.0), 0.0)


# ---------------------------------------------------------------- candidates and order


def test_candidates_by_include():
    # Overdue O, no-record N, near-limit D, ok K, chain C.
    chain = HEADER + """
[engines.chain]
fuel = "petrol"
drive = "chain"
interference = "interference"
labour_hours = 6.0
"""
    fleet = fleet_of(
        vehicle("O", 2, 1000),
        vehicle("N", 2, 1000, state="in_service = 2024-01-01\nbelt_history = \"unknown\"\n"
                "readings = [{ date = 2026-11-01, odometer = 90000 }]\n"),
        vehicle("D", 2, 90000, state=NEAR_LIMIT),
        vehicle("K", 2, 1000, state=OK),
        vehicle("C", 2, 1000, state=OVERDUE, engine="chain"),
        header=chain,
    )
    week = plan_week(fleet, FRI)
    statuses = {j.vehicle_id: j.status for j in week.jobs}
    assert statuses == {"O": Status.OVERDUE, "N": Status.NO_RECORD, "D": Status.NEAR_LIMIT}
    # Triage: due now (overdue, no-record) before due soon, even with a 90,000 failure cost.
    assert [j.vehicle_id for j in week.jobs][-1] == "D"
    due_now = plan_week(fleet, FRI, include="all-due")
    assert {j.vehicle_id for j in due_now.jobs} == {"O", "N"}
    assert {b.job.vehicle_id for b in due_now.bookings} == {"O", "N"}


def test_no_labour_hours_is_listed_not_dropped():
    # The header's profile has 3 h; a vehicle on a profile without hours has none.
    header = HEADER + """
[engines.nohours]
fuel = "petrol"
drive = "belt"
interference = "interference"
interval_distance = 100000
interval_months = 60
parts = ["kit"]
"""
    contact = 'contact = { name = "Ann", phone = "0100" }\n'
    fleet = fleet_of(vehicle("H", None, 9000, engine="nohours", extra=contact),
                     vehicle("W", 3, 1000), header=header)
    week = plan_week(fleet, FRI)
    assert [j.vehicle_id for j in week.jobs] == ["H", "W"]
    assert [r.key for r in week.requests] == ["W"]
    assert [(u.job.vehicle_id, u.reason) for u in week.unplaced] == [("H", NO_LABOUR_HOURS)]
    assert NO_LABOUR_HOURS == "no labour_hours set"
    call = {c.vehicle_id: c for c in week.call_list}["H"]
    assert call.booked_day is None and call.not_booked.startswith(NO_LABOUR_HOURS)
    with pytest.raises(PlannerError, match="no labour_hours set"):
        move(week, "H", MON, 1)


def test_unavailable_vehicle_waits_and_a_vehicle_away_all_week_is_listed():
    # U away Mon-Wed (customer away) -> Thu. V away Sun 6 .. Sun 13: no day -> unavailable.
    away = 'unavailable = [{ start = 2026-12-07, end = 2026-12-09, reason = "customer away" }]\n'
    gone = 'unavailable = [{ start = 2026-12-06, end = 2026-12-13, reason = "long route" }]\n'
    fleet = fleet_of(vehicle("U", 3, 5000, extra=away), vehicle("V", 3, 4000, extra=gone))
    week = plan_week(fleet, FRI)
    assert where(week) == {"U": (1, (THU,), (3.0,), 0.0)}
    (u,) = week.unplaced
    assert (u.job.vehicle_id, u.reason) == ("V", UNAVAILABLE)
    assert u.detail == "away 2026-12-06 to 2026-12-13 (long route)"


def test_parts_not_in_time_and_no_capacity():
    # Lead 10 days from Fri 4 -> parts Mon 14: after the window -> parts not in time.
    late = plan_week(fleet_of(vehicle("P", 3), ws=workshop(lead=10)), FRI)
    (u,) = late.unplaced
    assert u.reason == PARTS_LATE and "arrive on 2026-12-14" in u.detail
    # One bay, 8 h jobs: five fill Mon-Fri; the sixth (lowest in triage) has no room.
    fleet = fleet_of(*(vehicle(v, 8, 6000 - 1000 * n) for n, v in enumerate("QRSTUV")),
                     ws=workshop(bays=1, kits=True))
    full = plan_week(fleet, FRI)
    assert [b.job.vehicle_id for b in full.bookings] == list("QRSTU")
    assert [(u.job.vehicle_id, u.reason) for u in full.unplaced] == [("V", NO_CAPACITY)]
    assert full.unplaced[0].detail == "8 h needed; no bay has room for it between 2026-12-07 " \
        "and 2026-12-13"


def test_two_weeks():
    # One bay, six 8 h jobs: two weeks give Mon 7 .. Fri 11 and Mon 14 for the sixth.
    fleet = fleet_of(*(vehicle(v, 8, 6000 - 1000 * n) for n, v in enumerate("QRSTUV")),
                     ws=workshop(bays=1, kits=True))
    week = plan_week(fleet, FRI, weeks=2)
    assert week.end == date(2026, 12, 20) and len(week.days) == 14
    assert where(week)["V"] == (1, (date(2026, 12, 14),), (8.0,), 0.0)


# ---------------------------------------------------------------- parts order list


def test_parts_order_by_dates_by_hand():
    # Ordered Fri 4, lead 2. One bay, kit + pump each, jobs of 8 h: A Mon, B Tue, C Wed, D Thu.
    # Order-by = first day - 2 days, moved back to a working day, never before Fri 4:
    # A Mon 7 - 2 = Sat 5 -> Fri 4; B Tue 8 - 2 = Sun 6 -> Fri 4; C Wed 9 - 2 = Mon 7;
    # D Thu 10 - 2 = Tue 8.
    parts = 'parts = ["belt kit", "water pump"]\n'
    fleet = fleet_of(*(vehicle(v, 8, 5000 - 1000 * n, extra=parts) for n, v in enumerate("ABCD")),
                     ws=workshop(bays=1, lead=2))
    week = plan_week(fleet, FRI)
    assert [(p.order_by, p.quantity, p.part, p.vehicles) for p in week.parts_order] == [
        (FRI, 2, "belt kit", ("A", "B")),
        (FRI, 2, "water pump", ("A", "B")),
        (MON, 1, "belt kit", ("C",)),
        (MON, 1, "water pump", ("C",)),
        (TUE, 1, "belt kit", ("D",)),
        (TUE, 1, "water pump", ("D",)),
    ]
    for b in week.bookings:  # ordered by that day, the parts arrive by the first day
        by = order_by_date(b.first_day, week.calendar, FRI)
        assert by + timedelta(days=2) <= b.first_day and week.calendar.is_working(by)


def test_order_by_date_rules():
    cal = WorkshopCalendar(1, 8.0, frozenset(range(5)), frozenset({MON}), 3, False)
    assert order_by_date(NEXT_FRI, cal, FRI) == TUE  # Fri 11 - 3 = Tue 8, a working day
    assert order_by_date(THU, cal, FRI) == FRI  # Thu 10 - 3 = Mon 7, closed -> Sun, Sat -> Fri
    assert order_by_date(MON, cal, FRI) == FRI  # Mon 7 - 3 = Fri 4, the planning day itself
    assert order_by_date(MON, cal, SAT - timedelta(7)) == SAT - timedelta(7)  # never before it
    stock = WorkshopCalendar(1, 8.0, frozenset(range(5)), frozenset(), 3, True)
    assert order_by_date(THU, stock, FRI) is None


def test_kits_in_stock_and_parts_not_listed():
    # Kits on the shelf: no order-by date. A vehicle listing no parts shows "(parts not listed)".
    fleet = fleet_of(vehicle("A", 3, 5000, extra='parts = ["belt kit", "belt kit"]\n'),
                     vehicle("B", 3, 4000, extra="parts = []\n"), ws=workshop(kits=True))
    week = plan_week(fleet, FRI)
    assert [(p.part, p.quantity, p.order_by, p.in_stock) for p in week.parts_order] == [
        (PARTS_NOT_LISTED, 1, None, True), ("belt kit", 2, None, True)]
    assert any("no parts listed for B" in n for n in week.notes)
    assert any("kits in stock" in n for n in week.notes)


# ---------------------------------------------------------------- call list


def test_call_list():
    # Three cars with contacts, one without. Booked ones first by day and time, then the
    # unbooked. One bay, 8 h a day: A 6 h Mon [0, 6); B 5 h Tue [0, 5) (Mon has 2 left);
    # C (away all week) not booked; D (no contact) 2 h Mon [6, 8), not on the list.
    def contact(name, phone="", email=""):
        return f'contact = {{ name = "{name}", phone = "{phone}", email = "{email}" }}\n'

    gone = 'unavailable = [{ start = 2026-12-01, end = 2026-12-31, reason = "abroad" }]\n'
    fleet = fleet_of(
        vehicle("B", 5, 4000, state=NEAR_LIMIT, extra=contact("Bea", "0200")),
        vehicle("A", 6, 5000, extra=contact("Al", "0100", "al@example.invalid")),
        vehicle("C", 3, 3000, extra=contact("Cy", email="cy@example.invalid") + gone),
        vehicle("D", 2, 2000),
        ws=workshop(bays=1),
    )
    week = plan_week(fleet, FRI)
    assert where(week)["D"] == (1, (MON,), (2.0,), 6.0)
    rows = [(c.vehicle_id, c.name, c.phone, c.email, c.booked_day, c.bay, c.start_hour)
            for c in week.call_list]
    assert rows == [
        ("A", "Al", "0100", "al@example.invalid", MON, 1, 0.0),
        ("B", "Bea", "0200", "", TUE, 1, 0.0),
        ("C", "Cy", "", "cy@example.invalid", None, None, None),
    ]
    calls = {c.vehicle_id: c for c in week.call_list}
    assert calls["A"].due_date == date(2023, 1, 1) and calls["A"].status_words == "overdue by age"
    assert calls["B"].due_date == date(2027, 1, 15)
    assert calls["B"].status_words == "near its limit by age"
    assert calls["A"].reason.startswith("overdue: age limit decides: 60 months from 2018-01-01")
    assert calls["C"].not_booked == "vehicle unavailable in the window: away 2026-12-01 to " \
        "2026-12-31 (abroad)"


# ---------------------------------------------------------------- dates, bad values, moves


def test_default_start():
    cal = WorkshopCalendar(1, 8.0, frozenset(range(5)), frozenset({MON}), 0, False)
    assert default_start(cal, FRI) == TUE  # Sat, Sun off, Mon closed
    assert default_start(cal, TUE) == WED
    never = WorkshopCalendar(1, 8.0, frozenset(), frozenset(), 0, False)
    assert default_start(never, FRI) == FRI + timedelta(1)


def test_given_start_and_bad_values():
    fleet = five_jobs()
    assert plan_week(fleet, FRI, start=WED).start == WED
    assert plan_week(fleet, FRI, start=FRI).start == FRI  # today is allowed
    with pytest.raises(PlannerError, match="before the planning date"):
        plan_week(fleet, FRI, start=FRI - timedelta(1))
    with pytest.raises(PlannerError, match="between 1 and 52"):
        plan_week(fleet, FRI, weeks=0)
    with pytest.raises(PlannerError, match="unknown --include 'soon'"):
        plan_week(fleet, FRI, include="soon")


def test_move_redoes_totals_parts_and_calls():
    # From the five-job week: C (2 h, Mon b1 [3.5, 5.5)) to Thu b2. Its kit may now be
    # ordered by Tue 8 (Thu 10 - 2 days); Monday's bay 1 loses 2 h.
    week = plan_week(five_jobs(), FRI)
    moved = move(week, "C", THU, 2)
    assert where(moved)["C"] == (2, (THU,), (2.0,), 0.0)
    assert {k: v for k, v in where(moved).items() if k != "C"} == {
        k: v for k, v in where(week).items() if k != "C"}
    mon = next(d for d in moved.days if d.day == MON)
    assert mon.booked == 9.5 and moved.labour_hours == week.labour_hours
    assert [(p.order_by, p.quantity, p.vehicles) for p in moved.parts_order] == [
        (FRI, 4, ("A", "B", "D", "E")), (TUE, 1, ("C",))]
    with pytest.raises(PlannerError, match="bay 2 has 2 h left on 2026-12-07"):
        move(week, "A", MON, 2)  # B's 6 h leave 2 h; A needs 3.5
    with pytest.raises(PlannerError, match="not a job in this week plan"):
        move(week, "Q", MON, 1)
    assert where(week)["C"] == (1, (MON,), (2.0,), 3.5)  # the old plan is unchanged


# ---------------------------------------------------------------- the engine border


@pytest.mark.parametrize("module", ["planner.week", "planner.week_export"])
def test_week_modules_stay_pure(module):
    # As tests/test_engine_border.py for the rest of the engine: no UI, CLI, file layer, and
    # the calendar is written by hand (icalendar is a test-only reference).
    forbidden = ["textual", "rich", "planner.tui", "planner.cli", "planner.fileio", "icalendar"]
    code = (f"import sys, importlib; importlib.import_module({module!r}); "
            f"print(','.join(m for m in {forbidden!r} if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.strip()
    assert out == "", f"{module} pulls in {out}"


# ---------------------------------------------------------------- week-level properties


@st.composite
def small_fleets(draw):
    n = draw(st.integers(1, 7))
    blocks = []
    for k in range(n):
        hours = draw(st.one_of(st.none(), st.sampled_from([1.5, 2, 3, 4.5, 7.5, 8, 12, 20])))
        state = draw(st.sampled_from([OVERDUE, NEAR_LIMIT, OK]))
        extra = ""
        if draw(st.booleans()):
            extra += f'contact = {{ name = "n{k}", phone = "{k}" }}\n'
        if draw(st.booleans()):
            a = MON + timedelta(draw(st.integers(-2, 8)))
            b = a + timedelta(draw(st.integers(0, 4)))
            extra += f"unavailable = [{{ start = {a}, end = {b} }}]\n"
        parts = draw(st.lists(st.sampled_from(["kit", "pump", "seal"]), max_size=3))
        extra += "parts = [" + ", ".join(f'"{p}"' for p in parts) + "]\n"
        blocks.append(vehicle(f"V{k}", hours, draw(st.integers(100, 9000)), state, extra))
    closed = draw(st.lists(st.sampled_from([MON, TUE, WED, THU, NEXT_FRI]), max_size=2))
    ws = workshop(bays=draw(st.integers(1, 3)), hours=draw(st.sampled_from([6.0, 8.0])),
                  lead=draw(st.integers(0, 6)), kits=draw(st.booleans()), closed=closed)
    return fleet_of(*blocks, ws=ws), draw(st.integers(1, 2)), draw(st.sampled_from(
        ["near-limit", "all-due"]))


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(small_fleets())
def test_week_bookkeeping(case):
    # What the week adds to the scheduler: nothing lost, the sums agree, parts in time.
    fleet, weeks, include = case
    week = plan_week(fleet, FRI, weeks=weeks, include=include)
    ids = [j.vehicle_id for j in week.jobs]
    placed = [b.job.vehicle_id for b in week.bookings]
    listed = [u.job.vehicle_id for u in week.unplaced]
    assert sorted(placed + listed) == sorted(ids)  # every candidate once, booked or listed
    assert [i for i in ids if i in listed] == listed  # unplaced in triage order
    assert all(u.reason and u.detail for u in week.unplaced)
    assert all((j.hours is None) == (j.vehicle_id not in {r.key for r in week.requests})
               for j in week.jobs)
    assert sum(d.booked for d in week.days) == pytest.approx(week.labour_hours)
    assert week.labour_cost == pytest.approx(week.labour_hours * 50.0)
    assert week.parts_cost == pytest.approx(sum(b.job.parts_cost or 0 for b in week.bookings))
    # Risk removed counts the near-limit jobs only; required (overdue, no record) jobs are
    # costed apart, and the two parts make the whole.
    assert week.expected_loss_removed == pytest.approx(
        sum(b.job.expected_loss or 0 for b in week.bookings if b.job.status.value
            == "near-limit"))
    assert sorted(week.required_jobs + week.near_limit_jobs) == sorted(placed)
    assert week.required_cost + week.near_limit_cost == pytest.approx(week.total_cost)
    for d in week.days:
        for slot in d.bays:
            assert sum(s.hours for s in slot.segments) == pytest.approx(slot.booked)
            assert slot.booked <= slot.capacity + 1e-9
    want = Counter()
    for b in week.bookings:
        for part in b.job.parts or (PARTS_NOT_LISTED,):
            want[part] += 1
    got = Counter()
    for line in week.parts_order:
        got[line.part] += line.quantity
        assert line.in_stock == week.calendar.kits_in_stock
        for v in line.vehicles:
            b = week.booking(v)
            if line.order_by is None:
                assert week.calendar.kits_in_stock
            else:
                assert FRI <= line.order_by
                assert line.order_by + timedelta(week.calendar.parts_lead_days) <= b.first_day
    assert got == want
    with_contact = [i for i in ids if week.job(i).contact is not None]
    assert sorted(c.vehicle_id for c in week.call_list) == sorted(with_contact)
    assert all(c.booked == (week.booking(c.vehicle_id) is not None) for c in week.call_list)
