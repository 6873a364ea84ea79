"""Every vehicle planned: a missing fact gives its vehicle a status of its own (never safe,
the fact named) and a warning in `check`; the rest of the fleet is planned as usual."""

from __future__ import annotations

import datetime as dt

import pytest
from hypothesis import given
from hypothesis import strategies as st

from planner import importer
from planner.cli import main
from planner.errors import PlannerError
from planner.fileio import load_fleet, parse_fleet_text
from planner.fleet import Fleet
from planner.plan import Status, plan_fleet, plan_vehicle
from planner.risk import assess_fleet_plan
from planner.week import plan_week
from tests.conftest import AS_OF, GARAGE, HEADER, fleet_text, make_fleet


def plan_of(fleet, vid: str, as_of: dt.date = AS_OF):
    return plan_vehicle(next(v for v in fleet.vehicles if v.id == vid), fleet, as_of)


def warnings_of(body: str, header: str = HEADER) -> list:
    from planner.fileio import located_warnings

    text = fleet_text(body, header)
    fleet = parse_fleet_text(text, "test.toml")
    return located_warnings(fleet, text, "test.toml")


def line_of(text: str, needle: str) -> int:
    for number, line in enumerate(text.splitlines(), 1):
        if needle in line:
            return number
    raise AssertionError(needle)


# A profile with normal intervals only, and one with a severe distance interval only.
NO_SEVERE = HEADER + """
[engines.plain]
drive = "belt"
interference = "interference"
interval_distance = 100000
interval_months = 60
labour_hours = 3.0
failure_cost = 3000.0

[engines.half]
drive = "belt"
interference = "interference"
interval_distance = 100000
interval_months = 60
severe_interval_distance = 70000
labour_hours = 3.0
failure_cost = 3000.0
"""


# -- severe duty with no severe interval ---------------------------------------------------

SEVERE_OK = """
[[vehicles]]
id = "TX"
engine = "plain"
duty = "severe"
in_service = 2024-01-01
readings = [{ date = 2026-01-01, odometer = 30000 }, { date = 2026-12-01, odometer = 50000 }]
"""


def test_severe_duty_without_a_severe_interval_is_never_ok():
    # On the normal interval it would be ok: 100,000 km from 0 with about 50,000 km used, and
    # 60 months from 2024-01-01 is 2029-01-01. The severe interval is unknown, so it is not.
    p = plan_of(make_fleet(SEVERE_OK, NO_SEVERE), "TX")
    assert p.status is Status.MISSING_FACT
    assert "severe-service interval" in p.notes[0]
    assert "maker" in p.notes[0]


def test_missing_fact_ranks_with_the_due_now_statuses():
    assert Status.NO_RECORD.rank < Status.MISSING_FACT.rank < Status.NEAR_LIMIT.rank
    assert Status.MISSING_FACT.rank < Status.OK.rank


def test_severe_duty_past_the_normal_interval_stays_overdue_and_names_the_fact():
    # 60 months from 2020-01-01 is 2025-01-01, before the planning date 2026-12-07: overdue.
    body = SEVERE_OK.replace("in_service = 2024-01-01", "in_service = 2020-01-01")
    p = plan_of(make_fleet(body, NO_SEVERE), "TX")
    assert p.status is Status.OVERDUE
    assert any("severe-service interval" in n and "maker" in n for n in p.notes)


def test_a_severe_interval_for_one_limit_only_says_which_is_which():
    body = SEVERE_OK.replace('engine = "plain"', 'engine = "half"')
    p = plan_of(make_fleet(body, NO_SEVERE), "TX")
    assert not any("severe-service interval is in force" in n for n in p.notes)
    assert p.spec.interval_distance == 70000 and p.spec.interval_months == 60
    said = " ".join(p.notes)
    assert "severe-service distance interval" in said
    assert "normal age interval" in said
    assert "severe_interval_months" in said
    # 70,000 km from 0 with about 50,000 km used and 2029-01-01 by age: ok on both limits as
    # far as they are known, but the severe age limit is missing, so not ok.
    assert p.status is Status.MISSING_FACT


def test_the_garage_taxi_is_not_ok():
    # MR-1118: severe duty (taxi work) on the rd19 profile, which has no severe interval.
    fleet = load_fleet(GARAGE).fleet
    p = plan_of(fleet, "MR-1118", dt.date(2026, 12, 4))
    assert p.status is Status.MISSING_FACT


def test_check_lists_the_severe_vehicle_as_a_warning(tmp_path, capsys):
    path = tmp_path / "f.toml"
    path.write_text(fleet_text(SEVERE_OK, NO_SEVERE))
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    valid, rest = out.split("\n", 1)
    assert "valid" in valid
    assert "warning" in rest and "vehicle TX" in rest and "severe_interval" in rest


