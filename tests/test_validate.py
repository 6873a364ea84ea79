"""Bad input: every problem is reported at once, with file, line, vehicle, field and a fix."""

from __future__ import annotations

import subprocess
import sys

import pytest

from planner.cli import main
from planner.errors import PlannerError
from planner.fileio import located_warnings, parse_fleet_text
from tests.conftest import ROOT, fleet_text


def problems_of(body: str) -> list:
    with pytest.raises(PlannerError) as caught:
        parse_fleet_text(fleet_text(body), "bad.toml")
    return caught.value.problems


def line_of(text: str, needle: str) -> int:
    """1-based line of the first line containing `needle` (the expected location)."""
    for number, line in enumerate(text.splitlines(), 1):
        if needle in line:
            return number
    raise AssertionError(needle)


def only(problems: list, fragment: str):
    hits = [p for p in problems if fragment in p.message]
    assert hits, [p.render() for p in problems]
    return hits[0]


GOOD = """
[[vehicles]]
id = "V1"
engine = "belt"
in_service = 2024-01-01
readings = [{ date = 2025-01-01, odometer = 20000 }]
"""


def test_duplicate_ids():
    body = GOOD + GOOD.replace("2025-01-01", "2025-02-01")
    p = only(problems_of(body), "already used")
    assert p.vehicle == "V1" and p.field == "id"
    assert p.line == line_of(fleet_text(body), 'id = "V1"') + 6  # the second one


def test_unknown_engine_profile_suggests_the_nearest():
    body = GOOD.replace('engine = "belt"', 'engine = "blet"')
    p = only(problems_of(body), "unknown engine profile 'blet'")
    assert p.vehicle == "V1" and p.field == "engine"
    assert "did you mean 'belt'" in p.hint
    assert p.line == line_of(fleet_text(body), 'engine = "blet"')


def test_missing_interval_for_a_belt_is_a_warning():
    body = """
    [[vehicles]]
    id = "V2"
    drive = "belt"
    interval_distance = 90000
    in_service = 2024-01-01
    """
    text = fleet_text(body)
    fleet = parse_fleet_text(text, "f.toml")  # loads: a missing fact is not an error
    p = only(located_warnings(fleet, text, "f.toml"), "no replacement interval")
    assert p.vehicle == "V2" and p.field == "interval_months" and p.is_warning
    assert "whichever comes first" in p.hint


def test_odometer_going_backwards():
    body = """
    [[vehicles]]
    id = "V3"
    engine = "belt"
    in_service = 2024-01-01
    readings = [
      { date = 2025-01-01, odometer = 20000 },
      { date = 2025-06-01, odometer = 19000 },
    ]
    """
    p = only(problems_of(body), "odometer goes backwards")
    assert p.vehicle == "V3" and p.field == "readings[1].odometer"
    assert p.line == line_of(fleet_text(body), "odometer = 19000")
    assert "20,000" in p.message and "19,000" in p.message


def test_job_odometer_below_an_earlier_reading():
    body = """
    [[vehicles]]
    id = "V3b"
    engine = "belt"
    in_service = 2024-01-01
    readings = [{ date = 2025-01-01, odometer = 20000 }]
    [[vehicles.belt_jobs]]
    date = 2025-03-01
    odometer = 2000
    reason = "scheduled"
    """
    p = only(problems_of(body), "odometer goes backwards")
    assert p.field == "belt_jobs[0].odometer"
    lines = fleet_text(body).splitlines()
    assert lines[p.line - 1].strip() == "odometer = 2000"


def test_reading_before_the_vehicle_entered_service():
    # (A belt job before it is a previous owner's record: accepted when its odometer fits,
    # see tests/test_missing_facts.py.)
    body = """
    [[vehicles]]
    id = "V4"
    engine = "belt"
    in_service = 2024-01-01
    readings = [
      { date = 2023-05-01, odometer = 0 },
    ]
    """
    p = only(problems_of(body), "before the vehicle entered service")
    assert p.vehicle == "V4" and p.field == "readings[0].date"
    assert p.line == line_of(fleet_text(body), "date = 2023-05-01")


