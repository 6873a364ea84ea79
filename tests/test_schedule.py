"""Tests of the workshop scheduling core (planner.schedule).

Sources: the placement rules are common practice of workshop planning [trade, no source]; every
expected plan below is a worked example computed by hand in the comments beside it. The
properties check the module against `fits`, an oracle written here from the rules alone.
"""

from __future__ import annotations

from datetime import date, timedelta

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planner.fleet import Workshop
from planner.schedule import (
    NO_CAPACITY,
    PARTS_LATE,
    TOO_LONG,
    UNAVAILABLE,
    JobRequest,
    Placement,
    ScheduleError,
    SchedulePlan,
    Unplaced,
    WorkshopCalendar,
    move_job,
    schedule_jobs,
)

MON = date(2026, 12, 7)  # a Monday; the week is Mon 7 .. Sun 13 December 2026
TUE, WED, THU, FRI, SAT = (MON + timedelta(n) for n in range(1, 6))
NEXT_MON, NEXT_TUE = MON + timedelta(7), MON + timedelta(8)
WEEK = frozenset(range(5))  # Mon-Fri


def cal(bays=2, hours=8.0, closed=(), lead=0, kits=False, weekdays=WEEK) -> WorkshopCalendar:
    return WorkshopCalendar(bays, hours, frozenset(weekdays), frozenset(closed), lead, kits)


def jobs_of(*hours: float, **kw) -> list[JobRequest]:
    """Jobs A, B, C, ... with these hours, in triage order."""
    return [JobRequest(chr(65 + n), h, n, **kw) for n, h in enumerate(hours)]


def where(plan: SchedulePlan) -> dict[str, tuple]:
    """key -> (bay, days, hours_by_day, start_hour), for comparing with a hand-worked plan."""
    return {p.key: (p.bay, p.days, p.hours_by_day, p.start_hour) for p in plan.placements}


# ---------------------------------------------------------------- worked examples (by hand)


def test_five_jobs_two_bays():
    # Two bays of 8 h, kits in stock. By hand, in triage order:
    # A 3.5 h: Mon bay 1 free -> Mon b1 [0, 3.5)            b1 left 4.5
    # B 6 h:   Mon b1 has 4.5 < 6; Mon b2 -> Mon b2 [0, 6)   b2 left 2
    # C 2 h:   Mon b1 has 4.5 -> Mon b1 [3.5, 5.5)          b1 left 2.5
    # D 5 h:   Mon b1 2.5, b2 2: no -> Tue b1 [0, 5)         Tue b1 left 3
    # E 4 h:   Mon no; Tue b1 3 < 4 -> Tue b2 [0, 4)
    plan = schedule_jobs(jobs_of(3.5, 6, 2, 5, 4), cal(kits=True), MON, 7, MON)
    assert where(plan) == {
        "A": (1, (MON,), (3.5,), 0.0),
        "B": (2, (MON,), (6.0,), 0.0),
        "C": (1, (MON,), (2.0,), 3.5),
        "D": (1, (TUE,), (5.0,), 0.0),
        "E": (2, (TUE,), (4.0,), 0.0),
    }
    assert plan.unplaced == ()
    assert plan.working_days == (MON, TUE, WED, THU, FRI)
    assert plan.hours_left(MON, 1) == 2.5 and plan.hours_left(MON, 2) == 2.0
    assert plan.hours_left(SAT, 1) == 0.0  # not a working day: no capacity
    assert [p.key for p in plan.jobs_on(MON)] == ["A", "C", "B"]  # bay, then clock order
    assert plan.used[(WED, 1)] == 0.0 and plan.capacity[(WED, 2)] == 8.0


def test_job_longer_than_a_day_spans_consecutive_days_of_one_bay():
    # One bay of 8 h. A 12 h: Mon 8 h + Tue 4 h (Mon empty, Tue has 4 free).
    # B 3 h: Mon full; Tue has 4 left -> Tue, after A's 4 h -> start 4.
    # C 5 h: Tue has 1 left -> Wed.
    plan = schedule_jobs(jobs_of(12, 3, 5), cal(bays=1, kits=True), MON, 7, MON)
    assert where(plan) == {
        "A": (1, (MON, TUE), (8.0, 4.0), 0.0),
        "B": (1, (TUE,), (3.0,), 4.0),
        "C": (1, (WED,), (5.0,), 0.0),
    }


