"""`beltplan readings`: odometer readings from a weekly CSV into a fleet file."""

from __future__ import annotations

import datetime as dt
import re
import shutil
import tomllib
from pathlib import Path

import pytest

from planner import edit, importer
from planner.cli import main
from planner.errors import PlannerError
from planner.fileio import load_fleet
from tests.conftest import COURIER, EXAMPLES

DATA = Path(__file__).resolve().parent / "data" / "import"
FLEET = DATA / "readings_fleet.toml"
WEEK = DATA / "readings_week.csv"
TODAY = dt.date(2026, 12, 7)


def readings_import(csv_name: Path = WEEK, fleet_path: Path = FLEET, **options):
    loaded = load_fleet(fleet_path)
    decoded = importer.decode_bytes(csv_name.read_bytes(), csv_name.name)
    options.setdefault("date_order", importer.DAY_FIRST)
    options.setdefault("today", TODAY)
    return loaded, importer.import_readings(decoded.text, loaded.fleet, loaded.text,
                                            source=csv_name.name, decoded=decoded, **options)


def comments(text: str) -> list[str]:
    """Every comment of a TOML text, in order (no '#' occurs inside a string in these files)."""
    return [line[line.index("#"):] for line in text.splitlines() if "#" in line]


@pytest.fixture
def week():
    return readings_import()


def test_summary_counts(week):
    _, result = week
    assert (len(result.added), len(result.skipped), len(result.rejected)) == (3, 2, 6)
    assert "Readings: 3 added, 2 skipped (already in the file), 6 rejected" in result.report


def test_new_readings_are_added_by_vehicle_id(week):
    _, result = week
    assert [(r.vehicle, r.date, r.odometer, r.row) for r in result.added] == [
        ("BF-01", dt.date(2026, 12, 2), 225100, 2),
        ("BF-02", dt.date(2026, 12, 3), 169400, 6),   # 'bf 02' in the export
        ("BF-04", dt.date(2026, 12, 2), 171500, 12),  # a vehicle that had no readings
    ]
    assert any("id 'bf 02' matched to vehicle BF-02" in line for line in result.report)


def test_duplicates_are_skipped(week):
    _, result = week
    assert [(p.row, p.message) for p in result.skipped] == [
        (3, "BF-01: 2026-12-02 at 225,100 km repeats row 2"),
        (4, "BF-01: 2026-11-27 at 224,300 km is already in the file"),
    ]


# Row of readings_week.csv -> (column, fragment of the reason it is rejected).
REJECTED = {
    5: ("Odometer", "BF-01: odometer goes backwards: 224,000 km on 2026-12-03 is below the "
                    "reading of row 2 of 2026-12-02 (225,100 km)"),
    7: ("Vehicle", "no vehicle with this id"),
    8: ("Date", "BF-03: dated 2019-01-01, before the vehicle entered service (2021-12-06)"),
    9: ("Odometer", "the value is in mi, but the fleet's distances are in km"),
    10: ("Odometer", "BF-05: odometer goes backwards: 271,900 km on 2026-11-20 is above the "
                     "reading of the later day 2026-11-24 (271,300 km)"),
    11: ("Date", "BF-03: dated 2026-12-28, after today (2026-12-07)"),
}


def test_backwards_unknown_and_misdated_rows_are_rejected_with_reasons(week):
    _, result = week
    assert {p.row: (p.column, p.message) for p in result.rejected} == REJECTED
    unit = next(p for p in result.rejected if p.row == 9)
    assert unit.value == "23,000 mi" and "--unit" not in unit.hint  # readings has no --unit


def test_comments_survive_and_the_data_is_the_old_data_plus_the_new_readings(week):
    loaded, result = week
    assert comments(result.text) == comments(loaded.text)
    # Reference: the standard library's tomllib reads both texts.
    before, after = tomllib.loads(loaded.text), tomllib.loads(result.text)
    for vehicle in before["vehicles"]:
        vehicle.setdefault("readings", []).extend(
            {"date": r.date, "odometer": r.odometer} for r in result.added
            if r.vehicle == vehicle["id"])
    assert after == before


