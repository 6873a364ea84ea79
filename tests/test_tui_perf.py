"""The UI at fleet scale: the lazy table, filters and sorts at a few thousand vehicles.

Speed itself is measured by `tests/benchmarks/bench_ui.py` (ratios against a baseline in the same
run), not here; these tests check that the fast paths give the same answers as the plain ones.
"""

from __future__ import annotations

import asyncio
from pathlib import Path
from typing import Any

import pytest
from rich.text import Text
from textual.app import App, ComposeResult
from textual.widgets import DataTable

from planner import export
from planner.fileio import load_fleet, parse_fleet_text
from planner.generate import generate_fleet_text
from planner.risk import assess_fleet_plan
from planner.tui import columns as cols
from planner.tui.look import THEME
from planner.tui.view import TRIAGE, Listing, View, sort_value
from planner.tui.widgets.fleet_table import prepare_rows
from planner.tui.widgets.lazy_table import LazyTable, TableColumn
from tests.test_tui_support import (
    AS_OF,
    EXAMPLE,
    LARGE,
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
            (View(statuses=frozenset({"overdue", "due-soon"})),
             [r["id"] for r in recs if r["status"] in ("overdue", "due-soon")]),
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
        assert [rows.cells[rec["id"]][c.field] for c in columns] == \
            cols.row_cells(rec, columns)
    assert rows.widths == cols.natural_widths(
        columns, [{c.field: t for c, t in zip(columns, cols.row_cells(r, columns),
                                              strict=True)} for r in big_records])
    changed = [dict(r) for r in big_records]
    changed[5]["days_remaining"] = -999
    again = prepare_rows(changed, table_columns, rows)
    assert again.cells[changed[4]["id"]] is rows.cells[changed[4]["id"]]
    assert again.cells[changed[5]["id"]] is not rows.cells[changed[5]["id"]]
    assert again.cells[changed[5]["id"]]["days_remaining"].plain == "-999"


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
