"""The quick check of an edited text gives exactly what the full parse gives.

The reference is `fileio.parse_fleet_text` on the whole new text (the loader itself): for every
edit, the quick way must give an equal fleet, or the same error. Edits come from the editor
the UI uses (`planner.edit`) and from random changes to the text, including the ones that
could fool a reader of one table alone (a header in a string, an unclosed string or array,
a table of another kind inside a vehicle).
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planner import edit
from planner.errors import PlannerError
from planner.fileio import load_fleet, parse_fleet_text
from planner.generate import generate_fleet_text
from planner.reparse import _quick, reparse_fleet_text

EXAMPLES = Path(__file__).resolve().parents[1] / "fleet_examples"
BASE = generate_fleet_text(12, seed=5)
BASE_FLEET = parse_fleet_text(BASE, "g.toml")


def outcome(fn):
    """A fleet, or the rendered error: what a user would see either way."""
    try:
        return fn()
    except PlannerError as err:
        return ("error", err.render())


def assert_same_as_full(new: str, old: str = BASE, fleet=BASE_FLEET) -> None:
    full = outcome(lambda: parse_fleet_text(new, "g.toml"))
    quick = outcome(lambda: reparse_fleet_text(new, "g.toml", old, fleet))
    assert quick == full


def test_a_reading_in_the_middle_takes_the_quick_way_and_equals_the_full_parse():
    vid = BASE_FLEET.vehicles[6].id
    last = BASE_FLEET.vehicles[6].readings[-1]
    new = edit.add_reading(BASE, vid, last.date + dt.timedelta(days=3), last.odometer + 150)
    quick = _quick(new, BASE, BASE_FLEET)
    assert quick is not None, "the quick way gave up on the commonest edit"
    assert quick == parse_fleet_text(new, "g.toml")
    assert quick.vehicles[6].readings[-1].odometer == last.odometer + 150


def test_edits_of_the_first_and_last_vehicle_and_a_new_one():
    first, last = BASE_FLEET.vehicles[0], BASE_FLEET.vehicles[-1]
    texts = [
        edit.edit_vehicle(BASE, first.id, {"label": "renamed first"}),
        edit.edit_vehicle(BASE, last.id, {"label": "renamed last"}),
        edit.add_vehicle(BASE, {"id": "NEW-1", "engine": first.engine,
                                "in_service": dt.date(2024, 1, 2)}),
        edit.delete_vehicle(BASE, BASE_FLEET.vehicles[5].id),
        edit.delete_vehicle(BASE, last.id),
    ]
    for new in texts:
        assert_same_as_full(new)


def test_an_edit_that_breaks_a_rule_across_vehicles_gives_the_loaders_error():
    """A duplicate id is only seen across vehicles; the error is the full parse's, located."""
    a, b = BASE_FLEET.vehicles[2], BASE_FLEET.vehicles[9]
    new = edit.edit_vehicle(BASE, b.id, {"id": a.id})
    assert_same_as_full(new)
    with pytest.raises(PlannerError) as err:
        reparse_fleet_text(new, "g.toml", BASE, BASE_FLEET)
    assert a.id in err.value.render() and err.value.problems[0].line is not None


def test_a_header_inside_a_multiline_string_makes_it_read_everything():
    """Common practice, no source: TOML (v1.0.0, 'String') lets a multi-line string hold any
    line, also one that looks like a table header."""
    i = BASE.index("[[vehicles]]", BASE.index("[[vehicles]]") + 1)
    old = BASE[:i] + 'notes = """\n[[vehicles]]\nid = "FAKE"\n"""\n' + BASE[i:]
    fleet = parse_fleet_text(old, "g.toml")
    vid = fleet.vehicles[3].id
    new = edit.edit_vehicle(old, vid, {"label": "x"})
    assert _quick(new, old, fleet) is None
    assert_same_as_full(new, old, fleet)


@pytest.mark.parametrize("name", ["courier_fleet.toml", "garage_customers.toml"])
def test_every_vehicle_of_the_examples_edited(name):
    loaded = load_fleet(EXAMPLES / name)
    for v in loaded.fleet.vehicles:
        for new in (edit.edit_vehicle(loaded.text, v.id, {"label": f"{v.id} edited"}),
                    edit.add_reading(loaded.text, v.id, dt.date(2026, 12, 3),
                                     (v.readings[-1].odometer if v.readings else 0) + 10),
                    edit.add_reading(loaded.text, v.id, dt.date(2026, 12, 3), 1)):  # backwards
            assert_same_as_full(new, loaded.text, loaded.fleet)


