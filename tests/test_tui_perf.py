"""The UI at fleet scale: reading and re-planning in workers, the lazy table, filters at size.

Speed itself is measured by `tests/benchmarks/bench_ui.py` (ratios against a baseline in the same
run), not here; these tests check that the fast paths give the same answers as the plain ones.
"""

from __future__ import annotations

import asyncio
import datetime as dt
import gc
import threading
import weakref
from collections.abc import Callable
from pathlib import Path
from typing import Any

import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st
from rich.text import Text
from textual.app import App, ComposeResult
from textual.widgets import DataTable

from planner import edit, export
from planner.fileio import load_fleet, parse_fleet_text
from planner.generate import generate_fleet_text
from planner.risk import assess_fleet_plan
from planner.tui import app as app_module
from planner.tui import columns as cols
from planner.tui import session as session_module
from planner.tui.background import gc_paused
from planner.tui.look import THEME
from planner.tui.session import Session, plan
from planner.tui.view import TRIAGE, Listing, View, sort_value
from planner.tui.widgets.fleet_table import prepare_rows
from planner.tui.widgets.lazy_table import LazyTable, TableColumn
from tests.test_tui_support import (
    AS_OF,
    EXAMPLE,
    LARGE,
    SMALL,
    copy_example,
    listed_ids,
    make_app,
    opened,
    screen_name,
    sync,
    text_of,
    until,
)

BIG = 3000  # vehicles: enough for the fast paths to matter, quick enough for a test


@pytest.fixture(scope="module")
def big_fleet(tmp_path_factory) -> Path:
    path = tmp_path_factory.mktemp("big") / "fleet_3k.toml"
    path.write_text(generate_fleet_text(BIG, seed=11), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def big_records(big_fleet) -> list[dict[str, Any]]:
    """The engine's own records for the big fleet, in triage order (what the table lists)."""
    return export.assessment_records(assess_fleet_plan(load_fleet(big_fleet).fleet, AS_OF))


class Gate:
    """Holds work the UI does in a worker thread until the test lets it go."""

    def __init__(self) -> None:
        self.armed = True
        self.release = threading.Event()
        self.threads: list[threading.Thread] = []

    def hold(self, real: Callable[..., Any]) -> Callable[..., Any]:
        """`real`, done at once, its result handed back only once the gate is released."""
        def held(*args: Any, **kwargs: Any) -> Any:
            if not self.armed:
                return real(*args, **kwargs)
            self.threads.append(threading.current_thread())
            result = real(*args, **kwargs)
            assert self.release.wait(20), "the test never let the work go"
            return result

        return held


@pytest.fixture
def held_read(monkeypatch) -> Gate:
    gate = Gate()
    monkeypatch.setattr(Session, "read", gate.hold(Session.read))
    return gate


@pytest.fixture
def held_plan(monkeypatch) -> Gate:
    gate = Gate()
    gate.armed = False  # the first read plans at once; the test arms it for the re-plan
    monkeypatch.setattr(session_module, "plan", gate.hold(session_module.plan))
    monkeypatch.setattr(app_module, "QUICK_PLAN", 0.0)  # re-plan in a worker whatever the size
    return gate


def engine_ids(path: Path) -> list[str]:
    return [p.id for p in assess_fleet_plan(load_fleet(path).fleet, AS_OF).plans]


# -- reading in a worker ----------------------------------------------------------------------

@sync
async def test_a_good_file_is_read_in_a_worker_behind_a_live_loading_view(held_read):
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await until(pilot, lambda: held_read.threads, what="the read to start")
        assert held_read.threads[0] is not threading.main_thread()
        assert screen_name(app) == "LoadingScreen"
        assert "Reading" in text_of(app.screen.query_one("#loading-what"))
        assert "reading" in text_of(app.screen.query_one("#title-right"))
        # The UI answers while the file is read: help opens and closes, editing keys do not.
        await pilot.press("question_mark")
        await until(pilot, lambda: screen_name(app) == "HelpScreen", what="help")
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "LoadingScreen")
        await pilot.press("r")
        assert screen_name(app) == "LoadingScreen"
        held_read.release.set()
        await until(pilot, lambda: screen_name(app) == "MainScreen", what="the list")
        assert listed_ids(app) == engine_ids(EXAMPLE)
        summary = text_of(app.screen.query_one("#summary"))
        assert "16 vehicles: " in summary and "4 overdue" in summary
        assert "reading" not in text_of(app.screen.query_one("#title-right"))


