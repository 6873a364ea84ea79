"""Pilot tests of the file: save (comments kept), changed behind our back, quit, reload,
the error view, and exports written by the CLI's own writers."""

from __future__ import annotations

import csv
import datetime as dt
import io
import json
import tomllib

from textual.widgets import Input, Select

from planner import export
from planner.cli import main as cli_main
from planner.fileio import load_fleet
from tests.test_tui_support import (
    EXAMPLE,
    SMALL,
    copy_example,
    listed_ids,
    make_app,
    opened,
    record_job,
    screen_name,
    sync,
    text_of,
    until,
)


def comment_lines(text: str) -> list[str]:
    return [line for line in text.splitlines() if "#" in line]


@sync
async def test_save_keeps_every_comment_and_reloads_to_the_fleet_plus_the_change(tmp_path):
    path = copy_example(tmp_path)
    original = path.read_text()
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await record_job(pilot)
        assert "unsaved" in text_of(app.screen.query_one("#title-right"))
        await pilot.press("ctrl+s")
        await until(pilot, lambda: not app.session.dirty, what="saved")
        assert "Saved" in app.last_message and ".bak" in app.last_message
        assert "saved" in text_of(app.screen.query_one("#title-right"))
    saved = path.read_text()
    assert comment_lines(saved) == comment_lines(original)
    expected = tomllib.loads(original)
    expected["vehicles"][0]["belt_jobs"].append({
        "date": dt.date(2026, 12, 7), "odometer": 226000, "reason": "scheduled",
        "work": "belt kit, water pump"})
    assert tomllib.loads(saved) == expected
    assert load_fleet(path).fleet == app.session.fleet
    assert (tmp_path / "fleet.toml.bak").read_text() == original
    # Reopened, the job and its effect are there.
    again = make_app(path)
    async with again.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert "✓ ok" in [c.plain for c in again.main_screen().table.get_row("KL-01")]


@sync
async def test_a_file_changed_behind_our_back_is_not_overwritten_and_nothing_is_lost(tmp_path):
    path = copy_example(tmp_path)
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await record_job(pilot)
        ours = app.session.text
        theirs = path.read_text().replace('name = "Pellory Lane Couriers"',
                                          'name = "Pellory Lane Couriers Ltd"')
        path.write_text(theirs)  # someone else saves meanwhile
        await pilot.press("ctrl+s")
        await until(pilot, lambda: screen_name(app) == "AskDialog", what="refusal")
        assert "changed on disk" in text_of(app.screen.query_one(".intro"))
        assert path.read_text() == theirs  # their change is intact
        assert app.session.text == ours and app.session.dirty  # ours too
        await pilot.click("#ask-copy")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        mine = tmp_path / "fleet.mine.toml"
        assert mine.read_text() == ours and "fleet.mine.toml" in app.last_message
        assert path.read_text() == theirs
        # Reload (after saying yes) takes theirs and drops ours.
        await pilot.press("ctrl+r")
        await until(pilot, lambda: screen_name(app) == "AskDialog")
        await pilot.click("#ask-reload")
        await until(pilot, lambda: app.session.text == theirs, what="reloaded")
        assert "Ltd" in text_of(app.screen.query_one("#title-left"))


@sync
async def test_quit_with_unsaved_changes_asks(tmp_path):
    path = copy_example(tmp_path)
    original = path.read_text()
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await record_job(pilot)
        await pilot.press("q")
        await until(pilot, lambda: screen_name(app) == "AskDialog")
        assert "change to" in text_of(app.screen.query_one(".intro"))
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert app.is_running
        await pilot.press("q")
        await until(pilot, lambda: screen_name(app) == "AskDialog")
        await pilot.click("#ask-discard")
        await until(pilot, lambda: not app.is_running, what="exit")
    assert path.read_text() == original


@sync
async def test_save_and_quit(tmp_path):
    path = copy_example(tmp_path)
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await record_job(pilot, "227000")
        await pilot.press("ctrl+q")
        await until(pilot, lambda: screen_name(app) == "AskDialog")
        await pilot.click("#ask-save")
        await until(pilot, lambda: not app.is_running, what="exit")
    assert "odometer = 227000" in path.read_text()


@sync
async def test_quit_without_changes_does_not_ask():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("q")
        await until(pilot, lambda: not app.is_running, what="exit")


@sync
async def test_bad_file_opens_the_error_view_then_reload_after_the_fix(tmp_path):
    path = copy_example(tmp_path)
    good = path.read_text()
    path.write_text(good.replace('engine = "plim"\nin_service = 2024-03-18',
                                 'engine = "plimm"\nin_service = 2024-03-18')
                    .replace("odometer = 196900", "odometer = 96900"))
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert screen_name(app) == "ErrorScreen"
        words = " ".join(text_of(app.screen.query_one("#e-problems")).split())
        assert "vehicle KL-07 · field engine" in words and "did you mean 'plim'?" in words
        assert "line 189" in words
        assert "odometer goes backwards" in words and "fix correct the reading" in words
        assert "ctrl+r" in text_of(app.screen.query_one("#e-help"))
        await pilot.press("r")  # editing keys do nothing here
        assert screen_name(app) == "ErrorScreen"
        path.write_text(good)
        await pilot.press("ctrl+r")
        await until(pilot, lambda: screen_name(app) == "MainScreen", what="list after fix")
        assert len(listed_ids(app)) == 16


