"""Text that reaches a terminal is inert: file text never sends a command to the terminal,
never forges a line, and never becomes HTML, an image or a heading in Markdown, or a formula in
a spreadsheet.

The hostile corpus is tests/data/hostile: `accepted.toml` (line ends, a tab, U+202E, HTML,
formulas in every free-text field: it loads), `refused.toml` (ESC, CSI, OSC, BEL, C1 and line
ends in keys and ids: it must not load), CSV files for `import` and `readings --from`, and a
planted in-use marker written by the tests.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import json
import os
import re
import shutil
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from planner import export, inuse, week_export
from planner.cli import main
from planner.safetext import markdown_text, shown
from tests.test_tui_support import sync as sync_test

HOSTILE = Path(__file__).parent / "data" / "hostile"
ACCEPTED = HOSTILE / "accepted.toml"
REFUSED = HOSTILE / "refused.toml"
AS_OF = "2026-12-01"

# What must never reach a terminal from file text: ESC (starts CSI, OSC, SGR), the C1 CSI
# (U+009B, a one-byte CSI to terminals that take 8-bit controls), BEL (ends an OSC), and the
# C1 OSC (U+009D). ECMA-48 §5.3 and §8.3.89 (OSC), from memory.
COMMANDS_BYTES = ("\x1b", "\x9b", "\x9d", "\x07")
# Ids and words the corpus plants after a line end: a line of output starting with one of them
# was forged by the file.
FORGED = ("HX-99", "HX-98", "HX-77", "HX-33", "HX-22", "HX-66", "HX-55", "HX-44", "NOT-A-VEHICLE",
          "# Forged", "# Heading", "# heading", "kcab")


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def assert_inert(code: int, out: str, err: str, rows_are_csv: bool = False) -> None:
    assert code in (0, 2)
    both = out + err
    assert "Traceback" not in both
    for byte in COMMANDS_BYTES:
        assert byte not in both, f"{byte!r} reached the terminal"
    if not rows_are_csv:  # a bidi override or a line separator would reorder or break lines
        for char in ("\u202e", "\u2028"):
            assert char not in both, f"{char!r} reached the terminal"
    if rows_are_csv:  # a line end inside a quoted cell is data (RFC 4180 §2.6): count rows
        rows = list(csv.reader(io.StringIO(out)))
        texts = [r[0] for r in rows if r] + err.splitlines()
    else:
        texts = both.splitlines()  # splits at CR, LF, U+2028… as a terminal or editor might
    for line in texts:
        assert not line.lstrip(" |'").startswith(FORGED), f"forged line: {line!r}"


# -- the one function that makes file text inert ----------------------------------------------


def test_shown_writes_control_characters_as_visible_escapes():
    # Worked by hand: ESC is U+001B, BEL U+0007, the C1 CSI U+009B, RLO U+202E.
    assert shown("a\x1b]0;t\x07b") == "a\\x1b]0;t\\x07b"
    assert shown("x\r\ny\tz") == "x\\r\\ny\\tz"
    assert shown("\x9b31m") == "\\x9b31m"
    assert shown("ab\u202ecd") == "ab\\u202ecd"
    assert shown("Ms Merrowby – 01632 960142") == "Ms Merrowby – 01632 960142"  # untouched


@given(st.text())
def test_shown_leaves_no_control_format_or_line_separator_character(text):
    import unicodedata

    out = shown(text)
    # Unicode general categories (Unicode Standard §4.5): Cc control, Cf format (bidi
    # overrides), Zl/Zp line and paragraph separators, Cs surrogates.
    assert not any(unicodedata.category(c) in ("Cc", "Cf", "Zl", "Zp", "Cs") for c in out)
    if all(unicodedata.category(c) not in ("Cc", "Cf", "Zl", "Zp", "Cs") for c in text):
        assert out == text


# -- keys and ids: control characters and line ends refused -------------------------------------


def _fleet(engine_key: str = "tesk", vid: str = "HX-01", engine: str | None = None) -> str:
    def toml(s: str) -> str:
        return json.dumps(s)  # a JSON string with \uXXXX escapes is a TOML basic string
    return (f"schema = 1\n[engines.{toml(engine_key)}]\nfuel = \"petrol\"\ndrive = \"belt\"\n"
            "interference = \"interference\"\ninterval_distance = 100000\n"
            "interval_months = 60\n\n[[vehicles]]\n"
            f"id = {toml(vid)}\nengine = {toml(engine or engine_key)}\n"
            "in_service = 2019-01-10\nreadings = [{ date = 2026-11-01, odometer = 140000 }]\n")


@pytest.mark.parametrize("key", ["tesk\x1b]0;pwned\x07", "tesk\x1b[31m", "te\nsk", "te\rsk",
                                 "te\tsk", "tesk\u202e", "tesk\x9b2J"])
def test_an_engine_profile_id_with_a_control_character_is_refused(tmp_path, capsys, key):
    path = tmp_path / "fleet.toml"
    path.write_text(_fleet(engine_key=key), encoding="utf-8")
    code, out, err = run(capsys, "check", str(path))
    assert code == 2
    assert "engines" in err and "fleet.toml:2" in err  # the line of the table's header
    assert_inert(code, out, err)


@pytest.mark.parametrize("vid", ["HX\x1b[31m", "HX\nHX-99", "HX\r", "HX\t1", "HX\u202e1",
                                 "HX\u2028HX-98"])
def test_a_vehicle_id_with_a_control_character_or_line_end_is_refused(tmp_path, capsys, vid):
    path = tmp_path / "fleet.toml"
    path.write_text(_fleet(vid=vid), encoding="utf-8")
    code, out, err = run(capsys, "check", str(path))
    assert code == 2
    assert "field id" in err and "fleet.toml:10" in err
    assert_inert(code, out, err)


@pytest.mark.parametrize("currency", ["G\nBP", "GB\tP", "\x1b[2J"])
def test_a_currency_with_a_line_end_or_control_character_is_refused(tmp_path, capsys, currency):
    path = tmp_path / "fleet.toml"
    text = _fleet().replace("schema = 1\n", "", 1)
    path.write_text(f"schema = 1\n[fleet]\ncurrency = {json.dumps(currency)}\n" + text,
                    encoding="utf-8")
    code, out, err = run(capsys, "check", str(path))
    assert code == 2 and "field fleet.currency" in err
    assert_inert(code, out, err)


def test_check_of_the_refused_corpus_names_every_bad_key_and_id_escaped(capsys):
    code, out, err = run(capsys, "check", str(REFUSED))
    assert_inert(code, out, err)
    assert code == 2
    # Both engine profile names are reported (line 10 and line 17 of the corpus), and the
    # vehicle ids are printed as escapes.
    assert "refused.toml:10:" in err and "refused.toml:17:" in err
    assert "HX-01\\x1b[31m red \\x9b2J\\x07" in err
    assert "HX-02\\r\\nHX-66 forged line" in err


# -- every command over the corpus ---------------------------------------------------------------

LIST_FORMATS = ["table", "csv", "json", "markdown"]
WEEK_FORMATS = [("table", None), ("csv", "jobs"), ("csv", "parts"), ("csv", "calls"),
                ("json", None), ("markdown", None), ("ics", None)]


@pytest.mark.parametrize("fleet", [ACCEPTED, REFUSED], ids=["accepted", "refused"])
def test_every_command_keeps_the_corpus_inert(capsys, tmp_path, fleet):
    calls: list[tuple[list[str], bool]] = [(["check", str(fleet)], False)]
    calls += [(["list", str(fleet), "--as-of", AS_OF, "--format", f], f == "csv")
              for f in LIST_FORMATS]
    calls += [(["risk", str(fleet), "--as-of", AS_OF], False)]
    for fmt, kind in WEEK_FORMATS:
        argv = ["week", str(fleet), "--as-of", AS_OF, "--format", fmt]
        calls.append((argv + (["--list", kind] if kind else []), fmt == "csv"))
    calls += [(["schema"], False)]
    copy = tmp_path / "fleet.toml"
    shutil.copy(fleet, copy)
    calls += [(["readings", str(copy), "--from", str(HOSTILE / "readings.csv"), "--dry-run"],
               False),
              (["readings", str(copy), "--from", str(HOSTILE / "readings.csv")], False)]
    for argv, rows in calls:
        code, out, err = run(capsys, *argv)
        assert_inert(code, out, err, rows)
        if fleet == ACCEPTED:
            assert code == 0, argv
        elif argv[0] != "schema":
            assert code == 2, argv


def test_import_of_a_hostile_sheet_is_inert(capsys, tmp_path):
    out_path = tmp_path / "imported.toml"
    for argv in (["import", str(HOSTILE / "import.csv"), "--dry-run"],
                 ["import", str(HOSTILE / "import.csv"), "-o", str(out_path)]):
        code, out, err = run(capsys, *argv)
        assert_inert(code, out, err)
    if out_path.exists():  # what it wrote must not load with a control character in an id
        code, out, err = run(capsys, "list", str(out_path), "--as-of", AS_OF)
        assert_inert(code, out, err)


def test_a_planted_marker_is_printed_escaped_by_readings(capsys, tmp_path):
    path = tmp_path / "fleet.toml"
    shutil.copy(ACCEPTED, path)
    plant_marker(path)
    code, out, err = run(capsys, "readings", str(path), "--from", str(HOSTILE / "readings.csv"))
    assert_inert(code, out, err)
    assert "is open in a beltplan window of" in err
    assert "mallory\\x1b]0;owned\\x07\\nHX-99" in err


def plant_marker(path: Path) -> None:
    """A marker another user wrote by hand: OSC and a line end in user and host, a live pid
    (this test's parent) so it is not taken for stale."""
    record = inuse.Record(user="mallory\x1b]0;owned\x07\nHX-99", host="far\x9b2J\u202ehost",
                          pid=os.getppid(), opened_at=dt.datetime(2026, 12, 1, 9, 0,
                                                                  tzinfo=dt.UTC),
                          version="0", token="planted")
    inuse.marker_path(path).write_bytes(record.to_bytes())


# -- Markdown: one escaping function for every writer -------------------------------------------

MARKDOWN_ATTACKS = ["<script>alert(1)</script>", "<img src=x onerror=alert(1)>",
                    "![x](http://example.invalid/p.png)", "a\n# Heading", "a\r\n## Heading",
                    "[link](javascript:alert(1))", "x | y"]


@pytest.mark.parametrize("text", MARKDOWN_ATTACKS)
def test_markdown_text_is_one_inert_line(text):
    out = markdown_text(text)
    assert "\n" not in out and "\r" not in out
    assert not unescaped("<", out)  # CommonMark §6.6: raw HTML starts with an unescaped <
    assert not unescaped("](", out)  # CommonMark §6.3/§6.4: a link or image needs `](`
    assert not unescaped("|", out)  # GFM tables: an unescaped pipe splits the cell


def unescaped(mark: str, text: str) -> bool:
    """`mark` in `text` not preceded by a backslash (CommonMark §2.4: a backslash escape)."""
    return re.search(r"(^|[^\\])" + re.escape(mark), text) is not None


def test_the_week_and_the_list_use_the_same_markdown_escaping():
    assert week_export.md is markdown_text
    records = [{"id": text, "label": text} for text in MARKDOWN_ATTACKS]
    doc = export.to_markdown(records, [("id", "Vehicle"), ("label", "Label")],
                             "Plan <script>x</script>\n# Forged")
    assert not unescaped("<", doc) and not unescaped("](", doc)
    body = doc.splitlines()
    assert [line for line in body if line.startswith("#")] == [body[0]]  # the title only


def test_list_markdown_of_the_corpus_has_no_html_image_or_forged_heading(capsys):
    code, out, err = run(capsys, "list", str(ACCEPTED), "--as-of", AS_OF, "--format",
                         "markdown")
    assert code == 0
    assert not unescaped("<", out) and not unescaped("](", out)
    assert [line for line in out.splitlines() if line.startswith("#")] == [
        out.splitlines()[0]]


# -- CSV: every form of a formula start neutralised (OWASP "CSV Injection") ---------------------

# OWASP CSV Injection: cells starting with = + - @ tab or CR, also after leading whitespace or
# a line end, and the fullwidth forms U+FF1D U+FF0B U+FF0D U+FF20, are prefixed with '.
@pytest.mark.parametrize("text", ["=1+1", "+1", "-1+1", "@SUM(A1)", "\t=1", "\r=1",
                                  " =1+1", "  +1", "\n=1", "\r\n-1", " \t@x",
                                  "\uff1d1+1", "\uff0b1", "\uff0d1", "\uff20SUM(A1)",
                                  " \uff1d1"])
def test_a_formula_start_in_any_form_is_neutralised(text):
    assert export.safe_cell(text) == "'" + text


@pytest.mark.parametrize("value", [-12, -0.5, 0, 42.0])
def test_a_negative_number_stays_a_number(value):
    assert export.safe_cell(value) == value


@pytest.mark.parametrize("text", ["MR-1042", "belt kit, pump", "a = b", "x-1"])
def test_plain_text_is_left_alone(text):
    assert export.safe_cell(text) == text


# -- the terminal UI -------------------------------------------------------------------------------

# In a screenshot (SVG text) a raw control, format or line-separator character would be what
# the UI sent to the terminal; the visible escapes are plain text.
RAW = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u200b-\u200f\u2028-\u202e\u2060-\u2069]")


