"""Style-preserving edits of fleet-file text (planner.edit).

The reference for "the data is right" is the standard library's `tomllib`: each edit is checked
by parsing the new text with it and comparing with the original data plus the expected change.
"The style is kept" is checked line by line: every line of the original (comments included)
is still there, in the same order.
"""

from __future__ import annotations

import copy
import datetime as dt
import tomllib
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from planner import edit
from planner.errors import PlannerError
from planner.fileio import parse_fleet_text

EXAMPLE = Path(__file__).resolve().parent.parent / "fleet_examples" / "courier_fleet.toml"
TEXT = EXAMPLE.read_text(encoding="utf-8")
DATA = tomllib.loads(TEXT)
D = dt.date


def vehicle(data: dict, vid: str) -> dict:
    return next(v for v in data["vehicles"] if v["id"] == vid)


def is_subsequence(small: list[str], big: list[str]) -> bool:
    it = iter(big)
    return all(line in it for line in small)


def kept_everything(old: str, new: str) -> bool:
    """Every line of `old` is in `new`, in order (an edit only added lines)."""
    return is_subsequence(old.splitlines(), new.splitlines())


def comments(text: str) -> list[str]:
    return [line for line in text.splitlines() if "#" in line]


# -- readings ---------------------------------------------------------------------------------

def test_add_reading_to_a_multiline_array_keeps_style_and_data():
    new = edit.add_reading(TEXT, "KL-01", D(2026, 12, 7), 230000.0)
    expected = copy.deepcopy(DATA)
    vehicle(expected, "KL-01")["readings"].append({"date": D(2026, 12, 7), "odometer": 230000})
    assert tomllib.loads(new) == expected
    assert kept_everything(TEXT, new)
    # Written the way the file writes its readings: indented, spaced braces, trailing comma.
    assert "  { date = 2026-12-07, odometer = 230000 },\n]" in new
    parse_fleet_text(new, "fleet.toml")  # and the loader accepts it


def test_add_reading_to_a_one_line_array():
    new = edit.add_reading(TEXT, "KL-14", D(2026, 12, 7), 88000)
    assert ("readings = [{ date = 2026-11-16, odometer = 87400 }, "
            "{ date = 2026-12-07, odometer = 88000 }]") in new
    assert vehicle(tomllib.loads(new), "KL-14")["readings"][-1] == {
        "date": D(2026, 12, 7), "odometer": 88000}


def test_add_first_reading_creates_the_array():
    text = 'schema = 1\n\n[[vehicles]]\nid = "A"\ndrive = "chain"\nin_service = 2020-01-01\n'
    new = edit.add_reading(text, "A", D(2021, 1, 1), 1500.5)
    assert tomllib.loads(new)["vehicles"][0]["readings"] == [
        {"date": D(2021, 1, 1), "odometer": 1500.5}]
    assert "readings = [\n  { date = 2021-01-01, odometer = 1500.5 },\n]\n" in new


def test_array_without_trailing_comma_gets_one():
    text = ('[[vehicles]]\nid = "A"\ndrive = "chain"\nin_service = 2020-01-01\nreadings = [\n'
            '    { date = 2020-06-01, odometer = 10 }  # from the fuel card\n]\n')
    new = edit.add_reading(text, "A", D(2021, 1, 1), 20)
    assert [r["odometer"] for r in tomllib.loads(new)["vehicles"][0]["readings"]] == [10, 20]
    assert "# from the fuel card" in new


@settings(max_examples=40, deadline=None)
@given(day=st.dates(D(2026, 11, 28), D(2030, 1, 1)),
       odo=st.integers(224300, 2_000_000) | st.floats(224300, 2_000_000, allow_nan=False))
def test_any_reading_round_trips(day, odo):
    new = edit.add_reading(TEXT, "KL-01", day, odo)
    got = vehicle(tomllib.loads(new), "KL-01")["readings"][-1]
    assert got["date"] == day and got["odometer"] == odo
    assert comments(new) == comments(TEXT)


# -- belt jobs --------------------------------------------------------------------------------

JOB = {"date": D(2026, 12, 7), "odometer": 226000, "reason": "scheduled",
       "work": 'belt kit, "Tesk" pump', "notes": ""}