def test_continuing_job_runs_first_on_its_last_day():
    # One bay. A 3 h, away Monday -> Tue [0, 3). B 12 h: Mon empty, Tue has 5 free >= 4 ->
    # Mon 8 + Tue 4. B's car is already in the bay on Tuesday morning, so B runs [0, 4) and A
    # moves to [4, 7) although A was booked first.
    jobs = [
        JobRequest("A", 3, 0, unavailable=((MON, MON),)),
        JobRequest("B", 12, 1),
    ]
    plan = schedule_jobs(jobs, cal(bays=1, kits=True), MON, 7, MON)
    assert where(plan) == {
        "A": (1, (TUE,), (3.0,), 4.0),
        "B": (1, (MON, TUE), (8.0, 4.0), 0.0),
    }
    assert [p.key for p in plan.jobs_on(TUE)] == ["B", "A"]


def test_multi_day_job_needs_an_empty_first_day():
    # One bay. A 3 h -> Mon [0, 3). B 12 h: Mon is not empty -> Tue 8 + Wed 4.
    plan = schedule_jobs(jobs_of(3, 12), cal(bays=1, kits=True), MON, 7, MON)
    assert where(plan)["B"] == (1, (TUE, WED), (8.0, 4.0), 0.0)


def test_closed_day_is_skipped():
    # Tuesday 8 December closed. One bay: A 6 h Mon, B 6 h Wed (Tue closed), C 6 h Thu.
    # D 12 h: Mon/Wed/Thu not empty -> Fri 8 + next Mon 4 (over the weekend).
    plan = schedule_jobs(jobs_of(6, 6, 6, 12), cal(bays=1, closed=[TUE], kits=True), MON, 14, MON)
    assert TUE not in plan.working_days
    assert where(plan) == {
        "A": (1, (MON,), (6.0,), 0.0),
        "B": (1, (WED,), (6.0,), 0.0),
        "C": (1, (THU,), (6.0,), 0.0),
        "D": (1, (FRI, NEXT_MON), (8.0, 4.0), 0.0),
    }


def test_multi_day_job_skips_a_holiday():
    # Tue closed: a 12 h job from Monday runs Mon 8 h + Wed 4 h.
    plan = schedule_jobs(jobs_of(12), cal(bays=1, closed=[TUE], kits=True), MON, 7, MON)
    assert where(plan)["A"] == (1, (MON, WED), (8.0, 4.0), 0.0)


def test_parts_lead_time_pushes_the_job_later():
    # Ordered Mon with a 2-day lead: parts on hand Wed. A needs parts -> Wed; B needs none -> Mon.
    jobs = [JobRequest("A", 3, 0), JobRequest("B", 3, 1, needs_parts=False)]
    plan = schedule_jobs(jobs, cal(lead=2), MON, 7, MON)
    assert where(plan) == {"A": (1, (WED,), (3.0,), 0.0), "B": (1, (MON,), (3.0,), 0.0)}


def test_kits_in_stock_means_no_wait():
    # Same jobs, kits on the shelf: both on Monday, A first in bay 1 [0, 3), B after it [3, 6).
    jobs = [JobRequest("A", 3, 0), JobRequest("B", 3, 1, needs_parts=False)]
    plan = schedule_jobs(jobs, cal(lead=2, kits=True), MON, 7, MON)
    assert where(plan) == {"A": (1, (MON,), (3.0,), 0.0), "B": (1, (MON,), (3.0,), 3.0)}


def test_parts_arrive_on_the_day_and_span_the_weekend():
    # Ordered Mon, 4-day lead: parts Fri. 12 h -> Fri 8 h + next Mon 4 h.
    plan = schedule_jobs(jobs_of(12), cal(bays=1, lead=4), MON, 14, MON)
    assert where(plan)["A"] == (1, (FRI, NEXT_MON), (8.0, 4.0), 0.0)


