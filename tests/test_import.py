"""`beltplan import`: a fleet file from a spreadsheet's CSV (planner.importer, planner.cli)."""

from __future__ import annotations

import codecs
import csv
import datetime as dt
import io
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest
from dateutil import parser as dateutil_parser
from hypothesis import given
from hypothesis import strategies as st

from planner import importer
from planner.cli import main
from planner.errors import PlannerError
from planner.fileio import load_fleet, parse_fleet_text
from planner.plan import plan_fleet
from tests.conftest import EXAMPLES

DATA = Path(__file__).resolve().parent / "data" / "import"
WHEN = dt.datetime(2026, 12, 7, 9, 30)
AS_OF = dt.date(2026, 12, 7)
SPREADSHEET = EXAMPLES / "spreadsheet_export.csv"


def read(name: str) -> importer.Decoded:
    return importer.decode_bytes((DATA / name).read_bytes(), name)


def do_import(name: str, **options) -> importer.FleetImport:
    decoded = read(name)
    return importer.import_fleet(decoded.text, source=name, when=WHEN, decoded=decoded,
                                 **options)


def refusal(name: str, **options) -> str:
    with pytest.raises(PlannerError) as caught:
        do_import(name, **options)
    return caught.value.render()


def plan_view(fleet) -> list[tuple]:
    """Everything a plan concludes, without the vehicle record it was made from."""
    return [(p.id, p.spec, p.status, p.consequence, p.install, p.usage, p.due_odometer,
             p.distance_remaining, p.time_due_date, p.distance_due_date, p.due_date,
             p.days_remaining, p.deciding_limit, p.notes, p.life_used)
            for p in plan_fleet(fleet, AS_OF)]


# -- bytes and dialects -----------------------------------------------------------------------

def test_utf8_with_bom_is_read_and_the_mark_dropped():
    raw = (DATA / "bom.csv").read_bytes()
    assert raw.startswith(codecs.BOM_UTF8)  # the golden file really has one
    decoded = importer.decode_bytes(raw, "bom.csv")
    assert decoded.encoding == "UTF-8 with BOM" and not decoded.note
    assert decoded.text.startswith("Fleet no,")


def test_windows_1252_fallback_is_reported_and_decoded_like_pythons_cp1252_codec():
    raw = (DATA / "cp1252.csv").read_bytes()
    with pytest.raises(UnicodeDecodeError):
        raw.decode("utf-8")  # the golden file really is not UTF-8
    decoded = importer.decode_bytes(raw, "cp1252.csv")
    # Reference: Python's own 'cp1252' codec (Microsoft code page 1252).
    assert decoded.text == raw.decode("cp1252")
    assert decoded.encoding == "Windows-1252"
    assert "read as Windows-1252" in decoded.note and "line 3" in decoded.note
    result = do_import("cp1252.csv")
    assert any("read as Windows-1252" in line for line in result.report)
    van = result.fleet.vehicles[1]
    assert van.label == "Café van 2" and van.notes == "Kit quoted at €260"


def test_utf16_is_refused_with_what_to_do():
    with pytest.raises(PlannerError, match="UTF-16") as caught:
        read("err_utf16.csv")
    assert "CSV UTF-8" in caught.value.message


def test_undecodable_bytes_are_an_error_not_a_guess():
    # 0x81 is undefined in Windows-1252 and invalid in UTF-8.
    with pytest.raises(PlannerError, match="unknown text encoding"):
        importer.decode_bytes(b"Fleet no\nBF-\x81\n", "x.csv")


@pytest.mark.parametrize("name", ["comma.csv", "semicolon.csv", "bom.csv", "quoted.csv"])
def test_every_dialect_gives_the_same_fleet(name):
    reference = do_import("comma.csv").fleet
    result = do_import(name, date_order=importer.DAY_FIRST)
    assert result.fleet == reference
    assert not result.problems