@sync
async def test_a_bad_file_read_in_the_worker_opens_the_error_view(tmp_path, held_read):
    path = copy_example(tmp_path)
    path.write_text(path.read_text().replace('engine = "plim"', 'engine = "plimm"', 1))
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await until(pilot, lambda: held_read.threads, what="the read to start")
        assert screen_name(app) == "LoadingScreen"
        held_read.release.set()
        await until(pilot, lambda: screen_name(app) == "ErrorScreen", what="the error view")
        words = " ".join(text_of(app.screen.query_one("#e-problems")).split())
        assert "field engine" in words and "did you mean 'plim'?" in words
        assert app.is_running


@sync
async def test_a_bug_while_reading_is_the_error_view_not_a_traceback(monkeypatch):
    def broken(self, with_plan=True):
        raise RuntimeError("boom")

    monkeypatch.setattr(Session, "read", broken)
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await until(pilot, lambda: screen_name(app) == "ErrorScreen", what="the error view")
        title = text_of(app.screen.query_one("#e-title"))
        assert "this is a bug" in title and "RuntimeError: boom" in title
        assert app.is_running
        await pilot.press("q")
        await until(pilot, lambda: not app.is_running, what="quit")


@sync
async def test_a_newer_read_wins_over_an_older_one(tmp_path, held_read):
    """Reload while a read is held: the older result is dropped, the newer one shown."""
    path = copy_example(tmp_path)
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await until(pilot, lambda: held_read.threads, what="the first read")
        path.write_text(path.read_text().replace('name = "Pellory Lane Couriers"',
                                                 'name = "Pellory Lane Couriers Ltd"'))
        await pilot.press("ctrl+r")
        await until(pilot, lambda: len(held_read.threads) == 2, what="the second read")
        held_read.release.set()
        await until(pilot, lambda: screen_name(app) == "MainScreen", what="the list")
        await until(pilot, lambda: not app.reading)
        assert app.session.name == "Pellory Lane Couriers Ltd"  # the older read said "Couriers"


@sync
async def test_quitting_while_a_big_read_runs_does_not_wait_for_it(held_read):
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await until(pilot, lambda: held_read.threads, what="the read to start")
        await pilot.press("q")
        await until(pilot, lambda: not app.is_running, what="quit")
    assert held_read.threads[0].daemon and held_read.threads[0].is_alive()
    held_read.release.set()


# -- the garbage collector while reading and planning -----------------------------------------

def test_reads_plans_and_cells_hold_no_reference_cycles(big_fleet):
    """`gc_paused` freezes them out of the cyclic collector: refcounting alone must free them."""
    gc.collect()
    gc.disable()
    try:
        reading = Session(big_fleet, AS_OF).read()
        assert reading.planned is not None and reading.loaded is not None
        rows = prepare_rows(reading.planned.records, reading.planned.columns())
        later = plan(reading.loaded.fleet, AS_OF + dt.timedelta(days=30))
        again = prepare_rows(later.records, later.columns(), rows)
        for rec in later.records[:60]:  # the rows a screen draws: cells built, some kept
            rows.row(rec["id"])
            again.row(rec["id"])
        del reading, rows, later, again
        assert gc.collect() == 0  # nothing unreachable was left for the cyclic collector
    finally:
        gc.enable()


def test_gc_paused_nests_across_threads_and_restores_the_collector():
    assert gc.isenabled()
    inner = threading.Event()
    seen: list[bool] = []

    def other() -> None:
        with gc_paused():
            inner.wait(5)
            seen.append(gc.isenabled())

    thread = threading.Thread(target=other)
    try:
        with gc_paused():
            thread.start()
            assert not gc.isenabled()
        assert not gc.isenabled()  # the other thread's pause is still open
        inner.set()
        thread.join(5)
        assert seen == [False] and gc.isenabled() and gc.get_freeze_count() > 0
    finally:
        gc.unfreeze()