def test_unavailable_over_the_weekend_blocks_a_span_across_it():
    # As above, but the van is out on Saturday: it cannot stay in the bay Fri-Mon, so the job
    # starts next Mon: Mon 8 h + Tue 4 h.
    jobs = [JobRequest("A", 12, 0, unavailable=((SAT, SAT),))]
    plan = schedule_jobs(jobs, cal(bays=1, lead=4), MON, 14, MON)
    assert where(plan)["A"] == (1, (NEXT_MON, NEXT_TUE), (8.0, 4.0), 0.0)


def test_unavailability_moves_the_job():
    # Away Mon-Tue: earliest day is Wed, bay 1.
    jobs = [JobRequest("A", 4, 0, unavailable=((MON, TUE),))]
    plan = schedule_jobs(jobs, cal(kits=True), MON, 7, MON)
    assert where(plan) == {"A": (1, (WED,), (4.0,), 0.0)}


def test_unplaced_reasons():
    # Window Mon-Fri, one bay of 8 h, parts lead 2 (on hand Wed) unless said otherwise.
    # A-E 8 h each, no parts: fill Mon..Fri. F 1 h no parts: no room -> capacity.
    # G away all week -> unavailable. H parts on hand Mon + 10 -> parts.
    # I away Wed-Fri, needs parts (Wed): the van could come only before the parts -> parts.
    # J 48 h = 6 days, window has 5 working days -> too long (no window day could start it).
    jobs = [JobRequest(k, 8, n, needs_parts=False) for n, k in enumerate("ABCDE")] + [
        JobRequest("F", 1, 5, needs_parts=False),
        JobRequest("G", 1, 6, unavailable=((MON - timedelta(3), FRI),), needs_parts=False),
        JobRequest("I", 1, 8, unavailable=((WED, FRI),)),
        JobRequest("J", 48, 9, needs_parts=False),
    ]
    plan = schedule_jobs(jobs, cal(bays=1, lead=2), MON, 5, MON)
    assert [p.key for p in plan.placements] == list("ABCDE")
    assert plan.unplaced == (
        Unplaced("F", NO_CAPACITY),
        Unplaced("G", UNAVAILABLE),
        Unplaced("I", PARTS_LATE),
        Unplaced("J", TOO_LONG),
    )
    late = schedule_jobs([JobRequest("H", 1, 0)], cal(lead=10), MON, 5, MON)
    assert late.unplaced == (Unplaced("H", PARTS_LATE),)


def test_no_working_days_means_no_capacity():
    plan = schedule_jobs(jobs_of(2), cal(kits=True), SAT, 2, MON)
    assert plan.working_days == () and plan.unplaced == (Unplaced("A", NO_CAPACITY),)


def test_equal_priorities_keep_input_order():
    jobs = [JobRequest("X", 5, 1), JobRequest("Y", 5, 1), JobRequest("Z", 5, 0)]
    plan = schedule_jobs(jobs, cal(bays=1, kits=True), MON, 7, MON)
    # Z (priority 0) Mon; X before Y: X Tue, Y Wed.
    assert {p.key: p.days[0] for p in plan.placements} == {"Z": MON, "X": TUE, "Y": WED}


def test_bad_input_is_refused():
    with pytest.raises(ScheduleError, match="listed twice"):
        schedule_jobs([JobRequest("A", 1, 0), JobRequest("A", 2, 1)], cal(), MON, 7, MON)
    with pytest.raises(ScheduleError, match="positive"):
        schedule_jobs([JobRequest("A", 0, 0)], cal(), MON, 7, MON)


def test_from_workshop():
    ws = Workshop(bays=3, hours_per_day=7.5, weekdays=["mon", "wed", "sat"], closed=[WED],
                  parts_lead_days=3, kits_in_stock=True)
    assert WorkshopCalendar.from_workshop(ws) == WorkshopCalendar(
        3, 7.5, frozenset({0, 2, 5}), frozenset({WED}), 3, True
    )
    assert WorkshopCalendar.from_workshop(Workshop()).weekdays == WEEK


