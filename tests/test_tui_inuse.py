"""Pilot tests of the in-use marker in the UI: a second window on the same file asks, read-only
refuses to save and leaves the file as it was, open anyway takes the marker over, quitting
releases it, a crash's marker is taken over without a word, and a folder that takes no marker
opens all the same."""

from __future__ import annotations

import datetime as dt
import errno
import json
import os
import subprocess
import sys
import time

import pytest

from planner import inuse
from planner.inuse import Claim
from planner.tui import clock, create_app
from planner.tui.screens.dialogs import AskDialog
from planner.tui.session import Session
from tests.test_tui_support import (
    AS_OF,
    SMALL,
    copy_example,
    opened,
    record_job,
    screen_name,
    sync,
    text_of,
    until,
)

OPENED = dt.datetime(2026, 12, 7, 9, 15, tzinfo=dt.UTC)


@pytest.fixture
def local_time_utc_plus_one(monkeypatch):
    """Local time one hour ahead of UTC (a POSIX TZ rule: no zone database needed)."""
    monkeypatch.setenv("TZ", "TST-1")
    time.tzset()
    yield
    monkeypatch.undo()
    time.tzset()


def app_on(path):
    return create_app(path, AS_OF, in_use=True)


def marker_of(path):
    return path.with_name(f".{path.name}.in-use")


def other_window(path, host: str | None = None, pid: int | None = None) -> Claim:
    """Another window's claim: a live process on this computer (the one that ran the tests)."""
    me = inuse.new_record(OPENED, pid=pid or os.getppid(), host=host, user="ben",
                          token="theirs")
    made = inuse.claim(path, me)
    assert isinstance(made, Claim)
    return made


def dead_pid() -> int:
    child = subprocess.Popen([sys.executable, "-c", "pass"])
    child.wait()
    return child.pid


def title_right(app) -> str:
    return text_of(app.screen.query_one("#title-right"))


async def asked(pilot) -> None:
    await until(pilot, lambda: isinstance(pilot.app.screen, AskDialog), what="the question")


@sync
async def test_a_second_window_on_the_same_file_asks_who_has_it(tmp_path, monkeypatch,
                                                               local_time_utc_plus_one):
    path = copy_example(tmp_path)
    monkeypatch.setattr(clock, "utc_now", lambda: OPENED)
    first = app_on(path)
    async with first.run_test(size=SMALL) as one:
        await opened(one)
        assert screen_name(first) == "MainScreen" and marker_of(path).exists()
        monkeypatch.setattr(clock, "utc_now", lambda: OPENED + dt.timedelta(minutes=12))
        second = app_on(path)
        async with second.run_test(size=SMALL) as two:
            await asked(two)
            words = " ".join(text_of(second.screen.query_one(".intro")).split())
            # One sentence: who, which file, since when (09:15 UTC at UTC+1, 12 min later),
            # where; then the question about this window's changes.
            assert (f"{inuse.this_user()} has had {path} open in another beltplan window since "
                    f"10:15, 12 minutes ago (on {inuse.this_host()}, process {os.getpid()}).") \
                in words
            assert words.endswith("What should happen to the changes you make in this window?")
            labels = [str(b.label) for b in second.screen.query("Button")]
            assert labels == [
                "Look only: my changes stay here, the file is not written",
                "Edit here too: whichever window saves second is told the file changed",
                "Leave it to them: close beltplan now"]
            assert "another computer" not in words
            assert second.screen.focused.id == "ask-read-only"  # the default
            assert [b.id for b in second.screen.query("Button")] == \
                ["ask-read-only", "ask-anyway", "ask-quit"]
            await two.press("enter")
            await until(two, lambda: screen_name(second) == "MainScreen")
            assert second.read_only and "read-only" in title_right(second)
        # The second window leaves the first one's marker as it was.
        data = json.loads(marker_of(path).read_bytes())
        assert data["token"] == first._in_use_token and data["opened_at"] == "2026-12-07T09:15:00Z"
        assert "read-only" not in title_right(first)
    assert not marker_of(path).exists()