def test_multiline_arrays_stay_one_reading_per_line(week):
    _, result = week
    assert "  { date = 2026-11-27, odometer = 224300 },   # fuel card\n" \
        "  { date = 2026-12-02, odometer = 225100 },\n]" in result.text


def test_the_ambiguous_date_column_is_refused_without_a_flag():
    with pytest.raises(PlannerError) as caught:
        readings_import(date_order=None)
    text = caught.value.render()
    assert "dates in column 'Date' can be read two ways" in text
    assert "'02/12/2026': 2 December 2026 day-first, 12 February 2026 month-first" in text


def test_a_header_unit_other_than_the_fleets_is_refused(tmp_path):
    export = tmp_path / "miles.csv"
    export.write_text("Vehicle,Date,Odometer (mi)\nBF-01,2026-12-02,140000\n", encoding="utf-8")
    with pytest.raises(PlannerError, match="is in mi, but the fleet's distances are in km") \
            as caught:
        readings_import(export)
    assert "--unit" not in caught.value.render()


def test_a_plate_column_can_be_mapped_to_id(tmp_path):
    export = tmp_path / "card.csv"
    export.write_text("Registration,Unit no,Date,Odometer\nBF-01,7,2026-12-02,225100\n",
                      encoding="utf-8")
    _, result = readings_import(export, column_map=importer.parse_map(
        ["Registration=id", "Unit no=ignore"]))
    assert [r.vehicle for r in result.added] == ["BF-01"]


def test_ids_that_match_two_vehicles_loosely_are_rejected(tmp_path):
    fleet = tmp_path / "f.toml"
    fleet.write_text(FLEET.read_text(encoding="utf-8").replace('id = "BF-03"', 'id = "BF 01"'),
                     encoding="utf-8")
    export = tmp_path / "r.csv"
    export.write_text("Vehicle,Date,Odometer\nbf01,2026-12-02,225100\n", encoding="utf-8")
    _, result = readings_import(export, fleet)
    (problem,) = result.rejected
    assert problem.message == "matches more than one vehicle"
    assert problem.hint == "it matches BF-01, BF 01: use the exact id"


def test_missing_columns_are_named():
    loaded = load_fleet(FLEET)
    with pytest.raises(PlannerError, match="no column for reading_odometer"):
        importer.import_readings("Vehicle,Date\nBF-01,2026-12-02\n", loaded.fleet,
                                 loaded.text, source="x.csv")


# -- the command ------------------------------------------------------------------------------

def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_weekly_example_updates_the_courier_fleet_keeping_every_comment(courier_copy, capsys):
    original = courier_copy.read_text(encoding="utf-8")
    code, out, err = run(capsys, "readings", str(courier_copy), "--from",
                         str(EXAMPLES / "weekly_readings.csv"))
    assert code == 0, err
    assert "Readings: 19 added, 1 skipped (already in the file), 0 rejected" in out
    new = courier_copy.read_text(encoding="utf-8")
    assert comments(new) == comments(original)
    assert (courier_copy.parent / "courier_fleet.toml.bak").read_text(encoding="utf-8") == \
        original
    fleet = load_fleet(courier_copy).fleet
    assert sum(len(v.readings) for v in fleet.vehicles) == \
        sum(len(v.readings) for v in load_fleet(COURIER).fleet.vehicles) + 19
    # A second run finds everything already there and changes nothing.
    code, out, _ = run(capsys, "readings", str(courier_copy), "--from",
                       str(EXAMPLES / "weekly_readings.csv"))
    assert code == 0 and "0 added, 20 skipped" in out and "was not changed" in out
    assert courier_copy.read_text(encoding="utf-8") == new