def test_a_read_first_reclaims_the_cycles_an_earlier_freeze_kept():
    class Node:
        pass

    node = Node()
    node.me = node  # a cycle: only the cyclic collector frees it
    gone = weakref.ref(node)
    try:
        gc.freeze()
        del node
        gc.collect()
        assert gone() is not None  # frozen: out of the collector's sight
        with gc_paused():
            pass
        assert gone() is not None  # a re-plan's pause does not collect
        with gc_paused(reclaim=True):
            pass
        assert gone() is None
    finally:
        gc.unfreeze()


# -- re-planning in a worker ------------------------------------------------------------------

@sync
async def test_replanning_after_an_edit_runs_in_a_worker_and_the_ui_stays_live(tmp_path,
                                                                               held_plan):
    path = copy_example(tmp_path)
    app = make_app(path)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        table = app.main_screen().table
        before = next(r for r in table.records if r["id"] == "KL-03")
        held_plan.armed = True
        text = edit.add_reading(app.session.text, "KL-03", AS_OF, 74000)
        app.apply_edit(text, "Reading added to KL-03")
        await until(pilot, lambda: held_plan.threads, what="the re-plan to start")
        assert held_plan.threads[0] is not threading.main_thread()
        assert app.planning and "re-planning" in text_of(app.screen.query_one("#title-right"))
        assert "1 unsaved change" in text_of(app.screen.query_one("#title-right"))
        assert next(r for r in table.records if r["id"] == "KL-03") == before  # last plan kept
        await pilot.press("down")  # the list still answers
        assert table.cursor_row == 1
        on = table.current_id
        # A second edit while the first plan is held: only the newest plan is kept.
        text = edit.add_reading(app.session.text, "KL-03", AS_OF + dt.timedelta(days=1), 74100)
        app.apply_edit(text, "Reading added to KL-03")
        await until(pilot, lambda: len(held_plan.threads) == 2, what="the second re-plan")
        held_plan.release.set()
        await until(pilot, lambda: not app.planning, what="the re-plan")
        expected = export.assessment_records(assess_fleet_plan(app.session.fleet, AS_OF))
        assert table.records == expected and table.records is app.session.records()
        kl03 = next(r for r in table.records if r["id"] == "KL-03")
        assert kl03 != before
        assert "re-planning" not in text_of(app.screen.query_one("#title-right"))
        assert table.current_id == on  # the cursor stays on its vehicle


@sync
async def test_changing_the_date_of_a_big_fleet_replans_in_the_worker(big_fleet):
    app = make_app(big_fleet)
    async with app.run_test(size=LARGE) as pilot:
        await opened(pilot)
        assert app.session.last_plan_seconds > app_module.QUICK_PLAN  # 3,000 vehicles
        later = AS_OF + dt.timedelta(days=200)
        app.session.as_of = later
        app.refresh_views()
        assert app.planning  # not planned on the UI thread
        await until(pilot, lambda: not app.planning, tries=400, what="the re-plan")
        expected = export.assessment_records(assess_fleet_plan(app.session.fleet, later))
        assert app.main_screen().table.records == expected
        assert "Plan date 2027-06-25" in text_of(app.screen.query_one("#summary"))


# -- the table at a few thousand vehicles -----------------------------------------------------

def _known_then_unknown(records, field, reverse=False):
    """Reference order: Python's stable `sorted` by the column, unknown values last."""
    known = [r for r in records if r[field] is not None]
    known = sorted(known, key=lambda r: r[field], reverse=reverse)
    return [r["id"] for r in known] + [r["id"] for r in records if r[field] is None]