def test_add_job_after_existing_jobs():
    new = edit.add_belt_job(TEXT, "KL-01", JOB)
    expected = copy.deepcopy(DATA)
    job = {k: v for k, v in JOB.items() if v != ""}
    vehicle(expected, "KL-01")["belt_jobs"].append(job)
    assert tomllib.loads(new) == expected
    assert kept_everything(TEXT, new)
    # The blank line that separated KL-01 from KL-02 still does.
    assert '\nwork = "belt kit, \\"Tesk\\" pump"\n\n[[vehicles]]\nid = "KL-02"' in new


def test_add_first_job_to_a_vehicle():
    new = edit.add_belt_job(TEXT, "KL-03", {"date": D(2026, 12, 7), "odometer": 70200,
                                             "reason": "precaution"})
    jobs = vehicle(tomllib.loads(new), "KL-03")["belt_jobs"]
    assert jobs == [{"date": D(2026, 12, 7), "odometer": 70200, "reason": "precaution"}]
    assert kept_everything(TEXT, new)
    assert 'reason = "precaution"\n\n[[vehicles]]\nid = "KL-04"' in new


def test_add_job_to_the_last_vehicle_of_the_file():
    new = edit.add_belt_job(TEXT, "KL-16", JOB)
    assert len(vehicle(tomllib.loads(new), "KL-16")["belt_jobs"]) == 3
    assert new.startswith(TEXT)


def test_unknown_vehicle_is_a_planner_error():
    with pytest.raises(PlannerError, match="no vehicle 'KL-99'"):
        edit.add_reading(TEXT, "KL-99", D(2026, 1, 1), 1)


# -- vehicles ---------------------------------------------------------------------------------

NEW_VEHICLE = {"id": "KL-20", "label": "[red]van[/]", "engine": "tesk", "duty": "normal",
               "in_service": D(2026, 1, 5), "in_service_odometer": 10, "belt_history": "known",
               "drive": None, "notes": ""}


def test_add_vehicle_at_the_end_in_reference_order():
    new = edit.add_vehicle(TEXT, NEW_VEHICLE)
    expected = copy.deepcopy(DATA)
    expected["vehicles"].append({"id": "KL-20", "label": "[red]van[/]", "engine": "tesk",
                                 "duty": "normal", "in_service": D(2026, 1, 5),
                                 "in_service_odometer": 10, "belt_history": "known"})
    assert tomllib.loads(new) == expected
    assert kept_everything(TEXT, new)
    assert new.endswith('work = "belt kit and water pump"\n\n[[vehicles]]\nid = "KL-20"\n'
                        'label = "[red]van[/]"\nengine = "tesk"\nduty = "normal"\n'
                        'in_service = 2026-01-05\nin_service_odometer = 10\n'
                        'belt_history = "known"\n')


def test_add_vehicle_to_a_file_without_vehicles():
    text = "# my fleet\nschema = 1\n\n[fleet]\nname = \"x\"  # the name\n"
    new = edit.add_vehicle(text, {"id": "A", "drive": "chain", "in_service": D(2020, 1, 1)})
    assert tomllib.loads(new)["vehicles"] == [
        {"id": "A", "drive": "chain", "in_service": D(2020, 1, 1)}]
    assert kept_everything(text, new)


def test_edit_vehicle_touches_only_changed_keys_and_keeps_their_comments():
    values = {"label": "Van 1", "duty": "severe", "belt_history": "known", "notes": "new",
              "in_service": D(2020, 2, 3), "in_service_odometer": 12, "engine": "tesk"}
    new = edit.edit_vehicle(TEXT, "KL-01", values)
    changed = [(a, b) for a, b in zip(TEXT.splitlines(), new.splitlines(), strict=False)
               if a != b]
    assert changed[0] == ('label = "Van 1, city rounds"', 'label = "Van 1"')
    # belt_history = "known" is the default and was not in the file: not added.
    assert 'belt_history' not in new.split('id = "KL-02"')[0].split('id = "KL-01"')[1]
    v = vehicle(tomllib.loads(new), "KL-01")
    assert v["label"] == "Van 1" and v["notes"] == "new"
    assert len(comments(new)) == len(comments(TEXT))


def test_edit_vehicle_value_keeps_the_line_comment():
    new = edit.edit_vehicle(TEXT, "KL-01", {"duty": "normal"})
    assert 'duty = "normal"                    # stop-start delivery' in new