def test_import_reports_severe_duty_without_a_severe_interval():
    csv = ("id,in_service,drive,interval_distance,interval_months,duty\n"
           "T1,2024-01-01,belt,100000,60,severe\n"
           "T2,2024-01-01,belt,100000,60,normal\n")
    result = importer.import_fleet(csv, source="s.csv", when=dt.date(2026, 12, 7), unit="km")
    hits = [line for line in result.report if "T1" in line and "severe" in line]
    assert hits and "warning" in hits[0]
    assert not any("T2" in line and "severe" in line for line in result.report)


# -- missing intervals and drive: warnings, and the rest of the fleet is planned -----------

MISSING = """
[[vehicles]]
id = "GOOD"
engine = "belt"
in_service = 2024-01-01
readings = [{ date = 2026-01-01, odometer = 30000 }, { date = 2026-12-01, odometer = 50000 }]

[[vehicles]]
id = "NOAGE"
drive = "belt"
interval_distance = 90000
in_service = 2024-01-01

[[vehicles]]
id = "NODRIVE"
in_service = 2024-01-01
"""


def test_missing_facts_do_not_stop_the_plan():
    fleet = make_fleet(MISSING)
    plans = {p.id: p for p in plan_fleet(fleet, AS_OF)}
    # GOOD: 60 months from 2024-01-01 is 2029-01-01 (dateutil relativedelta semantics).
    assert plans["GOOD"].time_due_date == dt.date(2029, 1, 1)
    assert plans["GOOD"].status is Status.OK
    for vid, fact in (("NOAGE", "interval_months"), ("NODRIVE", "drive")):
        assert plans[vid].status is Status.MISSING_FACT
        assert fact in plans[vid].notes[0]
        assert plans[vid].due_date is None


def test_missing_facts_are_warnings_with_their_lines():
    text = fleet_text(MISSING)
    found = warnings_of(MISSING)
    by_vehicle = {p.vehicle: p for p in found}
    # A key that is not there is located at its vehicle's [[vehicles]] line, just above the id.
    assert by_vehicle["NOAGE"].field == "interval_months"
    assert by_vehicle["NOAGE"].line == line_of(text, 'id = "NOAGE"') - 1
    assert by_vehicle["NODRIVE"].field == "drive"
    assert by_vehicle["NODRIVE"].line == line_of(text, 'id = "NODRIVE"') - 1
    assert all(p.severity == "warning" for p in found)
    assert "GOOD" not in by_vehicle


def test_check_exits_0_with_warnings_and_2_with_errors(tmp_path, capsys):
    path = tmp_path / "f.toml"
    path.write_text(fleet_text(MISSING))
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert out.startswith(f"{path}: valid: 3 vehicles")
    assert "2 warnings" in out
    assert "vehicle NOAGE, field interval_months" in out
    broken = MISSING + "in_service_odometer = \"12\"\n"
    path.write_text(fleet_text(broken))
    assert main(["check", str(path)]) == 2


def test_a_missing_age_interval_past_the_known_distance_is_overdue():
    # 90,000 km from 0; the last reading shows 95,000 km: past the known limit.
    body = MISSING.replace("interval_distance = 90000\nin_service = 2024-01-01",
                           "interval_distance = 90000\nin_service = 2024-01-01\n"
                           "readings = [{ date = 2026-11-01, odometer = 95000 }]")
    p = plan_of(make_fleet(body), "NOAGE")
    assert p.status is Status.OVERDUE
    assert any("interval_months" in n for n in p.notes)


def test_missing_fact_is_triaged_with_the_due_now_and_not_booked():
    fleet = make_fleet(MISSING)
    assessment = assess_fleet_plan(fleet, AS_OF, "triage")
    order = [p.id for p in assessment.plans]
    assert order.index("NOAGE") < order.index("GOOD")
    week = plan_week(fleet, AS_OF)
    assert week.booking("NOAGE") is None
    unplaced = {u.job.vehicle_id: u for u in week.unplaced}
    assert "interval_months" in unplaced["NOAGE"].detail


# -- bought used, a previous owner's receipt, a job recorded twice -------------------------

USED = """
[[vehicles]]
id = "U1"
engine = "belt"
in_service = 2024-01-01
in_service_odometer = 48000
"""


def test_a_used_vehicle_with_known_history_and_no_job_is_warned():
    found = [p for p in warnings_of(USED) if p.vehicle == "U1"]
    assert found and found[0].field == "belt_history"
    assert "48,000" in found[0].message