def screen_text_is_inert(app) -> None:
    svg = app.export_screenshot()
    hit = RAW.search(svg)
    assert hit is None, f"{hit.group()!r} in the screen of {type(app.screen).__name__}"
    # No row of the screen starts with a forged id: a file's line end never makes a row.
    rows = re.findall(r">([^<>]*)</text>", svg)
    bad = [r for r in rows if r.replace("\u00a0", " ").lstrip(" │▕|").startswith(FORGED)]
    assert not bad, bad


@sync_test
async def test_the_ui_shows_the_accepted_corpus_inert_in_every_view(tmp_path):
    from planner.tui.app import create_app
    from tests.test_tui_support import opened, screen_name, until

    path = tmp_path / "fleet.toml"
    shutil.copy(ACCEPTED, path)
    app = create_app(path, dt.date(2026, 12, 1))
    async with app.run_test(size=(80, 24)) as pilot:
        await opened(pilot)
        assert screen_name(app) == "MainScreen"
        screen_text_is_inert(app)
        assert RAW.search(app.title) is None and RAW.search(app.sub_title) is None
        await pilot.press("enter")  # the detail of the first vehicle (HX-01, overdue)
        await until(pilot, lambda: screen_name(app) == "DetailScreen", what="detail")
        await pilot.pause()
        screen_text_is_inert(app)
        for _ in range(12):  # scroll through the whole detail
            await pilot.press("pagedown")
            screen_text_is_inert(app)
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen", what="back")
        await pilot.press("e")  # the edit form: the engine choice shows the profile's words
        await until(pilot, lambda: screen_name(app) == "FormScreen", what="form")
        await pilot.pause()
        screen_text_is_inert(app)
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen", what="back")
        await pilot.press("w")  # the week
        await until(pilot, lambda: screen_name(app) == "WeekScreen", what="week")
        await pilot.pause()
        screen_text_is_inert(app)