def test_delimiter_is_taken_from_the_header():
    assert importer.read_table((DATA / "semicolon.csv").read_text(), "s").delimiter == ";"
    assert importer.read_table((DATA / "comma.csv").read_text(), "c").delimiter == ","
    table = importer.read_table("sep=;\nFleet no,label;In service\nBF-1,a;2020-01-01\n", "x")
    assert table.delimiter == ";" and table.header == ("Fleet no,label", "In service")
    assert table.rows[0].line == 3  # lines count the sep= line


def test_rfc4180_quoting_matches_the_csv_module():
    # Reference: RFC 4180 section 2 (quoted fields, doubled quotes, line breaks in quotes),
    # as implemented by the standard library's csv module.
    text = (DATA / "quoted.csv").read_text(encoding="utf-8")
    expected = list(csv.reader(io.StringIO(text, newline="")))
    table = importer.read_table(text, "quoted.csv")
    assert table.header == tuple(expected[0])
    assert [r.cells for r in table.rows] == [
        tuple(c.replace("\r\n", "\n") for c in row) for row in expected[1:]]
    note = do_import("quoted.csv").fleet.vehicles[4].notes
    assert note == 'Kit on order, ask "Dana" at the depot\nbefore booking'


def test_a_header_without_rows_is_refused():
    with pytest.raises(PlannerError, match="has a header row but no rows under it"):
        importer.read_table("Fleet no,In service\n\n", "x.csv")


def test_row_numbers_are_spreadsheet_rows_and_lines_follow_embedded_newlines():
    text = 'Fleet no,Notes\nBF-1,"two\nlines"\n\nBF-2,x\n'
    table = importer.read_table(text, "x")
    # The blank line is row 3 in the spreadsheet too, so BF-2 is row 4, on line 5.
    assert [(r.number, r.line) for r in table.rows] == [(2, 2), (4, 5)]
    assert table.blank_rows == 1


# -- column mapping ---------------------------------------------------------------------------

def test_header_words_map_columns_and_the_mapping_is_printed():
    result = do_import("comma.csv")
    lines = "\n".join(result.report)
    assert "'Fleet no'          -> id" in lines
    assert "'Interval (km)'     -> interval_distance    (header word 'interval'; unit km from " \
        "the header)" in lines
    assert "'Belt date'         -> belt_date" in lines


def test_every_vehicle_field_can_come_from_a_column():
    # The issue: every vehicle field of the fleet file is mappable (lists say where to go).
    from planner.fleet import Contact, Vehicle
    for name in Vehicle.model_fields:
        assert name in importer.FLEET_FIELDS or name in importer.NOT_MAPPABLE, name
    for name in Contact.model_fields:
        assert f"contact_{name}" in importer.FLEET_FIELDS, name


def test_first_registered_is_read_from_its_own_column():
    text = "Fleet no,Drive,Interval (km),Interval (months),In service,First registered," \
        "Belt history\nBF-1,belt,120000,72,2024-03-18,2019-06-01,unknown\n"
    (vehicle,) = importer.import_fleet(text, source="x.csv", when=WHEN).fleet.vehicles
    assert (vehicle.in_service, vehicle.first_registered) == (
        dt.date(2024, 3, 18), dt.date(2019, 6, 1))


def test_header_key_takes_the_distance_unit_out():
    assert importer.header_key("Odometer (km)") == ("odometer", "km")
    assert importer.header_key("Belt changed at (miles)") == ("belt changed at", "mi")
    assert importer.header_key("km") == ("km", "km")


def test_map_option_wins_over_header_words_and_can_leave_a_column_out():
    text = "Ref,Fleet no,Drive,Interval (km),Interval (months),In service\n" \
        "BF-1,7,belt,120000,72,2020-02-03\n"
    result = importer.import_fleet(text, source="x.csv", when=WHEN,
                                   column_map=importer.parse_map(["Ref=id", "fleet no=ignore"]))
    assert result.fleet.vehicles[0].id == "BF-1"
    assert any("'Fleet no'" in line and "left out (--map)" in line for line in result.report)


