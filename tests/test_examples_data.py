"""The shipped examples, the template and the generated fleets are plainly invented.

Rules kept here (see DEVELOPERS.md, "Conventions"):
* phone numbers only from the ranges set aside for drama and fiction: 01632 960000-960999 and
  07700 900000-900999 [source: the UK regulator's list of numbers for TV, radio and film; from
  memory];
* every engine profile's description says "(invented)", since it reaches the screens and exports;
* every interval is off-round: no distance a multiple of 5,000 (km or mi) and no age a whole
  number of years (a multiple of 12 months), so none can equal a maker's published figure,
  which is nearly always round [common practice, no source];
* engine names follow no maker's scheme: not two letters and the displacement in decilitres
  (`QV16` for 1.6 litres), one maker's pattern [from memory].
"""

from __future__ import annotations

import csv
import io
import re
import tomllib
from pathlib import Path

import pytest

from planner.generate import generate_fleet_text

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "fleet_examples"
FLEET_FILES = [*sorted(EXAMPLES.glob("*.toml")), ROOT / "planner" / "templates" / "fleet.toml",
               ROOT / "tests" / "data" / "week" / "small.toml"]
DRAMA = (re.compile(r"01632960\d{3}"), re.compile(r"07700900\d{3}"))
MAKER_PATTERN = re.compile(r"[A-Za-z]{2}\d{2}")  # letters, then litres x 10
INTERVAL_KEYS = ("interval_distance", "interval_months", "severe_interval_distance",
                 "severe_interval_months")


def load(path: Path) -> dict:
    return tomllib.loads(path.read_text(encoding="utf-8"))


def in_drama_range(phone: str) -> bool:
    digits = re.sub(r"\D", "", phone)
    return any(p.fullmatch(digits) for p in DRAMA)


def intervals(data: dict) -> list[tuple[str, str, int]]:
    """(where, key, value) of every interval in the profiles and on the vehicles."""
    tables = [(f"engines.{k}", t) for k, t in data.get("engines", {}).items()]
    tables += [(f"vehicle {v.get('id')}", v) for v in data.get("vehicles", [])]
    return [(where, key, t[key]) for where, t in tables for key in INTERVAL_KEYS if key in t]


def off_round(key: str, value: int) -> bool:
    return value % 12 != 0 if key.endswith("months") else value % 5000 != 0


def test_the_rules_themselves():
    # The drama ranges' ends, and numbers just outside them.
    assert in_drama_range("01632 960000") and in_drama_range("01632 960999")
    assert in_drama_range("07700 900000") and in_drama_range("+07700-900-999")
    assert not in_drama_range("01632 961000") and not in_drama_range("07700 901000")
    assert not in_drama_range("0170 000 0142")
    # 120,000 km and 72 months are round; 117,300 km and 73 months are not.
    assert not off_round("interval_distance", 120000) and off_round("interval_distance", 117300)
    assert not off_round("interval_months", 72) and off_round("interval_months", 73)
    assert MAKER_PATTERN.fullmatch("QV16") and not MAKER_PATTERN.fullmatch("tesk")


@pytest.mark.parametrize("path", FLEET_FILES, ids=lambda p: p.name)
def test_every_phone_number_is_in_a_drama_range(path):
    phones = [v["contact"]["phone"] for v in load(path).get("vehicles", [])
              if "phone" in v.get("contact", {})]
    for phone in phones:
        assert in_drama_range(phone), (path.name, phone)


@pytest.mark.parametrize("path", FLEET_FILES, ids=lambda p: p.name)
def test_every_engine_profile_says_it_is_invented(path):
    for pid, profile in load(path).get("engines", {}).items():
        assert "(invented)" in profile.get("description", ""), (path.name, pid)
        assert not MAKER_PATTERN.fullmatch(pid), (path.name, pid)
        first_word = profile.get("description", "").split()[0]
        assert not MAKER_PATTERN.fullmatch(first_word), (path.name, pid, first_word)


@pytest.mark.parametrize("path", [p for p in FLEET_FILES if p.parent != ROOT / "tests" / "data"
                                  / "week"], ids=lambda p: p.name)
def test_every_interval_is_off_round(path):
    found = intervals(load(path))
    assert found  # each file teaches at least one interval
    for where, key, value in found:
        assert off_round(key, value), (path.name, where, key, value)