@sync
async def test_read_only_refuses_to_save_and_leaves_the_file_byte_identical(tmp_path):
    path = copy_example(tmp_path)
    before = path.read_bytes()
    theirs = other_window(path)
    their_marker = marker_of(path).read_bytes()
    app = app_on(path)
    async with app.run_test(size=SMALL) as pilot:
        await asked(pilot)
        await pilot.click("#ask-read-only")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert "Opened" in app.last_message and "read-only" in app.last_message
        await record_job(pilot)
        assert app.session.dirty
        assert "read-only" in title_right(app) and "1 unsaved change" in title_right(app)
        await pilot.press("ctrl+s")
        await asked(pilot)
        words = " ".join(text_of(app.screen.query_one(".intro")).split())
        assert "opened" in words and "read-only" in words and "ben@" in words
        assert "not touched" in words and "Save anyway:" in words  # how to get write access
        assert app.last_message == f"Not saved: {path} is open read-only in this window."
        assert path.read_bytes() == before and not (tmp_path / "fleet.toml.bak").exists()
        ours = app.session.text
        await pilot.click("#ask-copy")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert (tmp_path / "fleet.mine.toml").read_text() == ours
        assert "fleet.mine.toml" in app.last_message
        # Quitting with the change: "save and quit" is refused too, and nothing is written.
        await pilot.press("q")
        await asked(pilot)
        await pilot.click("#ask-save")
        await until(pilot, lambda: "Read-only" in str(app.screen.query_one(".panel")
                                                      .border_title), what="refusal")
        assert app.is_running
    assert path.read_bytes() == before
    assert marker_of(path).read_bytes() == their_marker  # theirs, untouched
    assert inuse.release(theirs)


@sync
async def test_open_anyway_takes_the_marker_over_and_saves(tmp_path):
    path = copy_example(tmp_path)
    theirs = other_window(path)
    app = app_on(path)
    async with app.run_test(size=SMALL) as pilot:
        await asked(pilot)
        await pilot.click("#ask-anyway")
        await until(pilot, lambda: app.claim is not None, what="taken over")
        data = json.loads(marker_of(path).read_bytes())
        assert (data["pid"], data["token"]) == (os.getpid(), app._in_use_token)
        assert not app.read_only and "read-only" not in title_right(app)
        assert "open for editing here" in app.last_message and "ben@" in app.last_message
        await record_job(pilot)
        await pilot.press("ctrl+s")
        await until(pilot, lambda: not app.session.dirty, what="saved")
        assert "odometer = 226000" in path.read_text()
        assert inuse.release(theirs) is False  # the other window cannot remove ours
    assert not marker_of(path).exists()


async def read_only_with_a_change(pilot) -> None:
    """Answer the question with read-only (enter, the default), then record a belt job."""
    await asked(pilot)
    await pilot.press("enter")
    await until(pilot, lambda: screen_name(pilot.app) == "MainScreen")
    await record_job(pilot)


@sync
async def test_read_only_then_open_anyway_and_save_from_the_refusal(tmp_path):
    path = copy_example(tmp_path)
    other_window(path)
    app = app_on(path)
    async with app.run_test(size=SMALL) as pilot:
        await read_only_with_a_change(pilot)
        await pilot.press("ctrl+s")
        await asked(pilot)
        await pilot.click("#ask-anyway")
        await until(pilot, lambda: not app.session.dirty, what="saved")
        assert "odometer = 226000" in path.read_text()
        assert json.loads(marker_of(path).read_bytes())["token"] == app._in_use_token


@sync
async def test_save_and_quit_from_a_read_only_window_then_save_anyway_quits(tmp_path):
    """Found in review: the save went through, the quit asked for was forgotten."""
    path = copy_example(tmp_path)
    other_window(path)
    app = app_on(path)
    async with app.run_test(size=SMALL) as pilot:
        await read_only_with_a_change(pilot)
        await pilot.press("q")
        await asked(pilot)
        await pilot.click("#ask-save")
        await until(pilot, lambda: "Read-only" in str(app.screen.query_one(".panel")
                                                      .border_title), what="refusal")
        await pilot.click("#ask-anyway")
        await until(pilot, lambda: not app.is_running, what="quit after the save")
    assert "odometer = 226000" in path.read_text()