@pytest.mark.parametrize("items, fragment", [
    (["Fleetno=id"], "no column named 'Fleetno'"),
    (["Fleet no=idd"], "unknown field 'idd' (did you mean 'id'?)"),
    (["Fleet no=readings"], "'readings' cannot come from one column"),
    (["Fleet no"], "is not COLUMN=field"),
    (["Fleet no=id", "Name=id"], "id is given twice"),
])
def test_bad_map_options_are_refused(items, fragment):
    with pytest.raises(PlannerError) as caught:
        do_import("comma.csv", column_map=importer.parse_map(items))
    assert fragment in caught.value.render()


# -- dates ------------------------------------------------------------------------------------

days = st.dates(min_value=dt.date(1950, 1, 1), max_value=dt.date(2100, 12, 31))


@given(days, st.sampled_from(["/", ".", "-"]))
def test_day_first_dates_match_python_dateutil(day, sep):
    text = f"{day.day:02d}{sep}{day.month:02d}{sep}{day.year}"
    # Reference: python-dateutil, dateutil.parser.parse(..., dayfirst=True).
    assert importer.parse_date(text, importer.DAY_FIRST) == \
        dateutil_parser.parse(text, dayfirst=True).date()


@given(days, st.sampled_from(["/", ".", "-"]))
def test_month_first_dates_match_python_dateutil(day, sep):
    text = f"{day.month}{sep}{day.day}{sep}{day.year}"
    # Reference: python-dateutil, dateutil.parser.parse(..., dayfirst=False).
    assert importer.parse_date(text, importer.MONTH_FIRST) == \
        dateutil_parser.parse(text, dayfirst=False).date()


@given(days)
def test_iso_dates_are_iso_whatever_the_flag(day):
    text = day.isoformat()
    # Reference: python-dateutil's strict ISO 8601 parser, dateutil.parser.isoparse.
    # (dateutil.parser.parse with dayfirst=True would swap 2026-03-04 into 3 April.)
    for order in (None, importer.DAY_FIRST, importer.MONTH_FIRST):
        assert importer.parse_date(text, order) == dateutil_parser.isoparse(text).date()


def test_where_dateutil_would_guess_we_refuse():
    # dateutil.parser.parse("13/01/2026", dayfirst=False) silently reads 13 January; told
    # month-first, 13 is no month, so this is an error for the row.
    assert dateutil_parser.parse("13/01/2026", dayfirst=False).date() == dt.date(2026, 1, 13)
    with pytest.raises(importer.CellError, match="no such day"):
        importer.parse_date("13/01/2026", importer.MONTH_FIRST)


def test_a_time_of_day_is_dropped_and_reported():
    assert importer.parse_date("28/11/2026 07:12", importer.DAY_FIRST) == dt.date(2026, 11, 28)
    assert importer.parse_date("2026-11-28T07:12:00Z", None) == dt.date(2026, 11, 28)


def test_ambiguous_column_without_a_flag_is_refused_with_examples():
    message = refusal("err_ambiguous_dates.csv", unit="km")
    assert "dates in column 'In service' can be read two ways" in message
    assert "--day-first or --month-first" in message
    assert "'03/04/2021': 3 April 2021 day-first, 4 March 2021 month-first" in message
    assert "'24/06/2022': only day-first reads it" in message


def test_the_same_column_imports_with_a_flag():
    result = do_import("err_ambiguous_dates.csv", unit="km", date_order=importer.DAY_FIRST)
    assert [v.in_service for v in result.fleet.vehicles] == [
        dt.date(2021, 4, 3), dt.date(2022, 6, 5), dt.date(2022, 6, 24)]
    result = do_import("err_ambiguous_dates.csv", unit="km", date_order=importer.MONTH_FIRST)
    assert [v.in_service for v in result.fleet.vehicles] == [
        dt.date(2021, 3, 4), dt.date(2022, 5, 6)]  # 24/06 is no month-first date: left out
    assert result.problems[0].row == 4 and "no such day" in result.problems[0].message