def test_weekly_example_matches_the_courier_fleet_ids():
    ids = {v.id for v in load_fleet(COURIER).fleet.vehicles}
    text = (EXAMPLES / "weekly_readings.csv").read_text(encoding="utf-8")
    named = set(re.findall(r",(KL-?\d\d),", text))
    assert {i if "-" in i else i[:2] + "-" + i[2:] for i in named} <= ids
    assert ids == {f"KL-{n:02d}" for n in range(1, 17)}


def test_dry_run_changes_nothing(courier_copy, capsys):
    before = courier_copy.read_bytes()
    code, out, _ = run(capsys, "readings", str(courier_copy), "--from",
                       str(EXAMPLES / "weekly_readings.csv"), "--dry-run")
    assert code == 0 and "19 added" in out and "Dry run" in out
    assert courier_copy.read_bytes() == before
    assert not (courier_copy.parent / "courier_fleet.toml.bak").exists()


def test_unknown_vehicle_is_reported_by_the_command(tmp_path, capsys):
    fleet = tmp_path / "fleet.toml"
    shutil.copy(FLEET, fleet)
    export = tmp_path / "r.csv"
    export.write_text("Vehicle,Date,Odometer\nBF-99,2026-11-30,12000\n", encoding="utf-8")
    code, out, _ = run(capsys, "readings", str(fleet), "--from", str(export))
    assert code == 0
    assert "rejected: row 2, column 'Vehicle' = 'BF-99': no vehicle with this id" in out
    assert "Nothing to add" in out and fleet.read_bytes() == FLEET.read_bytes()


@pytest.mark.parametrize("argv, fragment", [
    (["readings", str(FLEET), "--from", str(DATA / "missing.csv")], "no such file"),
    (["readings", str(DATA / "missing.toml"), "--from", str(WEEK)], "no such file"),
    (["readings", str(FLEET), "--from", str(WEEK)], "can be read two ways"),
    (["readings", str(FLEET), "--from", str(WEEK), "--map", "Date=datum"], "unknown field"),
])
def test_cli_errors_exit_2_without_traceback(argv, fragment, capsys):
    code, _, err = run(capsys, *argv)
    assert code == 2 and fragment in err and "Traceback" not in err


def test_help_explains_with_an_example(capsys):
    with pytest.raises(SystemExit):
        main(["readings", "--help"])
    text = capsys.readouterr().out
    assert "--from fleet_examples/weekly_readings.csv" in text and "reading_odometer" in text


# -- the batch text edit ----------------------------------------------------------------------

@pytest.mark.parametrize("fleet_path, export, order", [
    (FLEET, WEEK, importer.DAY_FIRST),
    (COURIER, EXAMPLES / "weekly_readings.csv", None),
])
def test_batch_edit_writes_what_repeated_edit_add_reading_writes(fleet_path, export, order):
    # Reference: planner.edit.add_reading, the style-preserving edit the UI uses, one call per
    # reading. The batch must give the same text (new array, one-line and multiline arrays).
    loaded, result = readings_import(export, fleet_path, date_order=order)
    assert result.added
    expected = loaded.text
    for r in result.added:
        expected = edit.add_reading(expected, r.vehicle, r.date, r.odometer)
    assert result.text == expected


def test_batch_edit_parses_the_document_once(monkeypatch):
    calls = []
    real = edit._parse
    monkeypatch.setattr(edit, "_parse", lambda text: calls.append(1) or real(text))
    text = FLEET.read_text(encoding="utf-8")
    importer.add_readings(text, [("BF-01", dt.date(2026, 12, 2), 225100),
                                 ("BF-02", dt.date(2026, 12, 2), 169000),
                                 ("BF-04", dt.date(2026, 12, 2), 171500)])
    assert len(calls) == 1


def test_batch_edit_keeps_windows_line_ends():
    text = FLEET.read_text(encoding="utf-8").replace("\n", "\r\n")
    out = importer.add_readings(text, [("BF-01", dt.date(2026, 12, 2), 225100)])
    assert "\n" not in out.replace("\r\n", "")
    assert "{ date = 2026-12-02, odometer = 225100 }" in out
