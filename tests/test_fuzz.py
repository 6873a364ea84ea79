"""Fuzzing the loader: whatever the bytes, the only way out is a fleet or a `PlannerError`.

Generated inputs, from the least to the most structured: arbitrary bytes and text; arbitrary TOML
documents (random tables written with tomli_w, the reference writer, keys drawn partly from the
fleet file's own vocabulary); the shipped courier example with random edits; and valid fleets
built by a strategy that follows the README's rules, which must survive load -> save -> load
unchanged. Accepted input must mean what the file says: a value is never converted to another
type on the way in. Example counts are bounded so the suite stays fast.
"""

from __future__ import annotations

import datetime as dt
import tempfile
import tomllib
from enum import Enum
from pathlib import Path
from typing import Any

import tomli_w
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from planner import edit
from planner.errors import PlannerError
from planner.fileio import load_fleet, parse_fleet_text, save_fleet_text
from planner.fleet import Fleet, Reading
from planner.locate import locate
from tests.conftest import COURIER

FAST = settings(max_examples=200, deadline=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
COURIER_TEXT = COURIER.read_text(encoding="utf-8")
SCRATCH = Path(tempfile.mkdtemp(prefix="beltplan-fuzz-"))


def planner_outcome(text: str) -> Fleet | None:
    """Parse; a PlannerError must render (it is what the user sees), anything else escapes."""
    try:
        return parse_fleet_text(text, "fuzz.toml")
    except PlannerError as err:
        assert err.render()
        return None


# -- "same values": what was accepted is what the file said ----------------------------------

def assert_same(raw: Any, model: Any, where: str = "") -> None:
    """`model` (a model_dump) holds exactly the TOML values of `raw`, types included.

    TOML types as tomllib gives them (the standard library docs, conversion table); the only
    widening allowed is an integer into a number field, e.g. odometer = 12 read as 12.0.
    """
    if isinstance(raw, dict):
        assert isinstance(model, dict), where
        for key, value in raw.items():
            assert key in model, f"{where}.{key} dropped"
            assert_same(value, model[key], f"{where}.{key}")
    elif isinstance(raw, list):
        assert isinstance(model, list) and len(model) == len(raw), where
        for k, (a, b) in enumerate(zip(raw, model, strict=True)):
            assert_same(a, b, f"{where}[{k}]")
    elif isinstance(raw, bool):
        assert model is raw, where
    elif isinstance(raw, int):
        assert type(model) in (int, float) and model == raw, (where, raw, model)
    elif isinstance(raw, float):
        assert type(model) is float and model == raw, (where, raw, model)
    elif isinstance(raw, str):
        assert isinstance(model, str) and str(model.value if isinstance(model, Enum)
                                              else model) == raw, (where, raw, model)
    else:  # dates: exactly a date, not a date-time
        assert type(model) is type(raw) and model == raw, (where, raw, model)


def assert_accepted_as_written(text: str, fleet: Fleet) -> None:
    assert_same(tomllib.loads(text), fleet.model_dump(by_alias=True, exclude_unset=True))


# -- arbitrary input --------------------------------------------------------------------------

@FAST
@given(st.binary(max_size=2000))
def test_arbitrary_bytes_give_a_fleet_or_a_planner_error(data):
    path = SCRATCH / "bytes.toml"
    path.write_bytes(data)
    try:
        load_fleet(path)
    except PlannerError as err:
        assert err.render()


@FAST
@given(st.text(max_size=500))
def test_arbitrary_text(text):
    fleet = planner_outcome(text)
    if fleet is not None:
        assert_accepted_as_written(text, fleet)


FLEET_WORDS = ["schema", "fleet", "engines", "vehicles", "risk", "workshop", "name",
               "distance_unit", "id", "engine", "drive", "in_service", "in_service_odometer",
               "readings", "belt_jobs", "date", "odometer", "reason", "interval_distance",
               "interval_months", "labour_hours", "parts", "contact", "unavailable", "start",
               "end", "closed", "weekdays", "bays", "shape", "first_registered", "label", ""]
SCALARS = st.one_of(
    st.booleans(), st.integers(-2**63, 2**63 - 1), st.floats(), st.text(max_size=8),
    st.sampled_from(["belt", "chain", "km", "mi", "scheduled", "mon", "severe", "1", "2024-01-01"]),
    st.dates(), st.datetimes(), st.times(), st.just(0), st.just(1), st.just(120000),
)
KEYS = st.sampled_from(FLEET_WORDS) | st.text(max_size=6)
DOCUMENTS = st.dictionaries(KEYS, st.recursive(
    SCALARS, lambda inner: st.lists(inner, max_size=4) | st.dictionaries(KEYS, inner, max_size=5),
    max_leaves=25), max_size=6)


@FAST
@given(DOCUMENTS)
def test_arbitrary_toml_documents(doc):
    text = tomli_w.dumps(doc)
    fleet = planner_outcome(text)
    if fleet is not None:
        assert_accepted_as_written(text, fleet)


EDITS = st.lists(st.tuples(
    st.floats(0, 1), st.integers(0, 40),
    st.sampled_from(['"', "'", "[", "]", "{", "}", "=", "\n", ",", ".", "#", "\\", "-", "0",
                     "x", "nan", "true", "9999", "1e9", "T10:00:00", "[[vehicles]]\n",
                     "[vehicles.contact]\n", '"2024-01-01"', "\ufeff", "\u00a0", ""])),
    min_size=1, max_size=4)


@FAST
@given(EDITS)
def test_the_courier_example_with_random_edits(edits):
    """Cut a stretch and insert a token: the files that people's slips produce."""
    text = COURIER_TEXT
    for where, cut, token in edits:
        i = int(where * len(text))
        text = text[:i] + token + text[i + cut:]
    fleet = planner_outcome(text)
    if fleet is not None:
        assert_accepted_as_written(text, fleet)


# -- valid fleets -----------------------------------------------------------------------------

# Any character but surrogates (not encodable) and control characters (refused on load), with
# tab and line feed, which are allowed.
CHARS = st.characters(blacklist_categories=("Cs", "Cc")) | st.sampled_from("\t\n")
TEXT = st.text(CHARS, max_size=30)
# An id or a profile's name is one line of visible text: no control or format character, no
# line or paragraph separator, no tab or line end (planner.fleet._one_line).
IDS = st.text(st.characters(blacklist_categories=("Cs", "Cc", "Cf", "Zl", "Zp")), min_size=1,
              max_size=12)
DAYS = st.dates(dt.date(1990, 1, 1), dt.date(2026, 12, 31))
DISTANCE = st.integers(0, 30_000) | st.floats(0, 30_000, allow_nan=False)


@st.composite
def drive_fields(draw, need_drive: bool) -> dict[str, Any]:
    out: dict[str, Any] = {}
    drive = draw(st.sampled_from(["belt", "wet-belt", "chain", "gear"]))
    if need_drive or draw(st.booleans()):
        out["drive"] = drive
    if out.get("drive") in ("belt", "wet-belt"):
        out["interval_distance"] = draw(st.integers(1, 1_000_000)
                                        | st.floats(1, 1_000_000, allow_nan=False))
        out["interval_months"] = draw(st.integers(1, 360))
    optional = {
        "fuel": st.sampled_from(["petrol", "diesel", "other"]),
        "interference": st.sampled_from(["interference", "non-interference", "unknown"]),
        "labour_hours": st.floats(0.1, 200, allow_nan=False),
        "parts": st.lists(st.text(CHARS, min_size=1, max_size=10), max_size=3),
        "parts_cost": st.integers(0, 10_000),
        "failure_cost": st.floats(0, 1e6, allow_nan=False),
    }
    for key, strategy in optional.items():
        if draw(st.booleans()):
            out[key] = draw(strategy)
    return out


@st.composite
def vehicles(draw, vid: str, profiles: list[str]) -> dict[str, Any]:
    v: dict[str, Any] = {"id": vid}
    if profiles and draw(st.booleans()):
        v["engine"] = draw(st.sampled_from(profiles))
        v.update(draw(drive_fields(need_drive=False)))
    else:
        v.update(draw(drive_fields(need_drive=True)))
    start = draw(DAYS)
    v["in_service"] = start
    odo = draw(st.integers(0, 100_000))
    if odo or draw(st.booleans()):
        v["in_service_odometer"] = odo
    # One timeline of dated odometers, each split into a reading or a belt job: odometers only
    # go forward (README rules), whatever the mix.
    steps = draw(st.lists(st.tuples(st.integers(0, 400), DISTANCE, st.booleans()), max_size=6))
    day, value, readings, jobs = start, odo, [], []
    for gap, distance, is_job in steps:
        day += dt.timedelta(days=gap)
        value += distance
        if day > dt.date(2100, 12, 31):
            break
        if is_job:
            jobs.append({"date": day, "odometer": value,
                         "reason": draw(st.sampled_from(["scheduled", "failed", "precaution"])),
                         "work": draw(TEXT)})
        else:
            readings.append({"date": day, "odometer": value})
    if readings:
        v["readings"] = readings
    if jobs:
        v["belt_jobs"] = jobs
    if draw(st.booleans()):
        v["label"] = draw(TEXT)
    if draw(st.booleans()):
        v["duty"] = draw(st.sampled_from(["normal", "severe"]))
    if draw(st.booleans()):
        v["belt_history"] = draw(st.sampled_from(["known", "unknown"]))
    if draw(st.booleans()):
        v["first_registered"] = start - dt.timedelta(days=draw(st.integers(0, 3000)))
    if draw(st.booleans()):
        a = draw(st.dates(dt.date(2026, 1, 1), dt.date(2028, 12, 31)))
        v["unavailable"] = [{"start": a, "end": a + dt.timedelta(days=draw(st.integers(0, 30))),
                             "reason": draw(TEXT)}]
    if draw(st.booleans()):
        v["contact"] = {"name": draw(TEXT), "phone": draw(TEXT)}
    return v


@st.composite
def fleets(draw) -> dict[str, Any]:
    doc: dict[str, Any] = {"schema": 1}
    if draw(st.booleans()):
        doc["fleet"] = {"name": draw(TEXT), "distance_unit": draw(st.sampled_from(["km", "mi"])),
                        "near_limit_days": draw(st.integers(0, 3650))}
    if draw(st.booleans()):
        doc["risk"] = {"shape": draw(st.floats(0.5, 20)),
                       "share_failed_at_interval": draw(st.floats(0.001, 0.5)),
                       "use_fleet_fit": draw(st.booleans())}
    if draw(st.booleans()):
        doc["workshop"] = {"bays": draw(st.integers(1, 100)),
                           "weekdays": draw(st.lists(st.sampled_from(
                               ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]),
                               min_size=1, max_size=7, unique=True)),
                           "closed": draw(st.lists(DAYS, max_size=3))}
    profiles = draw(st.lists(IDS.filter(lambda s: len(s) <= 64), max_size=3, unique=True))
    if profiles:
        doc["engines"] = {p: dict(draw(drive_fields(need_drive=True)),
                                  description=draw(TEXT)) for p in profiles}
    ids = draw(st.lists(IDS, max_size=5, unique=True))
    if ids:
        doc["vehicles"] = [draw(vehicles(vid, profiles)) for vid in ids]
    return doc


