"""An SVG snapshot of the week view: the garage example, 80x24, planned on Fri 2026-12-04.

The baseline lives in tests/snapshots/test_tui_week_snapshots/; after a deliberate change, look
at the new SVG, then accept it with `pytest tests/test_tui_week_snapshots.py --snapshot-update`.
"""

from __future__ import annotations

import datetime as dt
import shutil
from pathlib import Path

import pytest
from pytest_textual_snapshot import SVGImageExtension

from tests.test_tui_support import ROOT, SMALL, make_app, screen_name, still_cursor, until

SNAPSHOTS = Path(__file__).resolve().parent / "snapshots"
GARAGE = ROOT / "fleet_examples" / "garage_customers.toml"


@pytest.fixture(autouse=True)
def _baselines_in_tests_snapshots(monkeypatch):
    """Keep the SVGs in tests/snapshots/<module>/ rather than syrupy's __snapshots__."""
    monkeypatch.setattr(SVGImageExtension, "dirname", classmethod(
        lambda cls, *, test_location: str(SNAPSHOTS / test_location.basename)))


@pytest.fixture
def garage(tmp_path, monkeypatch) -> Path:
    """The garage example in the current folder: its path is on screen."""
    shutil.copyfile(GARAGE, tmp_path / "garage_customers.toml")
    monkeypatch.chdir(tmp_path)
    return Path("garage_customers.toml")


async def open_week(pilot) -> None:
    app = pilot.app
    await until(pilot, lambda: screen_name(app) == "MainScreen")
    await pilot.press("w")
    await until(pilot, lambda: screen_name(app) == "WeekScreen", what="week view")
    still_cursor(app)
    await pilot.pause()


def test_week_view_small(snap_compare, garage):
    assert snap_compare(make_app(garage, dt.date(2026, 12, 4)), terminal_size=SMALL,
                        run_before=open_week)