def test_a_new_vehicle_with_known_history_is_not_warned():
    body = USED.replace("in_service_odometer = 48000", "in_service_odometer = 40")
    assert warnings_of(body) == []


PREVIOUS_OWNER = """
[[vehicles]]
id = "P1"
engine = "belt"
in_service = 2024-01-01
in_service_odometer = 61000
[[vehicles.belt_jobs]]
date = 2023-05-01
odometer = 52000
reason = "scheduled"
"""


def test_a_previous_owners_belt_job_is_accepted_and_noted():
    fleet = make_fleet(PREVIOUS_OWNER)
    p = plan_of(fleet, "P1")
    assert p.install is not None and p.install.date == dt.date(2023, 5, 1)
    # 60 months from 2023-05-01 is 2028-05-01 (dateutil relativedelta semantics).
    assert p.time_due_date == dt.date(2028, 5, 1)
    assert any("before the vehicle entered service" in n for n in p.notes)
    assert any(w.vehicle == "P1" and "belt_jobs[0]" in w.field
               for w in warnings_of(PREVIOUS_OWNER))


def test_a_previous_owners_job_above_the_in_service_odometer_is_refused():
    body = PREVIOUS_OWNER.replace("odometer = 52000", "odometer = 65000")
    with pytest.raises(PlannerError) as caught:
        make_fleet(body)
    p = caught.value.problems[0]
    assert p.field == "belt_jobs[0].odometer"
    assert "65,000" in p.message and "61,000" in p.message
    assert len(caught.value.problems) == 1


TWICE = """
[[vehicles]]
id = "D1"
engine = "belt"
in_service = 2024-01-01
[[vehicles.belt_jobs]]
date = 2025-06-01
odometer = 40000
reason = "scheduled"
[[vehicles.belt_jobs]]
date = 2025-06-01
odometer = 40000
reason = "scheduled"
"""


def test_the_same_belt_job_twice_is_warned():
    text = fleet_text(TWICE)
    found = [p for p in warnings_of(TWICE) if p.vehicle == "D1"]
    assert len(found) == 1 and found[0].field == "belt_jobs[1]"
    assert found[0].line == [n for n, line in enumerate(text.splitlines(), 1)
                             if "[[vehicles.belt_jobs]]" in line][1]


# -- check: every problem at once, and the old key names -----------------------------------

def test_type_errors_do_not_hide_an_unknown_profile():
    body = """
    [[vehicles]]
    id = "X"
    engine = "nope"
    in_service = 2024-01-01
    in_service_odometer = "1200"
    labour_hours = "3"
    label = 12
    """
    with pytest.raises(PlannerError) as caught:
        make_fleet(body)
    problems = caught.value.problems
    text = fleet_text(body)
    assert {p.field: p.line for p in problems} == {
        "engine": line_of(text, 'engine = "nope"'),
        "in_service_odometer": line_of(text, "in_service_odometer ="),
        "labour_hours": line_of(text, 'labour_hours = "3"'),
        "label": line_of(text, "label = 12"),
    }


def test_the_old_key_names_load_with_a_warning():
    header = HEADER.replace("near_limit_distance", "due_soon_distance").replace(
        "near_limit_days", "due_soon_days")
    found = warnings_of(USED.replace("48000", "0"), header)
    assert {p.field for p in found} == {"fleet.due_soon_distance", "fleet.due_soon_days"}
    assert any("near_limit_distance" in (p.message + p.hint) for p in found)


def test_a_readings_import_warns_of_a_belt_job_recorded_twice():
    text = fleet_text(TWICE)
    fleet = parse_fleet_text(text, "f.toml")
    csv = "id,date,odometer\nD1,2026-12-01,52000\n"
    result = importer.import_readings(csv, fleet, text, source="w.csv",
                                      date_order=importer.DAY_FIRST, today=AS_OF)
    assert len(result.added) == 1
    hits = [line for line in result.report if "recorded twice" in line]
    assert len(hits) == 1 and "D1" in hits[0] and "warning" in hits[0]


# -- invariants --------------------------------------------------------------------------------