def _toml(fleet: Fleet) -> str:
    """A Fleet back to TOML with tomli_w: every value, with the enum words as text."""
    def plain(value: Any) -> Any:
        if isinstance(value, dict):
            return {k: plain(v) for k, v in value.items()}
        if isinstance(value, list):
            return [plain(v) for v in value]
        return value.value if isinstance(value, Enum) else value
    return tomli_w.dumps(plain(fleet.model_dump(by_alias=True, exclude_none=True)))


@FAST
@given(fleets())
def test_valid_generated_fleets_load_as_written(doc):
    text = tomli_w.dumps(doc)
    fleet = parse_fleet_text(text, "gen.toml")
    assert_accepted_as_written(text, fleet)
    assert len(fleet.vehicles) == len(doc.get("vehicles", []))


@FAST
@given(fleets())
def test_load_save_load_keeps_the_fleet(doc):
    path = SCRATCH / "roundtrip.toml"
    path.write_text(tomli_w.dumps(doc), encoding="utf-8")
    loaded = load_fleet(path)
    # Rewritten whole from the model (every default spelt out), saved, read again.
    saved = save_fleet_text(loaded, _toml(loaded.fleet))
    again = load_fleet(path)
    assert again.fleet == loaded.fleet == saved.fleet
    assert again.digest == saved.digest
    assert (path.with_name(path.name + ".bak")).read_text(encoding="utf-8") == loaded.text