def test_edit_vehicle_removes_a_key_set_to_none_and_renames():
    new = edit.edit_vehicle(TEXT, "KL-14", {"fuel": None, "id": "KL-14B", "parts_cost": 320.0})
    v = vehicle(tomllib.loads(new), "KL-14B")
    assert "fuel" not in v and v["parts_cost"] == 320.0
    assert "# No profile: the vehicle carries its own drive fields." in new


def test_delete_vehicle_keeps_the_comments_around_it():
    new = edit.delete_vehicle(TEXT, "KL-02")
    expected = copy.deepcopy(DATA)
    expected["vehicles"] = [v for v in expected["vehicles"] if v["id"] != "KL-02"]
    assert tomllib.loads(new) == expected
    assert comments(new) == comments(TEXT)
    assert is_subsequence(new.splitlines(), TEXT.splitlines())


def test_delete_first_vehicle_keeps_the_section_heading():
    new = edit.delete_vehicle(TEXT, "KL-01")
    assert "# Vehicles. Readings are odometer values" in new
    assert [v["id"] for v in tomllib.loads(new)["vehicles"]][0] == "KL-02"
    assert comments(new) == [c for c in comments(TEXT) if "stop-start" not in c]


def test_delete_moves_a_heading_that_introduces_the_next_vehicle():
    text = ('[[vehicles]]\nid = "A"\ndrive = "chain"\nin_service = 2020-01-01\n\n'
            '[[vehicles]]\nid = "B"\ndrive = "chain"\nin_service = 2020-01-01\n\n'
            '# ---- customer cars ----\n\n'
            '[[vehicles]]\nid = "C"\ndrive = "chain"\nin_service = 2020-01-01\n')
    new = edit.delete_vehicle(text, "B")
    assert [v["id"] for v in tomllib.loads(new)["vehicles"]] == ["A", "C"]
    assert "\n\n# ---- customer cars ----\n\n[[vehicles]]\nid = \"C\"" in new


# -- engine profiles --------------------------------------------------------------------------

def test_new_profile_goes_after_the_last_profile_and_before_the_vehicles_heading():
    values = {"description": "ZZ9 test", "drive": "belt", "interference": "interference",
              "interval_distance": 100000, "interval_months": 60, "parts": ["kit", "pump"],
              "labour_hours": 3.0, "fuel": None}
    new = edit.set_engine(TEXT, "zz9", values)
    expected = copy.deepcopy(DATA)
    expected["engines"]["zz9"] = {k: v for k, v in values.items() if v is not None}
    assert tomllib.loads(new) == expected
    assert kept_everything(TEXT, new)
    assert ('interference = "interference"\n\n[engines.zz9]\ndescription = "ZZ9 test"\n'
            in new)
    assert new.index("[engines.zz9]") < new.index("# Vehicles. Readings")


def test_edit_profile_keeps_comments():
    new = edit.set_engine(TEXT, "tesk", {"labour_hours": 4.0, "severe_interval_months": 58,
                                         "failure_cost": 4100.0})
    assert tomllib.loads(new)["engines"]["tesk"]["labour_hours"] == 4.0
    assert "failure_cost = 4100.0              # head repair estimate" in new
    assert "severe_interval_months = 58\n" in new  # unchanged line left as it was


def test_first_profile_in_a_file_without_engines():
    text = '[[vehicles]]\nid = "A"\nengine = "p1"\nin_service = 2020-01-01\n'
    new = edit.set_engine(text, "p1", {"drive": "chain"})
    assert tomllib.loads(new)["engines"] == {"p1": {"drive": "chain"}}
    parse_fleet_text(new, "f.toml")


def test_windows_line_ends_stay_windows():
    text = TEXT.replace("\n", "\r\n")
    new = edit.add_belt_job(text, "KL-03", JOB)
    assert "\n" not in new.replace("\r\n", "")
    assert len(tomllib.loads(new)["vehicles"]) == len(DATA["vehicles"])


def test_bad_toml_is_a_planner_error():
    with pytest.raises(PlannerError):
        edit.add_reading("schema = = 1", "A", D(2020, 1, 1), 1)


# -- editing only the region an edit is about -------------------------------------------------