@sync
async def test_filters_and_sorts_at_a_few_thousand_vehicles_give_the_right_rows(big_fleet,
                                                                                  big_records):
    recs = big_records
    app = make_app(big_fleet)
    async with app.run_test(size=LARGE) as pilot:
        await opened(pilot)
        main = app.main_screen()
        table = main.table
        assert listed_ids(app) == [r["id"] for r in recs]
        # Nothing per vehicle is a widget: the screen has a few dozen, whatever the fleet.
        assert len(list(app.screen.query("*"))) < 40

        cases = [
            (View(statuses=frozenset({"overdue", "near-limit"})),
             [r["id"] for r in recs if r["status"] in ("overdue", "near-limit")]),
            (View(statuses=frozenset({"overdue"}), consequences=frozenset({"engine-damage"})),
             [r["id"] for r in recs if r["status"] == "overdue"
              and r["consequence"] == "engine-damage"]),
            (View(query="G-0001"), [r["id"] for r in recs if r["id"].startswith("G-0001")]),
            (View(query="vehicle 12"),
             [r["id"] for r in recs if "12" in r["label"].split()[-1]]),
            (View(sort="days_remaining"), _known_then_unknown(recs, "days_remaining")),
            (View(sort="expected_loss", reverse=True),
             _known_then_unknown(recs, "expected_loss", reverse=True)),
            (View(statuses=frozenset({"ok"}), sort="due_date"),
             _known_then_unknown([r for r in recs if r["status"] == "ok"], "due_date")),
            (View(), [r["id"] for r in recs]),
        ]
        for view, expected in cases:
            assert expected, f"the generated fleet should have rows for {view}"
            main.set_view(view)
            assert listed_ids(app) == expected, view
            assert table.ordered_keys == expected and table.row_count == len(expected)
            assert f"showing {len(expected)}" in text_of(main.query_one("#summary")) or \
                len(expected) == len(recs)
            await pilot.pause()
            # What is on screen is the new order, from the cursor's row on.
            screen = app.export_screenshot()
            at = table.cursor_row
            for vid in expected[at:at + 5]:
                assert vid in screen
        # The filter dialog's path lists the same rows as set_view.
        await pilot.press("f")
        await until(pilot, lambda: screen_name(app) == "FilterDialog")
        app.screen.query_one("#f-status").select("no-record")
        await pilot.click("#f-apply")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert listed_ids(app) == [r["id"] for r in recs if r["status"] == "no-record"]


def _reference_arrange(records, view):
    """The table's rules written out plainly: filter by every choice, then a stable sort."""
    words = view.query.casefold().split()
    shown = [r for r in records
             if (not view.statuses or r["status"] in view.statuses)
             and (not view.consequences or r["consequence"] in view.consequences)
             and all(w in f"{r['id']} {r.get('label') or ''}".casefold() for w in words)]
    if view.sort == TRIAGE:
        return shown[::-1] if view.reverse else shown
    known = [r for r in shown if r.get(view.sort) is not None]
    known = sorted(known, key=lambda r: sort_value(r, view.sort), reverse=view.reverse)
    return known + [r for r in shown if r.get(view.sort) is None]


def test_listing_arranges_like_the_plain_rules(big_records):
    listing = Listing(big_records)
    fields = [TRIAGE, "status", "consequence", "days_remaining", "due_date", "label",
              "expected_loss", "p_fail_horizon", "deciding_limit"]
    views = [View(sort=f, reverse=rev) for f in fields for rev in (False, True)]
    views += [View(statuses=frozenset({"overdue", "no-record"}), sort="distance_remaining"),
              View(consequences=frozenset({"breakdown"}), query="vehicle 2", reverse=True),
              View(query="  G-002  vehicle ", sort="life_used"), View(query="no such")]
    for view in views * 2:  # the second round uses the cached keys
        assert listing.arrange(view) == _reference_arrange(big_records, view), view


def test_prepared_cells_are_the_columns_cells_and_survive_an_unchanged_vehicle(big_records):
    table_columns = export.table_columns("km")
    rows = prepare_rows(big_records, table_columns)
    columns = cols.columns_for(table_columns, big_records)
    assert rows.records is big_records and rows.columns == columns
    for rec in big_records[:200] + big_records[-200:]:
        assert [rows.row(rec["id"])[c.field] for c in columns] == \
            cols.row_cells(rec, columns)
    assert rows.widths == cols.natural_widths(
        columns, [{c.field: t for c, t in zip(columns, cols.row_cells(r, columns),
                                              strict=True)} for r in big_records])
    changed = [dict(r) for r in big_records]
    changed[5]["days_remaining"] = -999
    again = prepare_rows(changed, table_columns, rows)
    assert again.row(changed[4]["id"]) is rows.row(changed[4]["id"])
    assert again.row(changed[5]["id"]) is not rows.row(changed[5]["id"])
    assert again.row(changed[5]["id"])["days_remaining"].plain == "-999"