def test_a_column_that_reads_one_way_only_needs_no_flag():
    order, how, problems = importer.decide_date_order(
        [(2, "24/11/2026"), (3, "05/05/2026"), (4, "2026-01-02")], None, "Date")
    assert order == importer.DAY_FIRST and not problems
    assert "every numeric date reads only that way" in how
    order, _, problems = importer.decide_date_order([(2, "11/24/2026")], None, "Date")
    assert order == importer.MONTH_FIRST and not problems
    # One value that could be either is enough to refuse.
    order, _, problems = importer.decide_date_order(
        [(2, "24/11/2026"), (3, "04/11/2026")], None, "Date")
    assert order is None and len(problems) == 2


# -- numbers and units ------------------------------------------------------------------------

@pytest.mark.parametrize("text, mark, expected", [
    ("151,200 km", None, (151200, "km")),
    ("151.200 km", None, (151200, "km")),
    ("151 200", None, (151200, "")),
    ("1,234,567", None, (1234567, "")),
    ("98,5", ",", (98.5, "")),
    ("1.234,5", ",", (1234.5, "")),
    ("1,234.5", ".", (1234.5, "")),
    ("151200.5", ".", (151200.5, "")),
    ("€260", None, (260, "")),
    ("3.5 hours", ".", (3.5, "hours")),
])
def test_numbers_with_separators_and_suffixes(text, mark, expected):
    assert importer.parse_number(text, mark) == expected


@pytest.mark.parametrize("text, mark", [("1,51,200", None), ("12O,000", None), ("1.234,5", "."),
                                        ("km", None)])
def test_malformed_numbers_are_errors(text, mark):
    with pytest.raises(importer.CellError):
        importer.parse_number(text, mark)


def test_unit_from_values_when_no_option():
    result = do_import("semicolon.csv", date_order=importer.DAY_FIRST)
    assert result.fleet.unit == "km"
    assert any("distances in km (from row 2, '120.000 km')" in line for line in result.report)


def test_unit_contradicting_the_option_is_an_error_for_that_row():
    result = do_import("err_unit_contradiction.csv", unit="km")
    assert [v.id for v in result.fleet.vehicles] == ["BF-01"]
    (problem,) = result.problems
    assert problem.row == 3 and problem.value == "94,000 mi"
    assert "the value is in mi, but the fleet's distances are in km" in problem.message
    assert "nothing is converted" in problem.hint


@pytest.mark.parametrize("name, options, fragment", [
    ("err_header_unit.csv", {"unit": "km"},
     "column 'Interval (mi)' is in mi, but the fleet's distances are in km"),
    ("err_mixed_units.csv", {}, "distances are in both km and mi"),
    ("err_no_unit.csv", {}, "the distances carry no unit"),
    ("err_no_id.csv", {}, "no column for id"),
    ("err_two_ids.csv", {}, "columns 'Fleet no', 'Fleet No.' all look like id"),
    ("err_belt_pair.csv", {}, "a column for belt_date but none for belt_odometer"),
    ("err_mixed_decimals.csv", {}, "numbers in column 'Labour hours' mix decimal marks"),
    ("err_quoting.csv", {}, "CSV error: ',' expected after '\"'"),
    ("err_unclosed_quote.csv", {}, "err_unclosed_quote.csv:2: a quoted text starts in this row"),
    ("err_all_bad.csv", {}, "no row can be imported"),
    ("err_ambiguous_dates.csv", {"unit": "km"}, "can be read two ways"),
])
def test_whole_sheet_errors(name, options, fragment):
    assert fragment in refusal(name, **options)