@sync_test
async def test_the_ui_error_view_of_the_refused_corpus_is_inert(tmp_path):
    from planner.tui.app import create_app
    from tests.test_tui_support import opened, screen_name

    path = tmp_path / "fleet.toml"
    shutil.copy(REFUSED, path)
    app = create_app(path, dt.date(2026, 12, 1))
    async with app.run_test(size=(80, 24)) as pilot:
        await opened(pilot)
        assert screen_name(app) == "ErrorScreen"
        screen_text_is_inert(app)
        assert RAW.search(app.title) is None and RAW.search(app.sub_title) is None


@sync_test
async def test_the_ui_asks_about_a_planted_marker_with_its_text_escaped(tmp_path):
    from planner.tui.app import create_app
    from planner.tui.screens.dialogs import AskDialog
    from tests.test_tui_support import text_of, until

    path = tmp_path / "fleet.toml"
    shutil.copy(ACCEPTED, path)
    plant_marker(path)
    app = create_app(path, dt.date(2026, 12, 1), in_use=True)
    async with app.run_test(size=(80, 24)) as pilot:
        await until(pilot, lambda: isinstance(app.screen, AskDialog), what="the question")
        words = text_of(app.screen.query_one(".intro"))
        assert "mallory\\x1b]0;owned\\x07\\nHX-99" in " ".join(words.split())
        assert "far\\x9b2J\\u202ehost" in words
        screen_text_is_inert(app)