def test_widths_without_cells_are_the_widths_of_the_cells(big_records):
    """The widths come from distinct values; they must be those of the cells drawn later,
    also for labels of wide characters cut at the label width, and unknown values."""
    table_columns = export.table_columns("km")
    odd = [dict(r) for r in big_records[:40]]
    odd[0]["label"] = "東京配送センター第二号車両予備機" * 2  # 2 cells a character, cut
    odd[1]["label"] = "x" * cols.LABEL_WIDTH
    odd[2]["label"] = "ü" * (cols.LABEL_WIDTH + 5)
    odd[3]["label"] = "a東" * 12 + "b"  # the cut falls in the middle of a wide character
    for name in ("days_remaining", "expected_loss", "p_fail_horizon", "due_date"):
        odd[4][name] = None
    odd[5]["distance_remaining"] = -1_234_567
    for records in (big_records, odd):
        columns = cols.columns_for(table_columns, records)
        cells = [{c.field: t for c, t in zip(columns, cols.row_cells(r, columns), strict=True)}
                 for r in records]
        assert cols.natural_widths_of(columns, records) == cols.natural_widths(columns, cells)


_NUMBER_FIELDS = {"distance_remaining": st.integers(-10**9, 10**9),
                  "days_remaining": st.integers(-10**6, 10**6),
                  "life_used": st.floats(0, 50, allow_nan=False),
                  "p_fail_horizon": st.floats(0, 1, allow_nan=False),
                  "p_fail_before_due": st.floats(0, 1, allow_nan=False),
                  "expected_loss": st.floats(0, 10**9, allow_nan=False),
                  "daily_distance": st.floats(0, 5000, allow_nan=False)}


@settings(max_examples=200, deadline=None)
@given(st.sampled_from(sorted(_NUMBER_FIELDS)).flatmap(
    lambda name: st.tuples(st.just(name), st.lists(st.one_of(st.none(), _NUMBER_FIELDS[name]),
                                                    min_size=1, max_size=30))))
@example(("p_fail_horizon", [0.0, 0.0005, 0.05]))  # "<0.1 %" is wider than both ends
@example(("distance_remaining", [200000, 150000.0, 1.0]))  # a float's decimal (review)
def test_widths_of_numbers_are_measured_at_their_extremes(case):
    """Measuring only the smallest, largest and smallest positive number of a column gives
    the width of its widest cell (each cell measured here, the reference)."""
    name, values = case
    records = [{"id": f"V{k}", name: v} for k, v in enumerate(values)]
    column = [cols.Column(name, "H")]
    cells = [{name: cols.cell(r, name)} for r in records]
    assert cols.natural_widths_of(column, records) == cols.natural_widths(column, cells)


@settings(max_examples=200, deadline=None)
@given(st.sampled_from(["p_fail_horizon", "p_fail_before_due", "expected_loss"]).flatmap(
    lambda name: st.tuples(st.just(name), st.lists(st.tuples(
        st.one_of(st.none(), _NUMBER_FIELDS[name]), st.booleans(),
        st.sampled_from(["overdue", "no-record", "near-limit", "ok"])),
        min_size=1, max_size=30))))
@example(("expected_loss", [(None, True, "overdue"), (1e9, False, "ok")]))
@example(("p_fail_horizon", [(0.5, True, "ok"), (0.0, False, "ok")]))
def test_widths_of_marked_risk_figures_equal_the_widths_of_their_cells(case):
    """Figures marked as extrapolated, and "required" in place of a loss, are measured per
    mark: the same widths as measuring each cell (the reference)."""
    name, rows = case
    records = [{"id": f"V{k}", name: v, "risk_extrapolated": x, "status": s}
               for k, (v, x, s) in enumerate(rows)]
    column = [cols.Column(name, "H")]
    cells = [{name: cols.cell(r, name)} for r in records]
    assert cols.natural_widths_of(column, records) == cols.natural_widths(column, cells)


@settings(max_examples=200, deadline=None)
@given(st.sampled_from(["label", "id", "drive"]),
       st.lists(st.one_of(st.none(), st.text(st.characters(codec="utf-8",
                                                            exclude_categories=("Cc", "Cs")),
                                              max_size=40),
                          st.text("abcXYZ 019-", max_size=40)), min_size=1, max_size=20))