# ---------------------------------------------------------------- moving a job by hand


def five_job_plan():
    jobs = jobs_of(3.5, 6, 2, 5, 4)
    return jobs, schedule_jobs(jobs, cal(kits=True), MON, 7, MON)


def test_move_leaves_the_others_in_place():
    # C (2 h) from Mon bay 1 [3.5, 5.5) to Tue bay 1 after D's 5 h -> [5, 7).
    jobs, plan = five_job_plan()
    moved = move_job(plan, jobs, cal(kits=True), "C", TUE, 1, MON)
    assert where(moved)["C"] == (1, (TUE,), (2.0,), 5.0)
    assert {k: v for k, v in where(moved).items() if k != "C"} == {
        k: v for k, v in where(plan).items() if k != "C"
    }
    assert moved.used[(MON, 1)] == 3.5 and moved.used[(TUE, 1)] == 7.0


def test_move_closes_the_gap_it_leaves():
    # A (3.5 h) out of Mon bay 1 to Wed bay 2: C, which ran [3.5, 5.5), now runs [0, 2).
    jobs, plan = five_job_plan()
    moved = move_job(plan, jobs, cal(kits=True), "A", WED, 2, MON)
    assert where(moved)["A"] == (2, (WED,), (3.5,), 0.0)
    assert where(moved)["C"] == (1, (MON,), (2.0,), 0.0)


def test_move_refusals_say_why():
    jobs, plan = five_job_plan()
    c = cal(kits=True)
    # Tue bay 2 holds E (4 h): 4 h left; B needs 6 h.
    with pytest.raises(ScheduleError, match=r"bay 2 has 4 h left on 2026-12-08, the job needs 6 h"):
        move_job(plan, jobs, c, "B", TUE, 2, MON)
    # Mon bay 2 holds B (6 h): 2 h left; A needs 3.5 h.
    with pytest.raises(ScheduleError, match=r"bay 2 has 2 h left on 2026-12-07, the job needs 3.5"):
        move_job(plan, jobs, c, "A", MON, 2, MON)
    with pytest.raises(ScheduleError, match="not a working day"):
        move_job(plan, jobs, c, "A", SAT, 1, MON)
    with pytest.raises(ScheduleError, match="bays 1 to 2"):
        move_job(plan, jobs, c, "A", WED, 3, MON)
    with pytest.raises(ScheduleError, match="no job Q"):
        move_job(plan, jobs, c, "Q", WED, 1, MON)
    closed = cal(closed=[TUE], kits=True)
    with pytest.raises(ScheduleError, match="closed on 2026-12-08"):
        move_job(schedule_jobs(jobs, closed, MON, 7, MON), jobs, closed, "A", TUE, 1, MON)
    away = [JobRequest("A", 2, 0, unavailable=((WED, WED),), needs_parts=True)]
    late = cal(lead=2)
    with pytest.raises(ScheduleError, match="parts arrive on 2026-12-09"):
        move_job(schedule_jobs(away, late, MON, 7, MON), away, late, "A", TUE, 1, MON)
    with pytest.raises(ScheduleError, match="unavailable"):
        move_job(schedule_jobs(away, late, MON, 7, MON), away, late, "A", WED, 1, MON)


def test_move_of_a_long_job_needs_whole_days():
    # One bay: A 3 h Mon [0, 3); B 12 h Tue 8 + Wed 4. B onto Mon: Mon is not empty.
    jobs = jobs_of(3, 12)
    c = cal(bays=1, kits=True)
    plan = schedule_jobs(jobs, c, MON, 7, MON)
    with pytest.raises(ScheduleError, match="not free all day on 2026-12-07"):
        move_job(plan, jobs, c, "B", MON, 1, MON)
    with pytest.raises(ScheduleError, match="needs 2 working days from 2026-12-11"):
        move_job(plan, jobs, c, "B", FRI, 1, MON)  # the window ends on Sunday
    moved = move_job(plan, jobs, c, "B", WED, 1, MON)  # onto its own last day: Wed 8 + Thu 4
    assert where(moved)["B"] == (1, (WED, THU), (8.0, 4.0), 0.0)