def test_the_spreadsheet_example_is_off_round_and_names_no_maker_code():
    rows = list(csv.DictReader(io.StringIO(
        (EXAMPLES / "spreadsheet_export.csv").read_text(encoding="utf-8"))))
    assert len(rows) == 30
    for row in rows:
        km = row["Belt interval (km)"].replace(",", "").removesuffix(" km")
        months = row["Belt interval (months)"]
        if km:
            assert off_round("interval_distance", int(km)), row["Fleet no"]
            assert off_round("interval_months", int(months)), row["Fleet no"]
        assert not any(MAKER_PATTERN.fullmatch(w) for w in row["Description"].split()), \
            row["Description"]


def test_generated_fleets_are_invented_too():
    data = tomllib.loads(generate_fleet_text(5, seed=1))
    for pid, profile in data["engines"].items():
        assert "(invented)" in profile["description"], pid
    for where, key, value in intervals(data):
        assert off_round(key, value), (where, key, value)


@pytest.mark.parametrize("path", [*FLEET_FILES, *sorted(EXAMPLES.glob("*.csv"))],
                         ids=lambda p: p.name)
def test_no_name_found_to_be_real_comes_back(path):
    # Names a review found in earlier examples that belong to real firms, products or places.
    text = path.read_text(encoding="utf-8").lower()
    for word in ("millbrook", "northgate", "nikko", "corvan"):
        assert word not in text, (path.name, word)


# -- the cases the examples teach survive the renaming -------------------------------------------

def test_the_courier_example_still_teaches_every_case():
    import datetime as dt

    from planner.fileio import load_fleet
    from planner.plan import plan_fleet

    data = load(EXAMPLES / "courier_fleet.toml")
    engines, vehicles = data["engines"], {v["id"]: v for v in data["vehicles"]}
    drives = {e["drive"] for e in engines.values()}
    assert drives == {"belt", "wet-belt", "chain", "gear"}
    severe = [v for v in vehicles.values() if v.get("duty") == "severe"]
    with_interval = [v for v in severe if "severe_interval_distance" in engines[v["engine"]]]
    assert with_interval and len(with_interval) < len(severe)  # severe with and without one
    assert any(v.get("belt_history") == "unknown" for v in vehicles.values())
    assert any(j["reason"] == "failed" for v in vehicles.values() for j in v.get("belt_jobs", []))
    # Statuses on the planning date the example is written for: the designed ones, worked out
    # by hand from the intervals (e.g. KL-03: 2020-09-14 + 73 months = 2026-10-14, before
    # 2026-12-07: overdue by age; KL-08: 2021-10-06 + 62 months = 2026-12-06: overdue by a day;
    # KL-15: 2020-12-14 + 73 months = 2027-01-14, 38 days ahead, within 60: near-limit).
    plans = {p.vehicle.id: p for p in plan_fleet(load_fleet(EXAMPLES / "courier_fleet.toml")
                                                 .fleet, dt.date(2026, 12, 7))}
    assert plans["KL-03"].status.value == "overdue" and plans["KL-03"].time_due_date == \
        dt.date(2026, 10, 14)
    assert plans["KL-08"].status.value == "overdue" and plans["KL-08"].time_due_date == \
        dt.date(2026, 12, 6)
    assert plans["KL-15"].status.value == "near-limit" and plans["KL-15"].time_due_date == \
        dt.date(2027, 1, 14)
    assert plans["KL-07"].status.value == "no-record"
    assert {p.status.value for p in plans.values()} >= {
        "overdue", "no-record", "near-limit", "ok", "on-condition"}
    assert {p.consequence.value for p in plans.values()} >= {
        "engine-damage", "unverified", "breakdown"}


def test_the_garage_example_still_teaches_every_case():
    data = load(EXAMPLES / "garage_customers.toml")
    assert data["fleet"]["distance_unit"] == "mi"
    vehicles = data["vehicles"]
    assert all("contact" in v for v in vehicles)
    assert any(v.get("unavailable") for v in vehicles)
    taxi = next(v for v in vehicles if "Taxi" in v["label"])
    assert taxi["duty"] == "severe" and "severe_interval_distance" not in \
        data["engines"][taxi["engine"]] and "severe_interval_months" not in \
        data["engines"][taxi["engine"]]
    # Its closing days are its own: none is 25 or 26 December or 1 January, public holidays in
    # most countries [common practice, no source].
    for day in data["workshop"]["closed"]:
        assert (day.month, day.day) not in {(12, 25), (12, 26), (1, 1)}, day
