"""Exports of the week plan (planner.week_export) and the `beltplan week` command.

External checks, each named beside its test:
- iCalendar: RFC 5545 (§3.1 folding at 75 octets with CRLF, §3.3.11 TEXT escapes, §3.8.4.7 UID,
  §3.8.7.2 DTSTAMP); the files are parsed with the `icalendar` library as the RFC 5545
  reference parser.
- CSV: RFC 4180, read back with the standard library's `csv` module; formula cells neutralised
  as OWASP's CSV-injection guidance says.
- JSON: read back with the standard library's `json`.
Golden files live in tests/data/week/; after an intended change, regenerate them with
`BELTPLAN_UPDATE_GOLDEN=1 .venv/bin/pytest tests/test_week_export.py` and review the diff.
"""

from __future__ import annotations

import csv
import datetime as dt
import difflib
import io
import json
import os
import re
from pathlib import Path

import icalendar  # RFC 5545 reference parser (tests only; the package writes ICS by hand)
import pytest

from planner.cli import main
from planner.export import CAUTION
from planner.fileio import load_fleet
from planner.week import MISSING_FACT, plan_week
from planner.week_export import (
    CALL_FIELDS,
    JOB_FIELDS,
    PARTS_FIELDS,
    PRODID,
    clean,
    fold,
    ics_text,
    md,
    to_csv_text,
    to_ics,
    to_json_text,
    to_markdown_text,
    to_table,
    uid_part,
)
from tests.conftest import GARAGE

DATA = Path(__file__).resolve().parent / "data" / "week"
SMALL = DATA / "small.toml"
FRI = dt.date(2026, 12, 4)
STAMP = dt.datetime(2026, 12, 4, 16, 30, tzinfo=dt.UTC)


@pytest.fixture(scope="module")
def week():
    return plan_week(load_fleet(SMALL).fleet, FRI)


def golden(name: str, text: str) -> None:
    """Compare with tests/data/week/<name>, showing a diff; rewrite it when asked to."""
    path = DATA / name
    if os.environ.get("BELTPLAN_UPDATE_GOLDEN"):
        path.write_bytes(text.encode("utf-8"))
    expected = path.read_bytes().decode("utf-8")
    if text != expected:
        diff = "".join(difflib.unified_diff(expected.splitlines(True), text.splitlines(True),
                                            f"{name} (golden)", f"{name} (now)"))
        pytest.fail(f"{name} differs from its golden file:\n{diff}")


# ---------------------------------------------------------------- the small fleet, by hand


def test_small_fleet_plan_by_hand(week):
    # Two bays of 8 h, Wed 9 closed, parts ordered Fri 4 on hand Sun 6. Triage: G-01, G-02,
    # G-05 overdue (G-04 too, but no hours), then G-03 due soon. By hand:
    # G-01 3.5 h Mon b1 [0, 3.5); G-02 12 h: Mon b1 not empty -> Mon b2 8 h + Tue b2 4 h;
    # G-05 3.5 h Mon b1 [3.5, 7); G-03 away Mon-Tue, Wed closed -> Thu b1.
    got = {b.job.vehicle_id: (b.bay, b.days, b.start_hour) for b in week.bookings}
    mon, tue, thu = dt.date(2026, 12, 7), dt.date(2026, 12, 8), dt.date(2026, 12, 10)
    assert got == {"G-01": (1, (mon,), 0.0), "G-02": (2, (mon, tue), 0.0),
                   "G-05": (1, (mon,), 3.5), "G-03": (1, (thu,), 0.0)}
    assert [u.job.vehicle_id for u in week.unplaced] == ["G-04"]
    # 3.5 + 12 + 3.5 + 3.5 = 22.5 h x 60 = 1350; parts 210 + 420 + 210 + 210 = 1050.
    assert (week.labour_hours, week.labour_cost, week.parts_cost) == (22.5, 1350.0, 1050.0)


# ---------------------------------------------------------------- iCalendar (RFC 5545)