@sync
async def test_quit_releases_the_marker(tmp_path):
    path = copy_example(tmp_path)
    app = app_on(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert json.loads(marker_of(path).read_bytes())["token"] == app._in_use_token
        await pilot.press("q")
        await until(pilot, lambda: not app.is_running, what="exit")
    assert not marker_of(path).exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fleet.toml"]


@sync
async def test_quit_from_the_question_leaves_the_other_windows_marker(tmp_path):
    path = copy_example(tmp_path)
    other_window(path, host="office-laptop", pid=dead_pid())
    before = marker_of(path).read_bytes()
    app = app_on(path)
    async with app.run_test(size=SMALL) as pilot:
        await asked(pilot)
        words = " ".join(text_of(app.screen.query_one(".intro")).split())
        assert "ben has had" in words and "(on office-laptop," in words
        assert "another computer" in words
        await pilot.click("#ask-quit")
        await until(pilot, lambda: not app.is_running, what="exit")
    assert marker_of(path).read_bytes() == before


@pytest.mark.parametrize("leftover", ["crashed", "cut short"])
@sync
async def test_a_crashed_windows_marker_is_taken_over_silently(tmp_path, leftover):
    path = copy_example(tmp_path)
    old = inuse.new_record(OPENED, pid=dead_pid(), user="ben", token="crashed").to_bytes()
    marker_of(path).write_bytes(old if leftover == "crashed" else old[:40])
    app = app_on(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await until(pilot, lambda: app.claim is not None, what="claimed")
        for _ in range(5):
            await pilot.pause()
        assert screen_name(app) == "MainScreen" and app.last_message == ""  # not a word
        assert not app.read_only
        assert json.loads(marker_of(path).read_bytes())["token"] == app._in_use_token
    assert not marker_of(path).exists()


@sync
async def test_a_folder_that_takes_no_marker_opens_and_says_so_once(tmp_path, monkeypatch):
    path = copy_example(tmp_path)
    real_open = os.open

    def read_only_share(name, flags, *args, **kwargs):
        if str(name).endswith(".in-use") and flags & os.O_CREAT:
            raise OSError(errno.EROFS, os.strerror(errno.EROFS), str(name))
        return real_open(name, flags, *args, **kwargs)

    monkeypatch.setattr(os, "open", read_only_share)
    app = app_on(path)
    said: list[str] = []
    say = app.say
    app.say = lambda message, severity="information": (said.append(message),
                                                       say(message, severity))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await until(pilot, lambda: said, what="the note")
        assert screen_name(app) == "MainScreen" and not app.read_only
        assert said[0].startswith(f"No in-use marker beside {path}: ")
        assert "read-only disk" in said[0] and "still refuses" in said[0]
        await pilot.press("ctrl+r")
        await until(pilot, lambda: len(said) == 2, what="read again")
        assert said[1] == f"Read {path} again."  # the note is not repeated
        await record_job(pilot)
        await pilot.press("ctrl+s")
        await until(pilot, lambda: not app.session.dirty, what="saved")  # the save still works
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fleet.toml", "fleet.toml.bak"]


@sync
async def test_reading_again_after_the_other_window_closed_gives_write_access(tmp_path):
    path = copy_example(tmp_path)
    theirs = other_window(path)
    app = app_on(path)
    async with app.run_test(size=SMALL) as pilot:
        await asked(pilot)
        assert app.screen.query_one(".panel").border_subtitle == "esc: look only"
        await pilot.press("escape")  # the safe answer
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert app.read_only
        await pilot.press("ctrl+r")  # still theirs: stays read-only, no second question
        await until(pilot, lambda: "again" in app.last_message, what="read again")
        assert app.read_only and screen_name(app) == "MainScreen"
        assert inuse.release(theirs)
        await pilot.press("ctrl+r")
        await until(pilot, lambda: not app.read_only, what="write access")
        assert "no longer open in another window" in app.last_message
        assert "read-only" not in title_right(app)
        assert json.loads(marker_of(path).read_bytes())["token"] == app._in_use_token


@sync
async def test_switching_to_another_file_releases_the_first_ones_marker(tmp_path):
    first = copy_example(tmp_path)
    second = copy_example(tmp_path, "other.toml")
    app = app_on(first)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert marker_of(first).exists()
        app.session = Session(second, AS_OF)
        assert not marker_of(first).exists()
        app.read_in_background()
        await until(pilot, lambda: marker_of(second).exists(), what="second claimed")
        assert json.loads(marker_of(second).read_bytes())["token"] == app._in_use_token
    assert not marker_of(second).exists()


@sync
async def test_a_headless_app_marks_nothing_unless_asked(tmp_path):
    """What keeps the other UI tests (and their snapshots) clear of markers."""
    path = copy_example(tmp_path)
    theirs = other_window(path)
    app = create_app(path, AS_OF)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        for _ in range(5):
            await pilot.pause()
        assert screen_name(app) == "MainScreen" and not app.read_only
    assert inuse.release(theirs)
    app = create_app(path, AS_OF)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert not marker_of(path).exists()