def test_the_ui_markdown_export_of_the_corpus_has_no_html_image_or_forged_heading():
    from planner.tui.session import Session

    session = Session(ACCEPTED, dt.date(2026, 12, 1))
    assert session.load()
    records = export.assessment_records(session.assessment())
    doc = session.export_text(records, "markdown")
    assert not unescaped("<", doc) and not unescaped("](", doc)
    lines = doc.splitlines()
    assert [line for line in lines if line.startswith("#")] == [lines[0]]
    assert "\u202e" not in doc


def test_json_keeps_the_text_and_escapes_format_and_separator_characters():
    doc = {"label": "Van\u202ekcab\u2028x\x85y\n", "plain": "Zürich – 3 %"}
    text = export.json_text(doc)
    assert "\u202e" not in text and "\u2028" not in text and "\x85" not in text
    assert json.loads(text) == doc  # the standard library reads back the same strings
    assert "Zürich – 3 %" in text  # non-ASCII that is shown as it is stays readable


def test_a_form_shows_a_line_end_escaped_and_keeps_the_text_when_left_untouched():
    from planner.tui.forms import FormField, convert, shown_value

    f = FormField("label", "Label", value="Van\r\nHX-99 overdue\u202e")
    assert shown_value(f) == "Van\\r\\nHX-99 overdue\\u202e"  # one line, escapes visible
    assert convert(f, shown_value(f)) == "Van\r\nHX-99 overdue\u202e"  # the file's own text
    assert convert(f, "Van HX-99") == "Van HX-99"  # what the user typed instead


def test_a_file_name_with_escapes_and_line_ends_is_shown_inert(tmp_path, capsys):
    from planner.cli import main
    from tests.conftest import COURIER

    # A name may hold any byte but "/" and NUL (POSIX): one that sets the title and forges a
    # line must be shown as escapes in check's line and list's "wrote" message.
    name = tmp_path / "p\x1b]0;PWN\x07\r\nFORGED.toml"
    name.write_bytes(COURIER.read_bytes())
    out_path = tmp_path / "o\x1b[31m.csv"
    assert main(["check", str(name)]) == 0
    assert main(["list", str(name), "--as-of", "2026-12-04", "--format", "csv",
                 "-o", str(out_path)]) == 0
    both = capsys.readouterr()
    for text in (both.out, both.err):
        assert "\x1b" not in text and "\x07" not in text and "\r" not in text
        assert not any(line.startswith("FORGED") for line in text.splitlines())