def test_fold_by_hand():
    # RFC 5545 §3.1: at most 75 octets a line; a fold is CRLF + one space, and the space counts.
    assert fold("X" * 75) == "X" * 75
    lines = fold("X" * 200).split("\r\n")
    assert [len(x) for x in lines] == [75, 75, 52]  # 75; 1 + 74; 1 + 51
    assert all(x.startswith(" ") for x in lines[1:])
    # "é" is 2 octets: 37 of them (74) + one more would make 76 -> fold before it, never inside.
    first, second = fold("é" * 38).split("\r\n")
    assert len(first.encode()) == 74 and second == " é"


def test_text_escapes_by_hand():
    # RFC 5545 §3.3.11: \\ for backslash, \; \, and \n for a line break; controls removed.
    assert ics_text("a\\b;c,d\ne\r\nf\x07g") == "a\\\\b\\;c\\,d\\ne\\nfg"


def test_uid_part_keeps_ids_apart():
    assert uid_part("MR-1042") == "MR-1042"
    assert uid_part("A B/é") == "A_20B_2F_C3_A9"
    assert uid_part("A_B") != uid_part("A B")


def test_ics_parses_with_the_expected_events(week):
    text = to_ics(week, STAMP)
    cal = icalendar.Calendar.from_ical(text)  # RFC 5545 reference parser
    assert str(cal["VERSION"]) == "2.0" and str(cal["PRODID"]) == PRODID
    events = list(cal.walk("VEVENT"))
    got = sorted((str(e["UID"]), e["DTSTART"].dt, e["DTEND"].dt, str(e["LOCATION"]))
                 for e in events)
    d = dt.datetime
    # Opening 08:00: G-01 [0, 3.5) -> 08:00-11:30; G-05 [3.5, 7) -> 11:30-15:00; G-02 over two
    # days of bay 2: 08:00-16:00 and 08:00-12:00; G-03 Thu 08:00-11:30.
    assert got == sorted([
        ("G-01-20261207@beltplan.invalid", d(2026, 12, 7, 8), d(2026, 12, 7, 11, 30), "Bay 1"),
        ("G-05-20261207@beltplan.invalid", d(2026, 12, 7, 11, 30), d(2026, 12, 7, 15), "Bay 1"),
        ("G-02-20261207@beltplan.invalid", d(2026, 12, 7, 8), d(2026, 12, 7, 16), "Bay 2"),
        ("G-02-20261208@beltplan.invalid", d(2026, 12, 8, 8), d(2026, 12, 8, 12), "Bay 2"),
        ("G-03-20261210@beltplan.invalid", d(2026, 12, 10, 8), d(2026, 12, 10, 11, 30), "Bay 1"),
    ])
    assert all(e["DTSTART"].dt.tzinfo is None for e in events)  # floating local time
    uids = [str(e["UID"]) for e in events]
    assert len(set(uids)) == len(uids)
    assert all(e["DTSTAMP"].dt == STAMP for e in events)
    g2 = [e for e in events if str(e["UID"]).startswith("G-02-20261207")][0]
    # The label's ; , \ and é come back exactly once unescaped.
    assert str(g2["SUMMARY"]) == ("Belt job G-02 Café van; rear doors, \\ roof rack (overdue) "
                                  "(day 1 of 2)")
    desc = str(g2["DESCRIPTION"])
    assert desc.splitlines()[0] == "G-02: Café van; rear doors, \\ roof rack"
    assert "Parts: belt kit V6" in desc and "Customer: Émile Durand" in desc
    assert "8 h this day, 12 h in all (day 1 of 2)" in desc and CAUTION in desc