@settings(FAST, max_examples=80)  # tomlkit is slow: fewer, larger examples
@given(fleets().filter(lambda d: d.get("vehicles")), st.data())
def test_edits_through_the_text_editor_survive_save_and_load(doc, data):
    """planner.edit (tomlkit) changes exactly what was asked, and the save keeps it."""
    path = SCRATCH / "edited.toml"
    text = tomli_w.dumps(doc)  # small vehicles come out inline: vehicles = [{ … }]
    path.write_text(text, encoding="utf-8")
    loaded = load_fleet(path)
    index = data.draw(st.integers(0, len(loaded.fleet.vehicles) - 1))
    vehicle = loaded.fleet.vehicles[index]
    events = [(r.date, r.odometer) for r in vehicle.readings] + \
        [(j.date, j.odometer) for j in vehicle.belt_jobs] + \
        [(vehicle.in_service, vehicle.in_service_odometer)]
    last_day = max(d for d, _ in events)
    assume(last_day < dt.date(2100, 1, 1))
    day = last_day + dt.timedelta(days=data.draw(st.integers(1, 300)))
    odometer = max(o for _, o in events) + data.draw(st.integers(0, 20_000))
    label = data.draw(TEXT)
    text = edit.add_reading(loaded.text, vehicle.id, day, odometer)
    text = edit.edit_vehicle(text, vehicle.id, {"label": label})
    save_fleet_text(loaded, text)

    again = load_fleet(path).fleet
    changed = vehicle.model_copy(update={
        "readings": [*vehicle.readings, Reading(date=day, odometer=odometer)], "label": label})
    expected = [changed if k == index else v for k, v in enumerate(loaded.fleet.vehicles)]
    assert again.vehicles == expected
    assert again.model_copy(update={"vehicles": []}) == \
        loaded.fleet.model_copy(update={"vehicles": []})