def test_move_places_an_unplaced_job_once_room_is_made():
    # One bay of 8 h, Mon-Tue. First fit, by hand: A 3 Mon [0, 3); B 2 Mon [3, 5);
    # C 5: Mon has 3 -> Tue [0, 5); D 6: Mon 3, Tue 3 -> unplaced, though {A, C} and {B, D}
    # would each fill a day exactly. Moving by hand repacks it.
    jobs = jobs_of(3, 2, 5, 6)
    c = cal(bays=1, kits=True)
    plan = schedule_jobs(jobs, c, MON, 2, MON)
    assert plan.unplaced == (Unplaced("D", NO_CAPACITY),)
    with pytest.raises(ScheduleError, match="bay 1 has 3 h left on 2026-12-08, the job needs 6 h"):
        move_job(plan, jobs, c, "D", TUE, 1, MON)
    plan = move_job(plan, jobs, c, "B", TUE, 1, MON)  # Tue: C [0, 5), B [5, 7); Mon: A, 5 left
    plan = move_job(plan, jobs, c, "C", MON, 1, MON)  # Mon: A [0, 3), C [3, 8); Tue: B [0, 2)
    plan = move_job(plan, jobs, c, "D", TUE, 1, MON)  # Tue: B [0, 2), D [2, 8)
    assert plan.unplaced == ()
    assert where(plan) == {
        "A": (1, (MON,), (3.0,), 0.0),
        "C": (1, (MON,), (5.0,), 3.0),
        "B": (1, (TUE,), (2.0,), 0.0),
        "D": (1, (TUE,), (6.0,), 2.0),
    }


# ---------------------------------------------------------------- oracle and properties


def days_needed(hours: float, per_day: float) -> int:
    n = 1
    while n * per_day < hours - 1e-9:
        n += 1
    return n


def fits(job, c, wdays, used, day, bay, order_date) -> bool:
    """The rules, restated: can `job` start on `day` in `bay` with `used` hours booked?"""
    if not c.kits_in_stock and job.needs_parts:
        if day < order_date + timedelta(c.parts_lead_days):
            return False
    n = days_needed(job.hours, c.hours_per_day)
    i = wdays.index(day)
    span = wdays[i : i + n]
    if len(span) < n:
        return False
    d = span[0]
    while d <= span[-1]:  # the car stays in over nights and closed days
        if any(s <= d <= e for s, e in job.unavailable):
            return False
        d += timedelta(1)
    for k, d in enumerate(span):
        u = used.get((d, bay), 0.0)
        if k < n - 1 and u > 1e-9:
            return False
        if k == n - 1 and c.hours_per_day - u < job.hours - (n - 1) * c.hours_per_day - 1e-9:
            return False
    return True


def used_of(plan: SchedulePlan) -> dict:
    used: dict = {}
    for p in plan.placements:
        for d, h in zip(p.days, p.hours_by_day, strict=True):
            used[(d, p.bay)] = used.get((d, p.bay), 0.0) + h
    return used


def triage(jobs):
    return sorted(jobs, key=lambda j: j.priority)


def first_fit(job, c, plan, order_date):
    return next(
        ((d, b) for d in plan.working_days for b in range(1, c.bays + 1)
         if fits(job, c, plan.working_days, used_of(plan), d, b, order_date)),
        None,
    )


HOURS = st.sampled_from([0.5, 1, 1.5, 2, 2.5, 3.5, 4, 5, 6, 7.5, 8, 9, 12, 16, 20]) | st.floats(
    0.1, 30
).map(lambda h: round(h, 1)).filter(lambda h: h > 0)