@pytest.mark.parametrize(("line", "field"), [
    ("in_service_odometer = -5", "in_service_odometer"),
    ("in_service_odometer = 90000000", "in_service_odometer"),
    ("interval_months = 0", "interval_months"),
    ("labour_hours = 5000", "labour_hours"),
])
def test_negative_or_absurd_numbers(line, field):
    body = GOOD.replace('in_service = 2024-01-01', f'in_service = 2024-01-01\n{line}')
    problems = problems_of(body)
    p = next(p for p in problems if p.field == field)
    assert p.vehicle == "V1"
    assert p.line == line_of(fleet_text(body), line)


def test_unknown_enum_value():
    body = GOOD.replace('engine = "belt"', 'engine = "belt"\nduty = "heavy"')
    p = next(p for p in problems_of(body) if p.field == "duty")
    assert "'normal' or 'severe'" in p.message and "heavy" in p.message
    assert p.vehicle == "V1"


def test_misspelt_key_suggests_the_right_name():
    body = GOOD.replace('in_service = 2024-01-01', 'in_servise = 2024-01-01')
    problems = problems_of(body)
    p = only(problems, "unknown key 'in_servise'")
    assert p.hint == "did you mean 'in_service'?"
    assert p.vehicle == "V1"
    assert p.line == line_of(fleet_text(body), "in_servise")
    only(problems, "required key is missing")  # and the real key is reported missing


def test_misspelt_key_in_an_engine_profile():
    text = fleet_text(GOOD).replace("labour_hours = 3.0", "labor_hours = 3.0")
    with pytest.raises(PlannerError) as caught:
        parse_fleet_text(text, "bad.toml")
    p = only(caught.value.problems, "unknown key 'labor_hours'")
    assert p.hint == "did you mean 'labour_hours'?"
    assert p.field == "engines.belt.labor_hours"


def test_every_problem_is_reported_at_once():
    body = """
    [[vehicles]]
    id = "A"
    engine = "nope"
    in_service = 2024-01-01
    [[vehicles]]
    id = "B"
    engine = "belt"
    duty = "sometimes"
    in_service = 2024-01-01
    [[vehicles]]
    id = "A"
    engine = "belt"
    in_service = 2024-01-01
    """
    problems = problems_of(body)
    assert {p.vehicle for p in problems} == {"A", "B"}
    assert len(problems) == 3
    assert [p.line for p in problems] == sorted(p.line for p in problems)


def test_toml_syntax_error_has_line_and_column():
    text = fleet_text(GOOD).replace('id = "V1"', 'id = "V1')
    with pytest.raises(PlannerError) as caught:
        parse_fleet_text(text, "bad.toml")
    p = caught.value.problems[0]
    assert "TOML syntax error" in p.message
    assert p.line == line_of(text, 'id = "V1')
    assert p.column is not None


def test_a_label_full_of_markup_is_kept_literally():
    body = GOOD.replace('id = "V1"', 'id = "V1"\nlabel = "[red]van[/] ${x} <b>"')
    fleet = parse_fleet_text(fleet_text(body), "ok.toml")
    assert fleet.vehicles[0].label == "[red]van[/] ${x} <b>"


def test_cli_exit_status_2_and_a_clear_message(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(fleet_text(GOOD.replace('engine = "belt"', 'engine = "blet"')))
    assert main(["check", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "vehicle V1, field engine: unknown engine profile 'blet'" in err
    assert f"{bad}:" in err
    assert main(["list", str(bad)]) == 2


@pytest.mark.parametrize("args", [
    ["list", "{file}", "--as-of", "2026-13-01"],
    ["list", "{file}", "--status", "overdo"],
    ["list", "{file}", "--format", "xml"],
    ["check", "{missing}"],
    ["list", "{bad}"],
])
def test_cli_bad_values_exit_2_without_traceback(tmp_path, args):
    bad = tmp_path / "bad.toml"
    bad.write_text("schema = 1\n[fleet\n")
    good = tmp_path / "good.toml"
    good.write_text(fleet_text(GOOD))
    argv = [a.format(file=good, missing=tmp_path / "none.toml", bad=bad) for a in args]
    run = subprocess.run([sys.executable, "-m", "planner", *argv], capture_output=True,
                         text=True, cwd=ROOT)
    assert run.returncode == 2, run.stderr
    assert "Traceback" not in run.stderr
    assert run.stderr.strip()