def test_widths_of_text_equal_the_widths_of_its_cells(name, values):
    """Printable ASCII measured by length, the rest one by one, labels cut at their width:
    the same widths as measuring each cell (the reference)."""
    records = [{"id": f"V{k}", name: v} for k, v in enumerate(values)]
    column = [cols.Column(name, "H")]
    cells = [{name: cols.cell(r, name)} for r in records]
    assert cols.natural_widths_of(column, records) == cols.natural_widths(column, cells)


# -- the lazy table draws what Textual's DataTable draws --------------------------------------

class TwoTables(App[None]):
    """A DataTable (the reference) and a LazyTable over the same cells, styled alike."""

    CSS = """
    #a, #b { height: 1fr; background: $background; }
    #a > .datatable--header, #b > .datatable--header { color: $primary; }
    #a > .datatable--cursor, #b > .datatable--cursor { background: $secondary 45%;
                                                       text-style: bold; }
    """

    def compose(self) -> ComposeResult:
        yield DataTable(cursor_type="row", id="a")
        yield LazyTable(id="b")

    def on_mount(self) -> None:
        self.register_theme(THEME)
        self.theme = THEME.name


def _segments(strip) -> list[tuple[str, Any]]:
    return [(seg.text, seg.style) for seg in strip]


@pytest.mark.slow
@pytest.mark.parametrize("size", [(80, 24), (60, 20), (160, 48)])
def test_the_lazy_table_draws_every_line_as_the_datatable_does(size):
    """Reference: Textual's own DataTable, same cells and widths; styles compare with their
    meta (row and column), so clicks and hovers read the same too."""
    records = export.assessment_records(assess_fleet_plan(load_fleet(EXAMPLE).fleet, AS_OF))
    generated = parse_fleet_text(generate_fleet_text(150, seed=3), "g.toml")
    records += export.assessment_records(assess_fleet_plan(generated, AS_OF))  # pages of rows
    columns = cols.columns_for(export.table_columns("km"), records)
    cells = {r["id"]: cols.row_cells(r, columns) for r in records}
    widths = cols.natural_widths(columns, [{c.field: t for c, t in zip(columns, cells[vid],
                                                                       strict=True)}
                                           for vid in cells])
    headings = [Text(c.heading, style="bold", justify="right" if c.right else "left")
                for c in columns]

    async def run() -> None:
        app = TwoTables()
        async with app.run_test(size=size) as pilot:
            a, b = app.query_one(DataTable), app.query_one(LazyTable)
            for col, heading in zip(columns, headings, strict=True):
                a.add_column(heading, width=widths[col.field], key=col.field)
            b.set_columns([TableColumn(c.field, h, widths[c.field])
                           for c, h in zip(columns, headings, strict=True)])
            for vid, row in cells.items():
                a.add_row(*row, key=vid)
            b.set_rows(list(cells), lambda vid: cells[vid])

            async def lines(table) -> list[list[tuple[str, Any]]]:
                await pilot.pause()
                await pilot.pause()
                return [_segments(table.render_line(y)) for y in range(table.size.height)]

            async def compare(what: str, focus: bool = False, hover: bool = False) -> None:
                got = []
                for table in (a, b):
                    if focus:
                        table.focus()
                    if hover:
                        await pilot.hover(table, offset=(3, 4))
                    got.append(await lines(table))
                assert got[0] == got[1], what

            app.set_focus(None)
            await compare("blurred")
            await compare("focused", focus=True)
            a.move_cursor(row=3)
            b.move_cursor(row=3)
            await compare("cursor on the fourth row", focus=True)
            a.move_cursor(row=40)
            b.move_cursor(row=40)
            a.scroll_x = b.scroll_x = 4
            await compare("scrolled both ways", focus=True)
            await compare("mouse over a row", focus=True, hover=True)
            for key in ("pageup", "pagedown", "down", "pagedown", "up", "ctrl+end", "pageup",
                        "ctrl+home", "end", "right", "home"):
                for table in (a, b):
                    table.focus()
                    await pilot.press(key)
                    await pilot.pause()
                assert a.cursor_row == b.cursor_row, key
                assert a.scroll_offset == b.scroll_offset, key
            await compare("after paging", focus=True)

    asyncio.run(run())