def test_ics_lines_are_folded_crlf_and_well_formed(week):
    raw = to_ics(week, STAMP).encode("utf-8")
    assert raw.endswith(b"\r\n") and raw.count(b"\n") == raw.count(b"\r\n")  # CRLF only
    physical = raw.split(b"\r\n")[:-1]
    assert max(len(x) for x in physical) <= 75  # RFC 5545 §3.1
    assert any(len(x) == 75 for x in physical)  # the long DESCRIPTIONs were folded
    for x in physical:
        x.decode("utf-8")  # a fold never splits a character
    logical = raw.decode("utf-8").replace("\r\n ", "").split("\r\n")[:-1]
    assert all(re.match(r"^[A-Z-]+[;:]", x) for x in logical)
    assert logical[0] == "BEGIN:VCALENDAR" and logical[-1] == "END:VCALENDAR"
    assert logical.count("BEGIN:VEVENT") == logical.count("END:VEVENT") == 5
    for name in ("UID", "DTSTAMP", "DTSTART", "DTEND", "SUMMARY", "DESCRIPTION"):
        assert sum(x.startswith(name + ":") for x in logical) == 5


def test_ics_stamp_is_the_parameter(week):
    naive = to_ics(week, dt.datetime(2020, 1, 2, 3, 4, 5))
    assert "DTSTAMP:20200102T030405Z" in naive
    cet = dt.timezone(dt.timedelta(hours=1))
    assert "DTSTAMP:20200102T020405Z" in to_ics(week, dt.datetime(2020, 1, 2, 3, 4, 5,
                                                                  tzinfo=cet))


def test_ics_with_nothing_booked_is_refused(capsys):
    # RFC 5545 §3.6: a calendar holds at least one component. Nothing is due in 2020.
    early = plan_week(load_fleet(SMALL).fleet, dt.date(2020, 1, 3), include="all-due")
    assert early.bookings == ()
    with pytest.raises(ValueError, match="no jobs booked"):
        to_ics(early, STAMP)
    code, out, err = run(capsys, "week", str(SMALL), "--as-of", "2020-01-03", "--format", "ics")
    assert code == 2 and "no calendar written" in err and out == ""


def test_ics_golden(week):
    golden("small.ics", to_ics(week, STAMP))


# ---------------------------------------------------------------- CSV (RFC 4180)


def read_csv(text: str) -> list[dict[str, str]]:
    return list(csv.DictReader(io.StringIO(text, newline="")))  # standard library reader


def test_jobs_csv_reads_back(week):
    text = to_csv_text(week)
    assert text.startswith(",".join(JOB_FIELDS) + "\r\n")
    rows = read_csv(text)
    # One row per booked day segment (G-02 has two), then the job not placed.
    assert [(r["kind"], r["vehicle"], r["day"]) for r in rows] == [
        ("booked", "G-01", "2026-12-07"), ("booked", "G-05", "2026-12-07"),
        ("booked", "G-02", "2026-12-07"), ("booked", "G-02", "2026-12-08"),
        ("booked", "G-03", "2026-12-10"), ("not placed", "G-04", ""),
    ]
    first = rows[0]
    assert first["label"] == "'=HYPERLINK(\"http://x.invalid\")"  # OWASP: neutralised
    assert (first["start"], first["end"], first["hours"]) == ("08:00", "11:30", "3.5")
    assert first["parts"] == "belt kit K4; water pump K4"
    assert rows[2]["day_of_job"] == "1 of 2" and rows[2]["label"].startswith("Café van; rear")
    assert rows[-1]["not_placed"].startswith("no labour_hours set")


def test_parts_and_calls_csv_read_back(week):
    parts = read_csv(to_csv_text(week, "parts"))
    assert list(parts[0]) == list(PARTS_FIELDS)
    # Fri 4 for Monday's jobs (Mon 7 - 2 = Sat 5 -> Fri 4); Thu 10 - 2 = Tue 8 for G-03.
    assert [(p["order_by"], p["quantity"], p["part"], p["vehicles"]) for p in parts] == [
        ("2026-12-04", "2", "belt kit K4", "G-01; G-05"),
        ("2026-12-04", "1", "belt kit V6", "G-02"),
        ("2026-12-04", "2", "water pump K4", "G-01; G-05"),
        ("2026-12-08", "1", "belt kit K4", "G-03"),
        ("2026-12-08", "1", "water pump K4", "G-03"),
    ]
    calls = read_csv(to_csv_text(week, "calls"))
    assert list(calls[0]) == list(CALL_FIELDS)
    assert [(c["vehicle"], c["name"], c["booked_day"], c["start"]) for c in calls] == [
        ("G-01", "Ana Formula", "2026-12-07", "08:00"),
        ("G-02", "Émile Durand", "2026-12-07", "08:00"),
        ("G-03", "Ola Nordmann", "2026-12-10", "08:00"),
        ("G-04", "Kim Lee", "", ""),
    ]
    assert calls[3]["not_booked"].startswith("no labour_hours set")
    with pytest.raises(ValueError, match="unknown list"):
        to_csv_text(week, "people")


