"""Pilot tests of importing odometer readings from a CSV export in the UI.

The report on screen and the text applied are checked against `planner.importer` run directly
on the same files, so the UI does what `beltplan readings` does; applying is an ordinary edit.
"""

from __future__ import annotations

import datetime as dt
import shutil

from textual.widgets import Button, Input

from planner import importer
from planner.fileio import load_fleet
from planner.tui import clock
from tests.test_tui_support import (
    ROOT,
    SMALL,
    copy_example,
    make_app,
    opened,
    screen_name,
    sync,
    text_of,
    until,
)

READINGS = ROOT / "fleet_examples" / "weekly_readings.csv"
TODAY = dt.date(2026, 12, 7)


def direct(fleet_path, csv_path):
    """What `beltplan readings` would do with these files."""
    loaded = load_fleet(fleet_path)
    decoded = importer.decode_bytes(csv_path.read_bytes(), str(csv_path))
    return importer.import_readings(decoded.text, loaded.fleet, loaded.text,
                                    source=str(csv_path), today=TODAY, decoded=decoded)


async def read_file(pilot, name=None):
    """Open the import form, optionally type a file name, read it; returns the form's default."""
    app = pilot.app
    await pilot.press("o")
    await until(pilot, lambda: screen_name(app) == "FormScreen", what="import form")
    default = app.screen.query_one("#f-file", Input).value
    if name is not None:
        app.screen.query_one("#f-file", Input).value = name
    await pilot.press("ctrl+o")
    await until(pilot, lambda: screen_name(app) != "FormScreen" or app.screen.attempts,
                what="read")
    await pilot.pause()
    return default


def report(app):
    return " ".join(text_of(app.screen.query_one("#import-report")).split())


@sync
async def test_a_weekly_export_is_reported_then_applied_as_an_undoable_edit(tmp_path,
                                                                           monkeypatch):
    monkeypatch.setattr(clock, "today", lambda: TODAY)
    fleet = copy_example(tmp_path)
    shutil.copyfile(READINGS, tmp_path / "weekly_readings.csv")
    want = direct(fleet, tmp_path / "weekly_readings.csv")
    assert (len(want.added), len(want.skipped), len(want.rejected)) == (19, 1, 0)
    original = fleet.read_text()
    app = make_app(fleet)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        default = await read_file(pilot)
        assert default == "weekly_readings.csv"  # the readings file beside the fleet file
        assert screen_name(app) == "ImportReport"
        shown = report(app)
        assert "19 to add · 1 skipped (already in the file) · 0 rejected" in shown
        for a in want.added:
            assert f"{a.vehicle} {a.date} {a.odometer:,.0f} km (row {a.row})" in shown
        assert want.skipped[0].render() in shown
        assert "'Transaction date' -> reading_date" in shown  # how the file was read
        assert str(app.screen.query_one("#apply", Button).label) == "Add 19 readings"
        assert not app.session.dirty  # nothing changed before applying
        await pilot.press("ctrl+o")
        await until(pilot, lambda: screen_name(app) == "MainScreen", what="applied")
        assert app.session.text == want.text
        assert app.session.dirty
        assert app.last_message == ("19 readings imported from weekly_readings.csv (not saved "
                                    "yet).")
        assert "● 1 unsaved change" in text_of(app.screen.query_one("#title-right"))
        kl16 = next(v for v in app.session.fleet.vehicles if v.id == "KL-16")
        assert kl16.readings[-1].odometer == 339990
        await pilot.press("u")
        await pilot.pause()
        assert app.session.text == original and not app.session.dirty
        assert app.last_message == "Undone: 19 readings imported from weekly_readings.csv."
    assert fleet.read_text() == original  # the file changes only on save


@sync
async def test_a_backwards_reading_is_shown_rejected_with_its_reason(tmp_path, monkeypatch):
    monkeypatch.setattr(clock, "today", lambda: TODAY)
    fleet = copy_example(tmp_path)
    csv = tmp_path / "odometers.csv"
    csv.write_text("Date,Vehicle,Odometer\n"
                   "2026-12-01,KL-01,1000\n"        # far below its last reading
                   "2026-12-02,KL-02,269500\n", encoding="utf-8")
    want = direct(fleet, csv)
    [bad] = want.rejected
    assert "odometer goes backwards" in bad.message and len(want.added) == 1
    app = make_app(fleet)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await read_file(pilot, "odometers.csv")
        assert screen_name(app) == "ImportReport"
        shown = report(app)
        assert "1 to add · 0 skipped (already in the file) · 1 rejected" in shown
        assert "Rejected (1): left out, with the reason" in shown
        assert " ".join(bad.render().split()) in shown
        # Cancelling changes nothing.
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert not app.session.dirty
        assert "Nothing imported from odometers.csv" in app.last_message
        # Applying adds the good row only.
        await read_file(pilot, "odometers.csv")
        await pilot.click("#apply")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert app.session.text == want.text
        kl01 = next(v for v in app.session.fleet.vehicles if v.id == "KL-01")
        assert all(r.odometer != 1000 for r in kl01.readings)


@sync
async def test_only_bad_rows_offer_nothing_to_add(tmp_path, monkeypatch):
    monkeypatch.setattr(clock, "today", lambda: TODAY)
    fleet = copy_example(tmp_path)
    csv = tmp_path / "readings.csv"
    csv.write_text("Date,Vehicle,Odometer\n2026-12-01,KL-01,1000\n2027-01-05,KL-02,270000\n"
                   "2026-12-01,KL-99,5000\n", encoding="utf-8")
    app = make_app(fleet)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await read_file(pilot)  # readings.csv is the default beside the fleet file
        shown = report(app)
        assert "0 to add · 0 skipped (already in the file) · 3 rejected" in shown
        assert "after today (2026-12-07)" in shown and "no vehicle with this id" in shown
        assert not app.screen.query("#apply")
        assert "Nothing to add" in text_of(app.screen.query_one("#import-note"))
        await pilot.press("ctrl+o")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert not app.session.dirty


@sync
async def test_a_missing_or_unreadable_file_is_explained_in_the_form(tmp_path, monkeypatch):
    monkeypatch.setattr(clock, "today", lambda: TODAY)
    fleet = copy_example(tmp_path)
    (tmp_path / "dates.csv").write_text("Date,Vehicle,Odometer\n03/12/2026,KL-01,225000\n",
                                        encoding="utf-8")
    app = make_app(fleet)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await read_file(pilot, "nope.csv")
        assert screen_name(app) == "FormScreen"
        assert "no such file" in text_of(app.screen.query_one("#problems"))
        app.screen.query_one("#f-file", Input).value = "fleet.toml"
        await pilot.press("ctrl+o")
        await until(pilot, lambda: app.screen.attempts == 2)
        assert "is a fleet file (TOML), not CSV" in text_of(app.screen.query_one("#problems"))
        # An ambiguous date column is refused, never guessed; the date order field settles it.
        app.screen.query_one("#f-file", Input).value = "dates.csv"
        await pilot.press("ctrl+o")
        await until(pilot, lambda: app.screen.attempts == 3)
        assert "day-first" in text_of(app.screen.query_one("#problems"))
        app.screen.query_one("#f-date_order").value = importer.DAY_FIRST
        await pilot.press("ctrl+o")
        await until(pilot, lambda: screen_name(app) == "ImportReport")
        assert "KL-01 2026-12-03 225,000 km (row 2)" in report(app)