def test_a_change_that_joins_a_line_to_the_next_header_is_read_whole():
    """Found in review: the changed tables read alone parse, but in the whole text their last
    line runs into the header after them (TOML v1.0.0: a table header stands on its own line)."""
    heads = [i for i in range(len(BASE)) if BASE.startswith("[[vehicles]]", i)]
    for new in (BASE[:heads[5]] + "#" + BASE[heads[5]:],  # a vehicle's header commented out
                BASE[:heads[3] - 2] + BASE[heads[3]:],  # `work = "…"[[vehicles]]`
                BASE[:heads[7] - 1] + BASE[heads[7]:]):  # the line break before a header
        assert_same_as_full(new)
    crlf = BASE.replace("\n", "\r\n")
    crlf_fleet = parse_fleet_text(crlf, "g.toml")
    at = crlf.index("[[vehicles]]", crlf.index("[[vehicles]]") + 1)
    assert_same_as_full(crlf[:at - 4] + crlf[at:], crlf, crlf_fleet)


def test_a_comment_glued_to_a_table_after_the_vehicles_is_read_whole():
    """Found in review: two valid fleets that differ. The comment, with no line break, turns
    `[engines.zz]` into comment text, so its keys belong to the last vehicle."""
    old = BASE + ('\n[[vehicles]]\nid = "LAST"\nengine = "gen-p14"\nin_service = 2024-01-02\n'
                  '\n[engines.zz]\nfuel = "diesel"\ndrive = "chain"\ninterference = "unknown"\n')
    fleet = parse_fleet_text(old, "g.toml")
    at = old.index("[engines.zz]")
    new = old[:at] + "# spare profile " + old[at:]
    assert _quick(new, old, fleet) is None
    assert_same_as_full(new, old, fleet)


@pytest.mark.parametrize("piece", ["#", "x", " ", "", "\t#"])
def test_every_change_at_a_header_equals_the_full_parse(piece):
    """Insert at, and delete up to, the start of every header line."""
    heads = [i for i in range(len(BASE)) if BASE.startswith("[", i) and BASE[i - 1] == "\n"]
    for at in heads:
        assert_same_as_full(BASE[:at] + piece + BASE[at:])
        for cut in (1, 2):
            assert_same_as_full(BASE[:at - cut] + piece + BASE[at:])


FRAGMENTS = ['"""', "'''", '[[vehicles]]\nid = "Q-1"\nengine = "gen-p14"\n'
             'in_service = 2020-01-01\n', "[engines.zz]\n", "[vehicles]\n", "x = [\n", "]\n",
             "}", "#", "\n", 'label = "dup"\n', "odometer = -5\n", "readings = []\n",
             "[[vehicles.belt_jobs]]\n", "[[vehicles.readings]]\n", "= 3\n",
             'notes = """\n[[vehicles]]\n', "[fleet]\n", "schema = 1\n", "\t", "[", "]]",
             '{ date = 2026-01-01, odometer = 5 },\n', "in_service = 2099-01-01\n"]


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.data())
def test_random_changes_inside_the_vehicles_equal_the_full_parse(data):
    text = BASE
    start = text.index("[[vehicles]]")
    for _ in range(data.draw(st.integers(1, 3))):
        at = data.draw(st.integers(start, len(text)))
        if data.draw(st.booleans()):
            piece = data.draw(st.sampled_from(FRAGMENTS) | st.text(max_size=12))
            text = text[:at] + piece + text[at:]
        else:
            cut = data.draw(st.integers(0, 200))
            text = text[:at] + text[at + cut:]
    assert_same_as_full(text)


@settings(max_examples=150, deadline=None)
@given(st.integers(0, 11), st.integers(-400, 400), st.integers(-5000, 50000))
def test_random_readings_equal_the_full_parse(index, days, distance):
    v = BASE_FLEET.vehicles[index]
    last = v.readings[-1] if v.readings else None
    day = (last.date if last else v.in_service) + dt.timedelta(days=days)
    new = edit.add_reading(BASE, v.id, day, (last.odometer if last else 0) + distance)
    assert_same_as_full(new)