@given(
    severe=st.booleans(),
    drop=st.sets(st.sampled_from(["drive", "interval_distance", "interval_months"])),
    history=st.sampled_from(["known", "unknown"]),
    fitted=st.integers(0, 3000),  # days before the planning date the belt went in
    used=st.integers(0, 200_000),  # km since
)
def test_a_missing_fact_never_reads_ok_and_never_lowers_a_status(severe, drop, history,
                                                                fitted, used):
    start = AS_OF - dt.timedelta(days=fitted + 30)
    job_day = AS_OF - dt.timedelta(days=fitted)
    full = {"id": "V", "drive": "belt", "interference": "interference",
            "interval_distance": 100000.0, "interval_months": 60, "duty": "normal",
            "in_service": start, "belt_history": history,
            "readings": [{"date": AS_OF - dt.timedelta(days=1), "odometer": float(used)}]}
    if history == "known":
        full["belt_jobs"] = [{"date": job_day, "odometer": 0.0, "reason": "scheduled"}]
    # Severe duty with its severe interval equal to the normal one plans as normal duty does.
    filled = dict(full, duty="severe" if severe else "normal",
                  severe_interval_distance=100000.0, severe_interval_months=60)
    missing = {k: v for k, v in full.items() if k not in drop}
    missing["duty"] = "severe" if severe else "normal"
    known = Fleet.model_validate({"vehicles": [filled]})
    gap = Fleet.model_validate({"vehicles": [missing]})
    p_known = plan_vehicle(known.vehicles[0], known, AS_OF)
    p_gap = plan_vehicle(gap.vehicles[0], gap, AS_OF)
    if p_gap.spec.missing:
        assert p_gap.status in (Status.OVERDUE, Status.NO_RECORD, Status.MISSING_FACT)
        if not drop & {"interval_distance", "interval_months"}:  # both limits known: what
            assert p_gap.status.rank <= p_known.status.rank   # they say is never lowered
    else:
        assert p_gap.status is p_known.status


@pytest.mark.parametrize("seed", [3, 8])
def test_warnings_located_vehicle_by_vehicle_agree_with_the_whole_text(seed):
    # The quick way (each vehicle's table alone) against the plain one (the whole text).
    from planner.fileio import locate, located_warnings
    from planner.generate import generate_fleet_text
    from planner.locate import line_of as position
    from planner.validate import fleet_warnings

    text = generate_fleet_text(300, seed=seed)
    fleet = parse_fleet_text(text, "g.toml")
    found = located_warnings(fleet, text, "g.toml")
    whole = locate(text)
    plain = sorted(position(whole, p.path)[0] for p in fleet_warnings(fleet))
    assert found and [p.line for p in found] == plain


def test_a_missing_fact_leads_with_finding_it():
    from planner.export import CAUTION
    from planner.risk import action_words
    from planner.tui.widgets import detail_parts

    fleet = make_fleet("""
[[vehicles]]
id = "SEV"
engine = "plain"
duty = "severe"
in_service = 2023-01-01
""", NO_SEVERE)
    p = plan_of(fleet, "SEV")
    assert p.status is Status.MISSING_FACT
    # The action column and the detail lead with finding the fact; the caution goes with it.
    assert action_words(p) == "find fact now"
    todo = detail_parts.what_to_do(p)
    assert todo is not None and todo.plain.startswith("Find the missing fact now")
    assert CAUTION in todo.plain
    # The week's views (board, not-placed list, call list) say the same, never "book soon".
    assert plan_week(fleet, AS_OF).job("SEV").action == "find fact now"


def test_check_gives_the_caution_with_its_warnings_and_reads_the_old_status_word(
        tmp_path, capsys):
    from planner.export import CAUTION

    path = tmp_path / "fleet.toml"
    path.write_text(fleet_text(SEVERE_OK, NO_SEVERE), encoding="utf-8")
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "warning" in out and CAUTION in out
    # `--status due-soon`, the status's earlier name, still means near-limit.
    assert main(["list", str(GARAGE), "--as-of", "2026-12-04", "--status", "due-soon",
                 "--format", "json"]) == 0
    import json
    rows = json.loads(capsys.readouterr().out)["vehicles"]  # reference: `json`
    assert rows and {r["status"] for r in rows} == {"near-limit"}


def test_overdue_on_a_known_age_limit_with_the_distance_unknown_is_dated_and_required():
    from planner.export import assessment_records, cell

    # No interval_distance: 48 months from 2020-01-01 is 2024-01-01 (dateutil's calendar
    # months), long past on the planning date: overdue, due that day, and its expected-loss
    # cell says the job is required rather than leaving a dash.
    fleet = make_fleet("""
[[vehicles]]
id = "NODIST"
drive = "belt"
interference = "interference"
interval_months = 48
in_service = 2020-01-01
""")
    p = plan_of(fleet, "NODIST")
    assert p.status is Status.OVERDUE
    assert p.due_date == dt.date(2024, 1, 1) and p.days_remaining == (dt.date(2024, 1, 1)
                                                                       - AS_OF).days
    record = assessment_records(assess_fleet_plan(fleet, AS_OF))[0]
    assert cell(record, "expected_loss") == "required"
