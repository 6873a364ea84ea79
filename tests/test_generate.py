"""The invented-fleet generator used by the benchmarks: valid, seeded, realistic enough."""

from __future__ import annotations

from collections import Counter

from planner.fileio import parse_fleet_text
from planner.generate import generate_fleet_text
from planner.risk import assess_fleet_plan
from tests.conftest import AS_OF


def test_generated_fleets_are_valid_and_cover_every_status():
    text = generate_fleet_text(400, seed=3)
    fleet = parse_fleet_text(text, "gen.toml")  # the normal loader is the judge of validity
    assert len(fleet.vehicles) == 400
    statuses = Counter(p.status.value for p in assess_fleet_plan(fleet, AS_OF).plans)
    assert set(statuses) == {"overdue", "no-record", "missing-fact", "near-limit", "ok",
                               "on-condition"}
    jobs = [j for v in fleet.vehicles for j in v.belt_jobs]
    assert any(j.reason.value == "failed" for j in jobs)


def test_same_seed_same_file_other_seed_other_file():
    assert generate_fleet_text(50, seed=9) == generate_fleet_text(50, seed=9)
    assert generate_fleet_text(50, seed=9) != generate_fleet_text(50, seed=10)
