"""SVG snapshots of the key views at a fixed size and planning date (pytest-textual-snapshot).

Baselines live in tests/snapshots/; after a deliberate change, look at the new SVGs, then
accept them with `pytest tests/test_tui_snapshots.py --snapshot-update`. They are pinned to the
Textual version of the test extra: another version renders differently.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from pytest_textual_snapshot import SVGImageExtension
from textual.widgets import Input

from tests.test_tui_support import (
    LARGE,
    SMALL,
    copy_example,
    make_app,
    screen_name,
    still_cursor,
    until,
)

SNAPSHOTS = Path(__file__).resolve().parent / "snapshots"


@pytest.fixture(autouse=True)
def _baselines_in_tests_snapshots(monkeypatch):
    """Keep the SVGs in tests/snapshots/<module>/ rather than syrupy's __snapshots__."""
    monkeypatch.setattr(SVGImageExtension, "dirname", classmethod(
        lambda cls, *, test_location: str(SNAPSHOTS / test_location.basename)))


@pytest.fixture
def fleet(tmp_path, monkeypatch) -> Path:
    """The courier fleet as `courier_fleet.toml` in the current folder: the path is on
    screen, so it must not depend on where the checkout or the temporary folder is."""
    copy_example(tmp_path, "courier_fleet.toml")
    monkeypatch.chdir(tmp_path)
    return Path("courier_fleet.toml")


def settle(*keys: str, wait_for: str | None = None, then=None):
    """A `run_before` that presses keys, waits for a screen, and stops the cursor blinking."""
    async def run_before(pilot) -> None:
        app = pilot.app
        await until(pilot, lambda: screen_name(app) in ("MainScreen", "ErrorScreen"))
        for key in keys:
            await pilot.press(key)
            await pilot.pause()
        if wait_for:
            await until(pilot, lambda: screen_name(app) == wait_for, what=wait_for)
        if then is not None:
            then(app)
        still_cursor(app)
        await pilot.pause()

    return run_before


def test_main_view_small(snap_compare, fleet):
    assert snap_compare(make_app(fleet), terminal_size=SMALL, run_before=settle())


def test_main_view_large(snap_compare, fleet):
    assert snap_compare(make_app(fleet), terminal_size=LARGE, run_before=settle())


def test_detail_view_of_an_overdue_vehicle(snap_compare, fleet):
    assert snap_compare(make_app(fleet), terminal_size=LARGE,
                        run_before=settle("enter", wait_for="DetailScreen"))


def test_reading_form_with_a_rejected_reading(snap_compare, fleet):
    def rejected(app):
        app.screen.query_one("#f-odometer", Input).value = "1000"
        app.screen.action_apply()

    assert snap_compare(make_app(fleet), terminal_size=SMALL,
                        run_before=settle("r", wait_for="FormScreen", then=rejected))


def test_error_view(snap_compare, fleet):
    fleet.write_text(fleet.read_text().replace('engine = "plim"', 'engine = "plimm"', 1)
                     .replace('duty = "severe"', 'dutty = "severe"', 1))
    assert snap_compare(make_app(fleet), terminal_size=SMALL, run_before=settle())


def test_help_view(snap_compare, fleet):
    assert snap_compare(make_app(fleet), terminal_size=SMALL,
                        run_before=settle("question_mark", wait_for="HelpScreen"))