def test_csv_golden(week):
    golden("small.jobs.csv", to_csv_text(week))


# ---------------------------------------------------------------- JSON, Markdown, table


def test_json(week):
    doc = json.loads(to_json_text(week))  # standard library reader
    assert (doc["as_of"], doc["start"], doc["end"]) == ("2026-12-04", "2026-12-07", "2026-12-13")
    assert doc["included_statuses"] == ["overdue", "no-record", "missing-fact", "near-limit"]
    assert doc["totals"]["labour_hours"] == 22.5 and doc["totals"]["total_cost"] == 2400.0
    # Full precision in JSON (never rounded to a reassuring zero).
    assert doc["totals"]["expected_loss_removed"] == week.expected_loss_removed
    wed = next(d for d in doc["days"] if d["day"] == "2026-12-09")
    assert (wed["working"], wed["closed"], wed["bays"]) == (False, True, [])
    g2 = next(b for b in doc["bookings"] if b["vehicle"] == "G-02")
    assert g2["days"] == ["2026-12-07", "2026-12-08"] and g2["hours_by_day"] == [8.0, 4.0]
    assert [u["vehicle"] for u in doc["not_placed"]] == ["G-04"]
    assert doc["risk_assumptions"]["basis"] == "assumed" and doc["caution"] == CAUTION


def test_markdown_job_sheets(week):
    text = to_markdown_text(week)
    sheets = text.split("## Job sheets", 1)[1].split("\n---\n")
    assert len(sheets) == len(week.bookings) == 4
    g1 = next(s for s in sheets if "### G-01" in s)
    assert "**Engine:** K4 1.6 petrol, dry belt (invented) (k4)" in g1
    assert "**Interval in force:** 100,000 km or 60 months, whichever comes first" in g1
    assert "**Reason:** overdue: age limit decides: 60 months from 2018-01-01" in g1
    assert "**Parts:** belt kit K4, water pump K4 (cost 210.00 EUR)" in g1
    assert "**Labour:** 3.5 h" in g1 and f"> **Caution.** {CAUTION}" in g1
    assert "bay 2, Mon 2026-12-07 08:00-16:00 (8 h); Tue 2026-12-08 08:00-12:00 (4 h)" in text
    assert "\\=HYPERLINK" not in text and "| G-01 | =HYPERLINK" in text
    assert md("a|b*c") == "a\\|b\\*c"  # a cell cannot break the table or start emphasis


def test_table_shows_the_week(week):
    text = to_table(week)
    assert "Wed 2026-12-09 | closed (holiday)" in text
    assert "Sat 2026-12-12" not in text  # a day off every week takes no row
    assert "08:00-16:00 G-02 8 h overdue, replace now 1/2" in text
    assert "08:00-12:00 G-02 4 h overdue, replace now 2/2" in text
    assert "Mon 2026-12-07 | 08:00-11:30 G-01 3.5 h overdue, replace now" in text
    assert "15 of 16 h" in text and "G-04" in text and "no labour_hours set" in text
    assert text.rstrip().endswith(CAUTION)


def test_terminal_text_shows_control_characters_as_escapes():
    # ESC, BEL and the tab written out by hand as \x1b, \x07, \t: visible, never obeyed.
    assert clean("van\x1b[31m red\x07\tx") == "van\\x1b[31m red\\x07\\tx"


def test_markdown_and_table_golden(week):
    golden("small.md", to_markdown_text(week))
    golden("small.table.txt", to_table(week))


# ---------------------------------------------------------------- the command