# Each row of err_rows.csv (read --day-first) and the message fragment it must give.
ROW_PROBLEMS = {
    3: ("In service", "no such day (day-first)"),
    4: ("Odometer", "not a number"),
    5: ("Drive", "not one of belt, chain, gear, wet-belt"),
    6: ("Fleet no", "id already used by row 2"),
    7: ("Fleet no", "empty: every vehicle needs id"),
    8: ("In service", "two-digit year"),
    9: ("In service", "a spreadsheet day number, not a date"),
    10: ("Reading date", "is before the vehicle entered service"),
    11: ("Odometer", "odometer goes backwards"),
    12: (None, "9 cells, but the header has 10 columns"),
    13: ("Interference", "not one of interference, non-interference, unknown"),
    14: ("Belt odometer", "belt_date is given but belt_odometer is empty"),
    15: ("Interval (km)", "not a number as written"),
    16: ("Interval (months)", "not a whole number of months"),
    17: ("Odometer", "the value is in mi, but the fleet's distances are in km"),
}


def test_each_row_problem_names_row_column_and_value_and_the_row_is_left_out():
    result = do_import("err_rows.csv", unit="km", date_order=importer.DAY_FIRST)
    assert [v.id for v in result.fleet.vehicles] == ["BF-01"]
    by_row: dict[int, list] = {}
    for p in result.problems:
        by_row.setdefault(p.row, []).append(p)
    assert set(by_row) == set(ROW_PROBLEMS)
    for row, (column, fragment) in ROW_PROBLEMS.items():
        assert any(p.column == column and fragment in p.message for p in by_row[row]), row
    text = "\n".join(result.report)
    assert "row 4, column 'Odometer' = '12O,000': not a number" in text
    assert "Vehicles: 1 imported, 15 rows left out" in text
    assert "# 1 vehicle from 16 rows; 15 left out" in result.text


def test_belt_job_details_without_a_belt_job_are_not_dropped_silently():
    text = "Fleet no,Drive,Interval (km),Interval (months),In service,Belt date,Belt odometer," \
        "Reason\nBF-1,belt,120000,72,2020-02-03,,,failed\n" \
        "BF-2,belt,120000,72,2020-02-03,2023-01-16,96410,failed\n"
    result = importer.import_fleet(text, source="x.csv", when=WHEN)
    (problem,) = result.problems
    assert (problem.row, problem.column, problem.value) == (2, "Reason", "failed")
    assert "belt_reason is given but there is no belt job" in problem.message
    assert result.fleet.vehicles[0].belt_jobs[0].reason.value == "failed"


def test_words_read_as_values_are_reported():
    text = "Fleet no,Drive,Interference?,Interval (km),Interval (years),In service\n" \
        "BF-1,Timing belt,Yes,120000,6,2020-02-03\nBF-2,belt in oil,no,148700,9,2020-02-03\n"
    result = importer.import_fleet(text, source="x.csv", when=WHEN)
    one, two = result.fleet.vehicles
    assert (one.drive.value, one.interference.value, one.interval_months) == (
        "belt", "interference", 72)
    assert (two.drive.value, two.interference.value) == ("wet-belt", "non-interference")
    report = "\n".join(result.report)
    assert "'Drive': 'Timing belt' read as 'belt' (1 row)" in report
    assert "'Interval (years)': years turned into months, x12 (2 rows)" in report


# -- the fleet document -----------------------------------------------------------------------

def test_header_comment_says_where_from_and_when():
    text = do_import("comma.csv").text
    assert text.startswith("# Fleet file made by `beltplan import` from comma.csv on "
                           "2026-12-07 09:30.\n")
    assert tomllib.loads(text)["schema"] == 1  # the standard library reads what was written


