"""Shared fixtures: the shipped examples, a fixed planning date, small fleets written inline."""

from __future__ import annotations

import datetime as dt
import textwrap
from pathlib import Path

import pytest

from planner.fileio import parse_fleet_text
from planner.fleet import Fleet

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "fleet_examples"
COURIER = EXAMPLES / "courier_fleet.toml"
GARAGE = EXAMPLES / "garage_customers.toml"
AS_OF = dt.date(2026, 12, 7)

HEADER = """\
schema = 1
[fleet]
name = "Test fleet"
distance_unit = "km"
near_limit_distance = 5000
near_limit_days = 60

[engines.belt]
fuel = "petrol"
drive = "belt"
interference = "interference"
interval_distance = 100000
interval_months = 60
severe_interval_distance = 80000
severe_interval_months = 48
labour_hours = 3.0
parts = ["belt kit"]
parts_cost = 200.0
failure_cost = 3000.0
"""


def fleet_text(body: str, header: str = HEADER) -> str:
    """A fleet file: the standard header (one belt profile) plus `body`."""
    return header + "\n" + textwrap.dedent(body)


def make_fleet(body: str, header: str = HEADER) -> Fleet:
    return parse_fleet_text(fleet_text(body, header), "test.toml")


@pytest.fixture
def courier_copy(tmp_path: Path) -> Path:
    target = tmp_path / "courier_fleet.toml"
    target.write_text(COURIER.read_text(encoding="utf-8"), encoding="utf-8")
    return target


@pytest.fixture(autouse=True)
def _plain_environment(monkeypatch: pytest.MonkeyPatch,
                       tmp_path_factory: pytest.TempPathFactory) -> None:
    """Every test starts from the same terminal environment, whatever the caller's shell says:
    NO_COLOR (which Textual and rich honour) would change snapshots and rendered output. And
    each test has a fleet cache of its own, empty: never the user's, never another test's."""
    monkeypatch.delenv("NO_COLOR", raising=False)
    monkeypatch.setenv("BELTPLAN_CACHE", str(tmp_path_factory.mktemp("fleet-cache")))
