"""The UI's model without a terminal: session, view, columns, form conversion, charts."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest

from planner import edit, export
from planner.errors import PlannerError
from planner.tui.actions import ACTIONS, key_label
from planner.tui.columns import Column, cell, columns_for, fit, natural_widths, row_cells
from planner.tui.forms import FormField, convert
from planner.tui.session import Session, summary_text
from planner.tui.view import TRIAGE, View, arrange, describe
from planner.tui.widgets.charts import life_bar, odometer_plot
from tests.test_tui_support import AS_OF, EXAMPLE, copy_example


@pytest.fixture
def session(tmp_path) -> Session:
    s = Session(copy_example(tmp_path), AS_OF)
    assert s.load()
    return s


def test_apply_undo_and_the_unsaved_marker(session):
    original = session.text
    assert not session.dirty and session.undo() is None
    new = edit.add_reading(session.text, "KL-03", AS_OF, 70500)
    session.apply(new, "reading")
    assert session.dirty and len(session.history) == 1
    assert session.plan_of("KL-03").usage.last_odometer == 70500
    assert session.undo() == "reading"
    assert session.text == original and not session.dirty
    assert session.plan_of("KL-03").usage.last_odometer == 70100


def test_a_rejected_text_changes_nothing(session):
    bad = edit.add_reading(session.text, "KL-03", AS_OF, 1)
    with pytest.raises(PlannerError) as err:
        session.apply(bad, "reading")
    assert any("odometer goes backwards" in p.message for p in err.value.problems)
    assert not session.dirty and not session.history


def test_plans_are_computed_once_per_text_and_date(session):
    first = session.records()
    assert session.records() is first
    session.as_of = AS_OF + dt.timedelta(days=30)
    assert session.records() is not first
    assert session.assessment().as_of == session.as_of


def test_records_are_the_clis(session):
    from planner.risk import assess_fleet_plan

    assert session.records() == export.assessment_records(
        assess_fleet_plan(session.fleet, AS_OF))
    # Courier example on 2026-12-07: overdue KL-01, KL-02 (distance), KL-03, KL-08 (age);
    # no record KL-07; a fact missing KL-05 (severe duty, no severe interval known); near the
    # limit KL-16, KL-10, KL-09 (under 5,000 km left) and KL-15 (age limit 2027-01-14, 38 days
    # <= 60); ok KL-04, KL-06, KL-11, KL-14; chain KL-12 and gear KL-13 on condition.
    assert summary_text(session.records()) == (
        "16 vehicles: 4 overdue, 1 no-record, 1 missing-fact, 4 near-limit, 4 ok, 2 on-condition")


def test_save_refuses_when_the_file_changed(session):
    session.apply(edit.add_reading(session.text, "KL-03", AS_OF, 70500), "reading")
    session.path.write_text(session.path.read_text() + "\n# someone else\n")
    assert session.changed_on_disk()
    with pytest.raises(PlannerError, match="changed on disk"):
        session.save()
    assert session.dirty
    copy = session.save_copy()
    assert copy.name == "fleet.mine.toml" and copy.read_text() == session.text


def test_bad_file_keeps_the_error(tmp_path):
    path = tmp_path / "f.toml"
    path.write_text("schema = 2\n")
    s = Session(path, AS_OF)
    assert not s.load() and s.error is not None and not s.ok and not s.dirty


def test_export_paths(session, tmp_path):
    assert session.default_export_path("markdown").name == "fleet-plan-2026-12-07.md"
    out = session.export(session.records()[:2], "csv", "two.csv")
    assert out == tmp_path / "two.csv" and out.read_bytes().count(b"\r\n") == 3
    with pytest.raises(PlannerError, match="over the fleet file"):
        session.export(session.records(), "json", session.path)
    with pytest.raises(PlannerError, match="unknown export format"):
        session.export_text([], "ics")


def test_default_export_lands_beside_a_fleet_file_opened_by_a_relative_path(tmp_path,
                                                                             monkeypatch):
    # The README opens `fleet_examples/courier_fleet.toml`: the export must not go to
    # fleet_examples/fleet_examples/….
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "f.toml").write_text(Path(EXAMPLE).read_text(encoding="utf-8"))
    monkeypatch.chdir(tmp_path)
    s = Session(Path("sub/f.toml"), AS_OF)
    assert s.load()
    out = s.export(s.records(), "csv", s.default_export_path("csv"))
    assert out.resolve() == (tmp_path / "sub" / "f-plan-2026-12-07.csv").resolve()
    assert out.exists()


# -- the table's view -------------------------------------------------------------------------

RECORDS = [
    {"id": "A", "label": "Van north", "status": "ok", "consequence": "breakdown",
     "days_remaining": 40},
    {"id": "B", "label": "Car", "status": "overdue", "consequence": "engine-damage",
     "days_remaining": None},
    {"id": "C", "label": "van south", "status": "near-limit", "consequence": "unverified",
     "days_remaining": -3},
]


def test_filters_and_search():
    ids = lambda v: [r["id"] for r in arrange(RECORDS, v)]  # noqa: E731
    assert ids(View()) == ["A", "B", "C"]  # triage order is the records' own
    assert ids(View(statuses=frozenset({"ok", "near-limit"}))) == ["A", "C"]
    assert ids(View(consequences=frozenset({"engine-damage"}))) == ["B"]
    assert ids(View(query="VAN")) == ["A", "C"]
    assert ids(View(query="van south")) == ["C"]
    assert ids(View(query="b")) == ["B"]


def test_sorting_puts_unknowns_last_both_ways():
    ids = lambda v: [r["id"] for r in arrange(RECORDS, v)]  # noqa: E731
    assert ids(View(sort="days_remaining")) == ["C", "A", "B"]
    assert ids(View(sort="days_remaining", reverse=True)) == ["A", "C", "B"]
    assert ids(View(sort="status")) == ["B", "C", "A"]  # the engine's status order
    assert ids(View(sort="label")) == ["B", "A", "C"]  # case-insensitive
    assert ids(View(sort=TRIAGE, reverse=True)) == ["C", "B", "A"]
    assert describe(View(sort="label"), {"label": "Label"}) == "all vehicles · by Label ↑"


def test_cells_are_words_and_symbols_and_literal():
    rec = {"id": "[b]X[/b]", "status": "no-record", "consequence": "unverified",
           "life_used": 1.25, "distance_remaining": None}
    assert cell(rec, "id").plain == "[b]X[/b]"
    assert cell(rec, "status").plain == "? no-record"
    assert cell(rec, "consequence").plain == "◇ unverified"
    assert cell(rec, "life_used").plain == "125 %"
    assert cell(rec, "distance_remaining").plain == "–"


def test_risk_columns_appear_only_when_the_records_carry_them():
    table = [("id", "Vehicle"), ("status", "Status"), ("p_fail_horizon", "Risk 90 d")]
    assert [c.field for c in columns_for(table, [{"id": "A", "status": "ok"}])] == [
        "id", "status"]
    with_risk = [{"id": "A", "status": "ok", "p_fail_horizon": 0.0123}]
    cols = columns_for(table, with_risk)
    assert [c.field for c in cols] == ["id", "status", "p_fail_horizon"]
    assert row_cells(with_risk[0], cols)[2].plain == "1.2 %"


def test_fit_drops_the_least_needed_columns_first():
    cols = [Column(f, f) for f in ("id", "label", "status", "consequence", "due_date",
                                   "drive", "expected_loss")]
    widths = {c.field: 10 for c in cols}
    shown, hidden = fit(cols, widths, 60)
    assert [c.field for c in hidden] == ["expected_loss", "drive"]
    assert [c.field for c in shown] == ["id", "label", "status", "consequence", "due_date"]
    assert natural_widths([Column("id", "Vehicle")], [{"id": cell({"id": "KL-100"}, "id")}]) \
        == {"id": 7}


# -- forms ------------------------------------------------------------------------------------

@pytest.mark.parametrize("kind, raw, value", [
    ("date", "2026-12-07", dt.date(2026, 12, 7)),
    ("distance", "230,000", 230000), ("distance", "230 000.5", 230000.5),
    ("distance", "230_000", 230000), ("number", "3.5", 3.5), ("months", "60", 60),
    ("list", "belt kit, pump,", ["belt kit", "pump"]), ("text", "  x  ", "x"),
    ("text", "   ", None),
])
def test_typed_text_becomes_model_values(kind, raw, value):
    assert convert(FormField("f", "f", kind), raw) == value


@pytest.mark.parametrize("kind, raw, words", [
    ("date", "07/12/2026", "YYYY-MM-DD"), ("distance", "lots", "not a number"),
    ("months", "6.5", "whole number"), ("text", "", "required"),
])
def test_bad_typed_text_says_what_to_write(kind, raw, words):
    with pytest.raises(ValueError, match=words):
        convert(FormField("f", "f", kind, required=True), raw)


# -- charts and keys --------------------------------------------------------------------------

def test_life_bar():
    assert life_bar(0.5, width=10).plain == "█████░░░░░  50 % used"
    assert life_bar(1.44, width=10).plain == "██████████▶ 144 % used (past the limit)"
    assert "no interval" in life_bar(None).plain


def test_odometer_plot_fits_its_width_and_marks_the_limit():
    points = [(dt.date(2024, 1, 1), 0.0), (dt.date(2025, 1, 1), 40000.0),
              (dt.date(2026, 1, 1), 80000.0)]
    plot = odometer_plot(points, dt.date(2026, 12, 1), 115000.0, 100000.0, "km",
                         total_width=40)
    lines = plot.plain.splitlines()
    assert max(len(line) for line in lines) <= 40
    assert plot.plain.count("●") == 3 + 1 and "○" in plot.plain and "┄" in plot.plain  # + key
    assert "limit 100,000 km" in plot.plain
    assert "off the chart" in odometer_plot(points, dt.date(2026, 12, 1), 85000.0, 400000.0,
                                            "km").plain


def test_key_labels_and_every_action_is_documented():
    assert key_label("u,ctrl+z") == "u / ctrl+z" and key_label("question_mark") == "?"
    for action in ACTIONS:
        assert action.help and action.title and action.scopes
    assert EXAMPLE.exists()