IDS = [v["id"] for v in DATA["vehicles"]]


def every_edit(text: str):
    """(name, thunk) for every kind of edit on every vehicle and profile of the example."""
    for vid in IDS:
        yield f"reading {vid}", lambda v=vid: edit.add_reading(text, v, D(2027, 1, 1), 4_000_000)
        yield f"job {vid}", lambda v=vid: edit.add_belt_job(text, v, JOB)
        yield f"edit {vid}", lambda v=vid: edit.edit_vehicle(text, v, {"label": "x", "notes": "y"})
        yield f"delete {vid}", lambda v=vid: edit.delete_vehicle(text, v)
    yield "add vehicle", lambda: edit.add_vehicle(text, NEW_VEHICLE)
    for pid in DATA["engines"]:
        yield f"profile {pid}", lambda p=pid: edit.set_engine(text, p, {"labour_hours": 9.0})
    yield "new profile", lambda: edit.set_engine(text, "zz9", {"drive": "chain"})


@pytest.mark.parametrize("text", [TEXT, TEXT.replace("\n", "\r\n")], ids=["lf", "crlf"])
def test_region_edits_equal_whole_file_edits(monkeypatch, text):
    sliced = {name: run() for name, run in every_edit(text)}
    monkeypatch.setattr(edit, "SLICING", False)
    for name, run in every_edit(text):
        assert sliced[name] == run(), name


def test_a_region_edit_parses_only_the_region(monkeypatch):
    seen = []
    real = edit.tomlkit.parse
    monkeypatch.setattr(edit.tomlkit, "parse", lambda s: seen.append(len(s)) or real(s))
    edit.add_reading(TEXT, "KL-09", D(2027, 1, 1), 170000)
    assert seen and max(seen) < len(TEXT) / 10


def test_odd_layouts_fall_back_to_the_whole_file():
    # Two vehicles with the same id, and a header-like line inside a multi-line string.
    text = ('[[vehicles]]\nid = "A"\ndrive = "chain"\nin_service = 2020-01-01\n'
            'notes = """\n[[vehicles]]\nid = "B"\n"""\n'
            '[[vehicles]]\nid = "B"\ndrive = "chain"\nin_service = 2020-01-01\n')
    new = edit.add_reading(text, "B", D(2021, 1, 1), 5)
    data = tomllib.loads(new)
    assert data["vehicles"][1]["readings"] == [{"date": D(2021, 1, 1), "odometer": 5}]
    assert data["vehicles"][0]["notes"] == '[[vehicles]]\nid = "B"\n'


# -- vehicles written inline: vehicles = [{ … }] ----------------------------------------------

INLINE = (
    'schema = 1\nvehicles = [\n'
    '    { id = "A", drive = "chain", in_service = 2020-01-01 },  # the yard pickup\n'
    '    { id = "B", drive = "chain", in_service = 2021-01-01, '
    'readings = [{ date = 2021-06-01, odometer = 900 }] },\n]\n'
)


def test_inline_vehicles_can_be_edited_too():
    new = edit.add_reading(INLINE, "A", D(2021, 1, 1), 500)
    new = edit.add_reading(new, "B", D(2022, 1, 1), 1500)
    new = edit.add_belt_job(new, "A", {"date": D(2021, 2, 1), "odometer": 600,
                                       "reason": "precaution", "notes": ""})
    new = edit.edit_vehicle(new, "B", {"label": "van B"})
    new = edit.add_vehicle(new, {"id": "C", "drive": "gear", "in_service": D(2022, 1, 1)})
    data = tomllib.loads(new)
    a, b, c = data["vehicles"]
    assert a["readings"] == [{"date": D(2021, 1, 1), "odometer": 500}]
    assert a["belt_jobs"] == [{"date": D(2021, 2, 1), "odometer": 600, "reason": "precaution"}]
    assert b["readings"][-1] == {"date": D(2022, 1, 1), "odometer": 1500} and b["label"] == "van B"
    assert c == {"id": "C", "drive": "gear", "in_service": D(2022, 1, 1)}
    assert "# the yard pickup" in new
    parse_fleet_text(new, "f.toml")
    gone = edit.delete_vehicle(new, "B")
    assert [v["id"] for v in tomllib.loads(gone)["vehicles"]] == ["A", "C"]