def leaves(value: Any, path: tuple = ()) -> list[tuple]:
    if isinstance(value, dict):
        return [leaf for k, v in value.items() for leaf in leaves(v, (*path, k))]
    if isinstance(value, list) and value and isinstance(value[0], dict):
        return [leaf for k, v in enumerate(value) for leaf in leaves(v, (*path, k))]
    return [path]


SWAPS = SCALARS | st.sampled_from(["168500", "true", "12", "2024-01-01", 12.0, 1.5, True,
                                   False, 20240101, dt.datetime(2024, 1, 1), dt.time(8, 0)])


@FAST
@given(fleets(), st.data())
def test_a_value_of_another_type_is_refused_or_kept_as_written(doc, data):
    """Swap one value for a value of any type: refused, or accepted with exactly that value."""
    where = data.draw(st.sampled_from(leaves(doc)))
    target = doc
    for part in where[:-1]:
        target = target[part]
    target[where[-1]] = data.draw(SWAPS)
    text = tomli_w.dumps(doc)
    fleet = planner_outcome(text)
    if fleet is not None:
        assert_accepted_as_written(text, fleet)


# -- the locator against the text -------------------------------------------------------------

@FAST
@given(fleets().filter(lambda d: d.get("vehicles")), st.data())
def test_a_wrong_value_is_reported_on_its_own_line(doc, data):
    """Break one value of a valid fleet; the problem names the line that holds it."""
    index = data.draw(st.integers(0, len(doc["vehicles"]) - 1))
    vehicle = doc["vehicles"][index]
    choices = [("in_service",), ("id",)]
    choices += [("readings", k, "odometer") for k in range(len(vehicle.get("readings", [])))]
    choices += [("belt_jobs", k, "date") for k in range(len(vehicle.get("belt_jobs", [])))]
    where = data.draw(st.sampled_from(choices))
    bad = {"in_service": 20240101, "id": 7, "odometer": "168500", "date": "2024-01-01"}
    target = vehicle
    for part in where[:-1]:
        target = target[part]
    target[where[-1]] = bad[where[-1]]
    text = tomli_w.dumps(doc)
    try:
        parse_fleet_text(text, "bad.toml")
    except PlannerError as err:
        path = ("vehicles", index, *where)
        hits = [p for p in err.problems if p.path == path]
        assert hits, [p.render() for p in err.problems]
        line = text.split("\n")[hits[0].line - 1]
        assert f"{where[-1]} = " in line, (line, hits[0].render())
        assert tomli_w.dumps({"x": bad[where[-1]]})[4:].strip() in line
        assert "wrong type" in hits[0].message and hits[0].hint
    else:
        raise AssertionError("a wrong type was accepted")


@FAST
@given(fleets())
def test_every_key_is_located_on_a_line_that_names_it(doc):
    text = tomli_w.dumps(doc)
    found = locate(text)
    lines = text.split("\n")

    def walk(value: Any, path: tuple) -> None:
        if isinstance(value, dict):
            for key, item in value.items():
                here = (*path, key)
                assert here in found, here
                line = lines[found[here][0] - 1]
                written = tomli_w.dumps({key: 0}).removesuffix(" = 0\n")  # as TOML writes it
                assert written in line, (here, line)
                walk(item, here)
        elif isinstance(value, list):
            for k, item in enumerate(value):
                walk(item, (*path, k))

    walk(doc, ())


def test_the_generated_fleets_are_varied():
    """The strategy reaches what the properties are about (a guard against a weak strategy)."""
    seen = {"profiles": 0, "jobs": 0, "readings": 0, "floats": 0}

    @settings(max_examples=100, deadline=None, database=None)
    @given(fleets())
    def count(doc):
        seen["profiles"] += bool(doc.get("engines"))
        for v in doc.get("vehicles", []):
            seen["jobs"] += bool(v.get("belt_jobs"))
            seen["readings"] += bool(v.get("readings"))
            seen["floats"] += any(isinstance(r["odometer"], float)
                                  for r in v.get("readings", []))

    count()
    assert all(n > 0 for n in seen.values()), seen