def test_engine_profiles_group_shared_drives_and_are_reported():
    result = do_import("comma.csv")
    assert result.profiles == {"belt-interference-120000km-72m": ("BF-01", "BF-02")}
    profile = result.fleet.engines["belt-interference-120000km-72m"]
    assert (profile.drive.value, profile.interval_distance, profile.interval_months,
            profile.fuel.value) == ("belt", 120000, 72, "petrol")
    data = tomllib.loads(result.text)
    assert "drive" not in data["vehicles"][0] and data["vehicles"][0]["engine"] == \
        "belt-interference-120000km-72m"
    assert "drive" in data["vehicles"][2]  # alone: carries its own fields
    assert any(line.startswith("  belt-interference-120000km-72m: 2 vehicles (BF-01, BF-02)")
               for line in result.report)


def test_grouping_never_changes_a_plan():
    grouped = do_import("comma.csv").fleet
    alone = do_import("comma.csv", group_profiles=False).fleet
    assert alone.engines == {} and grouped.engines
    assert plan_view(grouped) == plan_view(alone)


def test_fields_members_do_not_share_stay_on_the_vehicle():
    text = "Fleet no,Drive,Interval (km),Interval (months),In service,Kit cost\n" \
        "BF-1,belt,120000,72,2020-02-03,260\nBF-2,belt,120000,72,2020-02-03,280\n"
    result = importer.import_fleet(text, source="x.csv", when=WHEN)
    (profile,) = result.fleet.engines.values()
    assert profile.parts_cost is None
    assert [v.parts_cost for v in result.fleet.vehicles] == [260, 280]
    assert any("kept on each vehicle (they differ): parts_cost" in line
               for line in result.report)


def test_an_engine_column_names_the_profiles():
    text = "Fleet no,Engine,Drive,Interval (km),Interval (months),In service\n" \
        "BF-1,Tesk,belt,117300,73,2020-02-03\nBF-2,Tesk,belt,117300,73,2021-02-03\n" \
        "BF-3,Plim,belt,91300,62,2021-02-03\n"
    fleet = importer.import_fleet(text, source="x.csv", when=WHEN).fleet
    assert set(fleet.engines) == {"Tesk", "Plim"}
    assert [v.engine for v in fleet.vehicles] == ["Tesk", "Tesk", "Plim"]


def test_defaults_the_file_relies_on_are_said_out_loud():
    report = "\n".join(do_import("comma.csv").report)
    assert "2 vehicles with no belt job and no belt_history are planned from the factory " \
        "belt: BF-02, BF-03" in report
    assert "no in_service_odometer column" in report
    assert 'no belt_reason column: 2 belt jobs recorded as reason = "scheduled"' in report


def test_round_trip_plans_like_the_hand_written_fleet():
    imported = do_import("comma.csv")
    written = parse_fleet_text(imported.text, "imported.toml")  # the normal loader's parser
    hand = load_fleet(DATA / "expected_fleet.toml").fleet
    assert len(hand.vehicles) == 5
    assert plan_view(written) == plan_view(hand)


# -- the 30-vehicle example, in one command ---------------------------------------------------

def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_spreadsheet_export_becomes_a_valid_fleet_in_one_command(tmp_path, capsys):
    out = tmp_path / "fleet.toml"
    code, stdout, err = run(capsys, "import", str(SPREADSHEET), "-o", str(out), "--day-first")
    assert code == 0, err
    loaded = load_fleet(out)
    assert len(loaded.fleet.vehicles) == 30 and loaded.fleet.unit == "km"
    assert "Vehicles: 30 imported, 0 rows left out" in stdout
    assert "loaded back and valid" in stdout
    assert "'Odometer'" in stdout and "-> reading_odometer" in stdout
    rows = list(csv.DictReader(io.StringIO(SPREADSHEET.read_text(encoding="utf-8"))))
    assert len(rows) == 30 and all(r["Odometer"].endswith(" km") for r in rows)  # "km" suffixes
    assert any(int(r["In service"][:2]) > 12 for r in rows)  # day-first dates
    assert loaded.text.startswith("# Fleet file made by `beltplan import` from ")
    statuses = {p.status.value for p in plan_fleet(loaded.fleet, AS_OF)}
    assert {"overdue", "near-limit", "ok", "no-record", "on-condition"} <= statuses