@st.composite
def scenarios(draw):
    start = MON + timedelta(draw(st.integers(0, 6)))
    days = draw(st.integers(0, 16))
    window = [start + timedelta(n) for n in range(days + 3)]
    c = WorkshopCalendar(
        bays=draw(st.integers(1, 3)),
        hours_per_day=draw(st.sampled_from([4.0, 6.0, 7.5, 8.0, 10.0])),
        weekdays=frozenset(draw(st.sets(st.integers(0, 6)))),
        closed=frozenset(draw(st.lists(st.sampled_from(window), max_size=3))),
        parts_lead_days=draw(st.integers(0, 8)),
        kits_in_stock=draw(st.booleans()),
    )
    ranges = st.tuples(st.sampled_from(window), st.integers(0, 4)).map(
        lambda t: (t[0], t[0] + timedelta(t[1]))
    )
    n = draw(st.integers(0, 10))
    jobs = [
        JobRequest(
            f"V{k}",
            draw(HOURS),
            draw(st.integers(0, 4)),
            tuple(draw(st.lists(ranges, max_size=2))),
            draw(st.booleans()),
        )
        for k in range(n)
    ]
    order_date = start + timedelta(draw(st.integers(-3, 4)))
    return jobs, c, start, days, order_date


PROPS = settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def check_plan(plan: SchedulePlan, jobs, c, start, days, order_date, *, greedy=True):
    """Invariants every plan must keep, from schedule_jobs or move_job."""
    by_key = {j.key: j for j in jobs}
    # Every job exactly once, placed or unplaced with a known reason.
    keys = [p.key for p in plan.placements] + [u.key for u in plan.unplaced]
    assert sorted(keys) == sorted(by_key)
    assert all(u.reason in (NO_CAPACITY, UNAVAILABLE, PARTS_LATE, TOO_LONG)
               for u in plan.unplaced)
    # Working days: listed weekdays, not closed, inside the window.
    end = start + timedelta(days)
    assert all(
        d.weekday() in c.weekdays and d not in c.closed and start <= d < end
        for d in plan.working_days
    )
    assert len(plan.working_days) == sum(
        1 for n in range(days) if c.is_working(start + timedelta(n))
    )
    # No bay-day over capacity; `used` agrees with the placements.
    used = used_of(plan)
    assert set(plan.capacity) == {(d, b) for d in plan.working_days for b in range(1, c.bays + 1)}
    for k, cap in plan.capacity.items():
        assert cap == c.hours_per_day
        assert plan.used[k] == pytest.approx(used.get(k, 0.0))
        assert plan.used[k] <= cap + 1e-9
    assert set(used) <= set(plan.capacity)
    for p in plan.placements:
        job = by_key[p.key]
        n = days_needed(job.hours, c.hours_per_day)
        assert 1 <= p.bay <= c.bays
        # Consecutive working days of one bay, full days but the last.
        i = plan.working_days.index(p.days[0])
        assert p.days == plan.working_days[i : i + n]
        assert sum(p.hours_by_day) == pytest.approx(job.hours)
        assert all(h == c.hours_per_day for h in p.hours_by_day[:-1])
        assert 0 < p.hours_by_day[-1] <= c.hours_per_day + 1e-9
        # Parts lead time and unavailability respected.
        if job.needs_parts and not c.kits_in_stock:
            assert p.days[0] >= order_date + timedelta(c.parts_lead_days)
        assert not any(s <= p.days[-1] and p.days[0] <= e for s, e in job.unavailable)
    # Clock layout: on each bay-day the segments tile [0, used) without overlap.
    segs: dict = {}
    for p in plan.placements:
        for k, (d, h) in enumerate(zip(p.days, p.hours_by_day, strict=True)):
            segs.setdefault((d, p.bay), []).append((p.start_hour if k == 0 else 0.0, h))
    for k, ss in segs.items():
        t = 0.0
        for s0, h in sorted(ss):
            assert s0 == pytest.approx(t)
            t = s0 + h
        assert t == pytest.approx(plan.used[k])
    # An unplaced job fits nowhere, and its reason is true.
    for u in plan.unplaced:
        job = by_key[u.key]
        wd = plan.working_days
        if greedy:  # a move may free room for an unplaced job; the scheduler never leaves any
            assert not any(fits(job, c, wd, used, d, b, order_date)
                           for d in wd for b in range(1, c.bays + 1))
        n = days_needed(job.hours, c.hours_per_day)
        starts = range(len(wd) - n + 1)
        parts = {i for i in starts if c.kits_in_stock or not job.needs_parts
                 or wd[i] >= order_date + timedelta(c.parts_lead_days)}
        free = {i for i in starts
                if not any(s <= wd[i + n - 1] and wd[i] <= e for s, e in job.unavailable)}
        if u.reason == PARTS_LATE:
            assert starts and not parts & free
        elif u.reason == UNAVAILABLE:
            assert parts and not free
        else:
            assert not starts or parts & free


