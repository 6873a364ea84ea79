"""A bug in a view never loses the user's edits: the UI stays up where it can, otherwise the
unsaved text goes to a recovery file beside the fleet file and the exit status is not 0."""

from __future__ import annotations

import datetime as dt
import os
import stat

import pytest

from planner.recovery import recovery_name, write_recovery
from planner.tui.screens import help as help_screens
from planner.tui.week_state import WeekState
from tests.test_tui_support import SMALL, copy_example, make_app, opened, screen_name, sync, until

EDIT = "# an unsaved note typed in the UI\n"


def _recoveries(folder):
    return sorted(p for p in folder.iterdir() if ".recovered-" in p.name)


@sync
async def test_an_error_in_a_view_writes_the_unsaved_text_beside_the_file_and_exits_1(
        tmp_path, monkeypatch):
    path = copy_example(tmp_path)
    os.chmod(path, 0o640)

    def broken(*args, **kwargs):
        raise ZeroDivisionError("a bug in the about view")

    monkeypatch.setattr(help_screens.AboutScreen, "__init__", broken)
    app = make_app(path)
    with pytest.raises(ZeroDivisionError):
        async with app.run_test(size=SMALL) as pilot:
            await opened(pilot)
            app.session.apply(EDIT + app.session.text, "a note")
            assert app.session.dirty
            await pilot.press("i")
            await pilot.pause()
    assert app.return_code not in (None, 0)
    [recovered] = _recoveries(tmp_path)
    assert recovered.read_text(encoding="utf-8") == EDIT + path.read_text(encoding="utf-8")
    assert stat.S_IMODE(recovered.stat().st_mode) == 0o640  # the fleet file's mode
    assert app.recovered_to == recovered
    assert path.read_text(encoding="utf-8").startswith(EDIT) is False  # the file is untouched


@sync
async def test_an_error_with_nothing_unsaved_writes_no_file(tmp_path, monkeypatch):
    path = copy_example(tmp_path)

    def broken(*args, **kwargs):
        raise ZeroDivisionError("a bug in the about view")

    monkeypatch.setattr(help_screens.AboutScreen, "__init__", broken)
    app = make_app(path)
    with pytest.raises(ZeroDivisionError):
        async with app.run_test(size=SMALL) as pilot:
            await opened(pilot)
            await pilot.press("i")
            await pilot.pause()
    assert app.return_code not in (None, 0)
    assert _recoveries(tmp_path) == []


@sync
async def test_a_bug_building_the_week_keeps_the_ui_and_the_edit(tmp_path, monkeypatch):
    path = copy_example(tmp_path)

    def broken(self):
        raise OverflowError("a bug in the week plan")

    monkeypatch.setattr(WeekState, "plan", broken)
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        app.session.apply(EDIT + app.session.text, "a note")
        await pilot.press("w")
        await until(pilot, lambda: "bug" in app.last_message, what="the error told")
        assert screen_name(app) == "MainScreen"  # still running, the edit still there
        assert app.session.dirty and app.session.text.startswith(EDIT)
    assert app.return_code in (None, 0)  # a normal end
    assert _recoveries(tmp_path) == []


def test_a_recovery_never_overwrites_an_earlier_one(tmp_path):
    fleet = tmp_path / "fleet.toml"
    fleet.write_text("schema = 1\n", encoding="utf-8")
    now = dt.datetime(2026, 12, 7, 9, 30, 5, tzinfo=dt.UTC)
    first = write_recovery(fleet, "one", now)
    second = write_recovery(fleet, "two", now)
    # Names worked out by hand: stem "fleet", 2026-12-07 09:30:05 UTC
    assert first.name == ".fleet.recovered-20261207T093005Z.toml"
    assert second.name == ".fleet.recovered-20261207T093005Z-2.toml"
    assert (first.read_text(), second.read_text()) == ("one", "two")
    assert recovery_name(fleet, now, 3) == ".fleet.recovered-20261207T093005Z-3.toml"


def test_the_launcher_exits_non_zero_and_says_where_the_edits_are(tmp_path, monkeypatch, capsys):
    import planner.tui
    from planner.cli import cmd_open

    recovered = tmp_path / ".fleet.recovered-20261207T093005Z.toml"

    class Stopped:  # an app that a bug stopped after writing its recovery file
        return_code = 1
        recovered_to = recovered
        recovery_failed = ""

        def run(self) -> None:
            pass

    monkeypatch.setattr(planner.tui, "create_app", lambda path, as_of: Stopped())
    assert cmd_open.run_ui(tmp_path / "fleet.toml", dt.date(2026, 12, 7)) == 1
    assert str(recovered) in capsys.readouterr().err