@sync
async def test_toml_syntax_error_is_located_not_a_traceback(tmp_path):
    path = tmp_path / "broken.toml"
    path.write_text('schema = 1\n[fleet\nname = "x"\n')
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert screen_name(app) == "ErrorScreen"
        assert "line 2" in text_of(app.screen.query_one("#e-problems"))


@sync
async def test_missing_file_is_an_error_view(tmp_path):
    app = make_app(tmp_path / "nope.toml")
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert "no such file" in text_of(app.screen.query_one("#e-title"))


async def export_as(pilot, fmt, target):
    app = pilot.app
    await pilot.press("x")
    await until(pilot, lambda: screen_name(app) == "FormScreen")
    app.screen.query_one("#f-format", Select).value = fmt
    await pilot.pause()
    assert app.screen.query_one("#f-file", Input).value.endswith(
        {"csv": ".csv", "json": ".json", "markdown": ".md"}[fmt])
    app.screen.query_one("#f-file", Input).value = str(target)
    await pilot.press("ctrl+o")
    await until(pilot, lambda: screen_name(app) != "FormScreen", what="exported")


@sync
async def test_export_the_filtered_list_with_the_clis_writers(tmp_path):
    app = make_app(EXAMPLE)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        app.main_screen().set_view(app.main_screen().table.view.with_(
            statuses=frozenset({"overdue"})))
        records = list(app.main_screen().table.listed)
        assert [r["id"] for r in records] == ["KL-01", "KL-02", "KL-03", "KL-08"]
        await export_as(pilot, "csv", tmp_path / "overdue.csv")
        assert app.last_message == f"Exported 4 vehicles to {tmp_path / 'overdue.csv'}"
        data = (tmp_path / "overdue.csv").read_bytes().decode("utf-8")
        assert data == export.to_csv(records, export.FIELDS)
        # Byte for byte what the command line writes for the same list.
        assert cli_main(["list", str(EXAMPLE), "--as-of", "2026-12-07", "--status", "overdue",
                         "--format", "csv", "-o", str(tmp_path / "cli.csv")]) == 0
        assert (tmp_path / "cli.csv").read_bytes() == (tmp_path / "overdue.csv").read_bytes()
        rows = list(csv.DictReader(io.StringIO(data)))
        assert [r["id"] for r in rows] == ["KL-01", "KL-02", "KL-03", "KL-08"]
        await export_as(pilot, "json", tmp_path / "overdue.json")
        doc = json.loads((tmp_path / "overdue.json").read_text())
        assert doc["as_of"] == "2026-12-07" and len(doc["vehicles"]) == 4
        assert doc["caution"] == export.CAUTION and "risk_assumptions" in doc
        await export_as(pilot, "markdown", tmp_path / "overdue.md")
        md = (tmp_path / "overdue.md").read_text()
        assert md.startswith("# Cam-drive plan: Pellory Lane Couriers on 2026-12-07")
        assert "4 vehicles: 4 overdue" in md and "**Caution.**" in md


@sync
async def test_export_refuses_to_write_over_the_fleet_file(tmp_path):
    path = copy_example(tmp_path)
    original = path.read_text()
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("x")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        app.screen.query_one("#f-file", Input).value = "fleet.toml"
        await pilot.press("ctrl+o")
        await pilot.pause()
        assert screen_name(app) == "FormScreen"
        assert "refusing to write over the fleet file" in text_of(
            app.screen.query_one("#problems"))
    assert path.read_text() == original


@sync
async def test_the_newcomer_scenario_from_the_issue(tmp_path):
    """Open, find the most urgent, read why, record its belt job, watch the status change,
    save, quit, reopen: the job and every comment are still there."""
    path = copy_example(tmp_path)
    comments = comment_lines(path.read_text())
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        urgent = listed_ids(app)[0]
        await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "DetailScreen")
        assert "limit decides" in text_of(app.screen.query_one("#d-notes"))
        await record_job(pilot)
        await until(pilot, lambda: "✓ ok" in text_of(app.screen.query_one("#d-heading")))
        await pilot.press("escape", "ctrl+s")
        await until(pilot, lambda: not app.session.dirty, what="saved")
        await pilot.press("q")
        await until(pilot, lambda: not app.is_running, what="quit without a question")
    again = make_app(path)
    async with again.run_test(size=SMALL) as pilot:
        await opened(pilot)
        plan = again.session.plan_of(urgent)
        assert plan.status.value == "ok" and plan.install.date == dt.date(2026, 12, 7)
        assert plan.vehicle.belt_jobs[-1].work == "belt kit, water pump"
    assert comment_lines(path.read_text()) == comments