def run(capsys, *argv: str) -> tuple[int, str, str]:
    try:
        code = main(list(argv))
    except SystemExit as exc:  # argparse refusals
        code = int(exc.code or 0)
    out, err = capsys.readouterr()
    return code, out, err


def test_cli_formats(capsys, tmp_path):
    code, out, _ = run(capsys, "week", str(SMALL), "--as-of", "2026-12-04")
    assert code == 0 and out == to_table(plan_week(load_fleet(SMALL).fleet, FRI))
    target = tmp_path / "week.ics"
    code, _, err = run(capsys, "week", str(SMALL), "--as-of", "2026-12-04", "--format", "ics",
                       "-o", str(target))
    assert code == 0 and "wrote 4 booked jobs" in err
    cal = icalendar.Calendar.from_ical(target.read_bytes())  # RFC 5545 reference parser
    assert len(list(cal.walk("VEVENT"))) == 5
    code, out, _ = run(capsys, "week", str(SMALL), "--as-of", "2026-12-04", "--format", "csv",
                       "--list", "calls")
    assert code == 0 and [r["vehicle"] for r in read_csv(out)] == ["G-01", "G-02", "G-03", "G-04"]
    code, out, _ = run(capsys, "week", str(SMALL), "--as-of", "2026-12-04", "--format", "json",
                       "--start", "2026-12-08", "--weeks", "2", "--include", "all-due")
    doc = json.loads(out)
    assert code == 0 and (doc["start"], doc["end"], doc["include"]) == (
        "2026-12-08", "2026-12-21", "all-due")
    assert "G-03" not in {b["vehicle"] for b in doc["bookings"]}  # due soon: left out


@pytest.mark.parametrize(("args", "message"), [
    (["--weeks", "0"], "between 1 and 52"),
    (["--weeks", "two"], "not a whole number"),
    (["--include", "soon"], "invalid choice: 'soon'"),
    (["--start", "7/12/2026"], "is not a date"),
    (["--start", "2026-12-01"], "cannot start (2026-12-01) before the planning date"),
    (["--format", "pdf"], "invalid choice: 'pdf'"),
    (["--list", "parts"], "--list parts goes with --format csv"),
])
def test_cli_bad_values_exit_2(capsys, args, message):
    code, out, err = run(capsys, "week", str(SMALL), "--as-of", "2026-12-04", *args)
    assert code == 2 and message in err and "Traceback" not in err and out == ""


def test_cli_refuses_to_write_over_the_fleet_file(capsys, tmp_path):
    copy = tmp_path / "f.toml"
    copy.write_bytes(SMALL.read_bytes())
    code, _, err = run(capsys, "week", str(copy), "--as-of", "2026-12-04", "-o", str(copy))
    assert code == 2 and "refusing to write over the fleet file" in err
    assert copy.read_bytes() == SMALL.read_bytes()


def test_cli_help_has_examples(capsys):
    code, out, _ = run(capsys, "week", "--help")
    assert code == 0 and "beltplan week fleet_examples/garage_customers.toml" in out
    assert "all-due" in out and "--format ics" in out


# ---------------------------------------------------------------- the shipped garage example


def test_garage_example_week():
    # The week a workshop manager checked by hand (see the week-plan note): planned Fri 4 Dec.
    week = plan_week(load_fleet(GARAGE).fleet, FRI)
    assert week.start == dt.date(2026, 12, 7)
    # The taxi MR-1118 is on severe duty with no severe interval known: listed, never booked.
    assert [(u.job.vehicle_id, u.reason) for u in week.unplaced] == [("MR-1118", MISSING_FACT)]
    away = week.booking("MR-1103")  # the customer is away 7-9 December
    assert away is not None and away.first_day == dt.date(2026, 12, 10)
    for b in week.bookings:
        assert b.parts_ready is not None and b.parts_ready <= b.first_day
    assert all(p.order_by == FRI for p in week.parts_order)  # everything ordered today
    assert "MR-1190" not in {j.vehicle_id for j in week.jobs}  # a chain: on condition
    assert len(week.call_list) == len(week.jobs)  # every garage customer has a contact