def test_spreadsheet_export_without_the_flag_is_refused_and_nothing_written(tmp_path, capsys):
    out = tmp_path / "fleet.toml"
    code, _, err = run(capsys, "import", str(SPREADSHEET), "-o", str(out))
    assert code == 2 and "can be read two ways" in err and "Traceback" not in err
    assert not out.exists()


def test_existing_output_is_refused_unless_forced(tmp_path, capsys):
    out = tmp_path / "fleet.toml"
    out.write_text("# mine\n", encoding="utf-8")
    code, _, err = run(capsys, "import", str(DATA / "comma.csv"), "-o", str(out))
    assert code == 2 and "already exists; nothing was written" in err and "--force" in err
    assert out.read_text(encoding="utf-8") == "# mine\n"
    code, stdout, _ = run(capsys, "import", str(DATA / "comma.csv"), "-o", str(out), "--force")
    assert code == 0 and "the old file is kept as" in stdout
    assert (tmp_path / "fleet.toml.bak").read_text(encoding="utf-8") == "# mine\n"
    assert len(load_fleet(out).fleet.vehicles) == 5


def test_dry_run_writes_nothing_and_shows_the_file(tmp_path, capsys):
    out = tmp_path / "fleet.toml"
    code, stdout, _ = run(capsys, "import", str(DATA / "comma.csv"), "-o", str(out),
                          "--dry-run")
    assert code == 0 and not out.exists()
    assert "Dry run: nothing written" in stdout and '[[vehicles]]\nid = "BF-01"' in stdout


@pytest.mark.parametrize("argv, fragment", [
    (["import", str(DATA / "comma.csv")], "say where to write the fleet file"),
    (["import", str(DATA / "missing.csv"), "--dry-run"], "no such file"),
    (["import", str(DATA / "err_rows.csv"), "--dry-run"], "can be read two ways"),
    (["import", str(DATA / "comma.csv"), "--dry-run", "--map", "Nope=id"], "no column named"),
    (["import", str(DATA / "err_utf16.csv"), "--dry-run"], "UTF-16"),
    (["import", "fleet.xlsx", "--dry-run"], "is a spreadsheet workbook, not CSV"),
    (["import", str(EXAMPLES / "courier_fleet.toml"), "--dry-run"], "is a fleet file (TOML)"),
    (["import", str(DATA / "comma.csv"), "-o", "no/such/folder/f.toml"], "does not exist"),
])
def test_cli_errors_exit_2_without_traceback(argv, fragment, capsys):
    code, _, err = run(capsys, *argv)
    assert code == 2 and fragment in err and "Traceback" not in err


def test_cli_refuses_both_date_flags(capsys):
    with pytest.raises(SystemExit) as caught:
        main(["import", str(DATA / "comma.csv"), "--dry-run", "--day-first", "--month-first"])
    assert caught.value.code == 2
    assert "not allowed with argument" in capsys.readouterr().err


def test_help_explains_with_an_example(capsys):
    with pytest.raises(SystemExit):
        main(["import", "--help"])
    text = capsys.readouterr().out
    assert "beltplan import fleet_examples/spreadsheet_export.csv -o fleet.toml --day-first" \
        in text
    assert "belt_odometer" in text and "--map COLUMN=field" in text


def test_importer_is_pure():
    # Same check as tests/test_engine_border.py: no UI, no command line, no file layer.
    code = ("import sys, planner.importer; bad = [m for m in ('textual', 'planner.tui', "
            "'planner.cli', 'planner.fileio') if m in sys.modules]; print(','.join(bad))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.strip()
    assert out == ""