@PROPS
@given(scenarios())
def test_plan_invariants(sc):
    jobs, c, start, days, order_date = sc
    check_plan(schedule_jobs(jobs, c, start, days, order_date), jobs, c, start, days, order_date)


@PROPS
@given(scenarios())
def test_each_job_takes_the_first_slot_left_by_the_jobs_before_it(sc):
    # Greedy in triage order: re-run with only the jobs ahead of J; J's slot is the earliest
    # (day, then bay) the oracle accepts in that state, and J is unplaced iff none exists.
    jobs, c, start, days, order_date = sc
    plan = schedule_jobs(jobs, c, start, days, order_date)
    ordered = triage(jobs)
    for n, job in enumerate(ordered):
        before = schedule_jobs(ordered[:n], c, start, days, order_date)
        got = plan.placement(job.key)
        want = first_fit(job, c, before, order_date)
        assert (None if got is None else (got.days[0], got.bay)) == want


@PROPS
@given(scenarios())
def test_higher_priority_never_later_when_it_could_fit(sc):
    # If a lower-priority job L starts on day d while a higher-priority H is unplaced or starts
    # after d, then H could not have fitted on d in any bay when H was booked.
    jobs, c, start, days, order_date = sc
    plan = schedule_jobs(jobs, c, start, days, order_date)
    ordered = triage(jobs)
    for h_i, high in enumerate(ordered):
        ph = plan.placement(high.key)
        before = schedule_jobs(ordered[:h_i], c, start, days, order_date)
        for low in ordered[h_i + 1 :]:
            if low.priority == high.priority:
                continue
            pl = plan.placement(low.key)
            if pl is None or (ph is not None and ph.days[0] <= pl.days[0]):
                continue
            d = pl.days[0]
            assert not any(
                fits(high, c, before.working_days, used_of(before), d, b, order_date)
                for b in range(1, c.bays + 1)
            )


@PROPS
@given(scenarios(), st.data())
def test_move_obeys_the_rules_and_leaves_others_alone(sc, data):
    jobs, c, start, days, order_date = sc
    plan = schedule_jobs(jobs, c, start, days, order_date)
    if not jobs or not plan.working_days:
        return
    job = data.draw(st.sampled_from(jobs))
    day = data.draw(st.sampled_from(plan.working_days))
    bay = data.draw(st.integers(1, c.bays))
    others = [p for p in plan.placements if p.key != job.key]
    rest = SchedulePlan(tuple(others), (), plan.working_days, plan.capacity, {})
    ok = fits(job, c, plan.working_days, used_of(rest), day, bay, order_date)
    if not ok:
        with pytest.raises(ScheduleError, match="cannot move"):
            move_job(plan, jobs, c, job.key, day, bay, order_date)
        return
    moved = move_job(plan, jobs, c, job.key, day, bay, order_date)
    check_plan(moved, jobs, c, start, days, order_date, greedy=False)
    got = moved.placement(job.key)
    assert got is not None and (got.days[0], got.bay) == (day, bay)
    same = {p.key: (p.bay, p.days, p.hours_by_day) for p in others}
    assert {p.key: (p.bay, p.days, p.hours_by_day) for p in moved.placements
            if p.key != job.key} == same
    assert [u for u in moved.unplaced] == [u for u in plan.unplaced if u.key != job.key]


def test_placement_is_frozen():
    p = Placement("A", 1, (MON,), (1.0,), 0.0)
    with pytest.raises(AttributeError):
        p.bay = 2  # type: ignore[misc]
