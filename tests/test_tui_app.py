"""Pilot tests of looking around: open, filter, find, sort, detail, date, help, palette."""

from __future__ import annotations

import datetime as dt

from textual.widgets import Input

from planner import export
from planner.fileio import load_fleet
from planner.risk import assess_fleet_plan
from planner.tui.actions import ACTIONS, BY_ID, bindings
from planner.tui.app import BeltplanApp
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

TRIAGE_IDS = [p.id for p in assess_fleet_plan(load_fleet(EXAMPLE).fleet, AS_OF).plans]


@sync
async def test_open_shows_every_vehicle_in_triage_order_with_a_summary():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert screen_name(app) == "MainScreen"
        assert listed_ids(app) == TRIAGE_IDS  # the engine's order, untouched
        summary = text_of(app.screen.query_one("#summary"))
        assert "Plan date 2026-12-07" in summary
        # KL-05 (severe duty, no severe interval known) is missing-fact, no longer ok.
        for words in ("4 overdue", "1 no-record", "1 missing-fact", "4 near-limit", "4 ok",
                      "2 on-condition"):
            assert words in summary
        # Status and consequence read as words and symbols, not only colours.
        table = app.main_screen().table
        row = [c.plain for c in table.get_row(TRIAGE_IDS[0])]
        assert "✗ overdue" in row and "◆ engine-damage" in row


@sync
async def test_narrow_window_hides_columns_and_says_so_wide_shows_them():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        table = app.main_screen().table
        shown = [c.field for c in table.shown]
        assert shown[:1] == ["id"] and {"status", "consequence", "due_date"} <= set(shown)
        assert table.hidden and "columns if wider" in text_of(app.screen.query_one("#viewinfo"))
        assert "risk assumed (i)" in text_of(app.screen.query_one("#viewinfo"))
        # The row line shows the highlighted vehicle's label and why.
        assert "Van 1, city rounds" in text_of(app.screen.query_one("#rowinfo"))
        assert sum(table.columns[c.field].get_render_width(table) for c in table.shown) <= 80
        await pilot.resize_terminal(*LARGE)
        await until(pilot, lambda: "label" in [c.field for c in table.shown], what="label")
        # Wide: the export's columns in its order, less those left out first (the action,
        # which the status's symbol and word already say, goes first).
        hidden = {c.field for c in table.hidden}
        assert [c.field for c in table.shown] == [
            f for f, _ in export.table_columns("km") if f not in hidden]
        assert hidden <= {"action", "expected_loss"}


@sync
async def test_filter_by_status_and_consequence():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("f")
        await until(pilot, lambda: screen_name(app) == "FilterDialog")
        status = app.screen.query_one("#f-status")
        status.select("overdue")
        app.screen.query_one("#f-consequence").select("engine-damage")
        await pilot.click("#f-apply")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert listed_ids(app) == ["KL-01", "KL-02", "KL-03"]
        assert "showing 3" in text_of(app.screen.query_one("#summary"))
        assert "overdue · engine-damage" in text_of(app.screen.query_one("#viewinfo"))
        # "Needs action" keeps overdue, no-record, missing-fact (KL-05: severe duty, no severe
        # interval known) and near-limit, in triage order.
        await pilot.press("f")
        await until(pilot, lambda: screen_name(app) == "FilterDialog")
        await pilot.click("#f-action")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert listed_ids(app) == [i for i in TRIAGE_IDS if i not in
                                   ("KL-04", "KL-06", "KL-14", "KL-11", "KL-12", "KL-13")]
        await pilot.press("c")
        assert listed_ids(app) == TRIAGE_IDS


@sync
async def test_find_by_id_or_label_then_back_to_the_table():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("slash")
        assert isinstance(app.focused, Input)
        await pilot.press(*"pharmacy")
        await until(pilot, lambda: listed_ids(app) == ["KL-10", "KL-11"], what="search")
        await pilot.press("escape")
        assert app.focused is app.main_screen().table
        app.screen.query_one("#find", Input).value = "kl-07"
        await until(pilot, lambda: listed_ids(app) == ["KL-07"], what="by id")
        app.screen.query_one("#find", Input).value = "no such van"
        await until(pilot, lambda: listed_ids(app) == [])
        assert "no vehicle matches" in text_of(app.screen.query_one("#rowinfo"))


@sync
async def test_sort_by_a_column_reverse_and_back_to_triage():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("s")
        await until(pilot, lambda: screen_name(app) == "PickDialog")
        pick = app.screen.query_one("#pick")
        ids = [pick.get_option_at_index(i).id for i in range(pick.option_count)]
        pick.highlighted = ids.index("days_remaining")
        await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        days = [r["days_remaining"] for r in app.main_screen().table.listed]
        known = [d for d in days if d is not None]
        assert known == sorted(known) and days[len(known):] == [None] * (len(days) - len(known))
        assert listed_ids(app)[0] == "KL-01"  # -258 days
        # Choosing it again reverses; unknowns stay last.
        app.main_screen().set_view(app.main_screen().table.view.with_(reverse=True))
        days = [r["days_remaining"] for r in app.main_screen().table.listed]
        assert days[0] == max(known) and days[-1] is None
        # A click on a heading sorts by that column.
        app.main_screen().table.post_message(app.main_screen().table.SortAsked("id"))
        await until(pilot, lambda: listed_ids(app) == sorted(TRIAGE_IDS), what="by id")
        await pilot.press("c")
        assert listed_ids(app) == TRIAGE_IDS


@sync
async def test_detail_view_explains_the_most_urgent_vehicle():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "DetailScreen")
        body = {w.id: text_of(w) for w in app.screen.query("Static") if w.id}
        assert "KL-01" in body["d-heading"] and "overdue" in body["d-heading"]
        assert body["d-todo"].startswith("Replace now")  # the action leads
        assert export.CAUTION.split(":")[0] in body["d-todo"]  # the cautions go with advice
        assert "tesk" in body["d-engine"] and "severe duty" in body["d-engine"]
        assert "88,600 km or 58 months" in body["d-engine"]
        assert "2023-01-16 at 96,410 km" in body["d-install"]
        assert "km/day" in body["d-install"] and "est. odometer" in body["d-install"]
        # The severe limits: 96,410 + 88,600 = 185,010 km; 2023-01-16 + 58 months = 2027-11-16.
        assert "185,010 km" in body["d-limits"] and "◀ decides" in body["d-limits"]
        assert "2027-11-16" in body["d-limits"]
        # Passed between the readings of 2025-12-01 and 2026-06-01, said below the table; no
        # figure in it is cut short.
        assert "distance date between two recorded values" in body["d-limits"]
        assert "…" not in body["d-limits"]
        # Est.: the latest value, 224,300 km on 2026-11-27 (above the fitted line's 223,070),
        # + 10 days x 140.06 km/day (weighted fit; numpy.polyfit gives the same) = 225,701 km;
        # (225,701 - 96,410) / 88,600 = 146 %.
        assert "146 % used" in body["d-life"]
        assert "●" in body["d-odometer"] and "○" in body["d-odometer"]
        assert "assumed" in body["d-risk"]  # the risk model's assumptions go with the figure
        assert "severe-service interval is in force" in body["d-notes"]
        assert "belt let go on the ring road" in body["d-jobs"]
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen")


@sync
async def test_planning_date_can_move_and_the_plan_follows():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("d")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        await pilot.click("#quick-1")  # end of next month
        assert app.screen.query_one("#f-as_of", Input).value == "2027-01-31"
        await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert app.session.as_of == dt.date(2027, 1, 31)
        summary = text_of(app.screen.query_one("#summary"))
        assert "Plan date 2027-01-31" in summary
        assert "KL-16" in [r["id"] for r in app.main_screen().table.records
                           if r["status"] == "overdue"]
        # A date that is not a date is explained in the form.
        await pilot.press("d")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        app.screen.query_one("#f-as_of", Input).value = "31/01/2027"
        await pilot.press("enter")
        await pilot.pause()
        assert screen_name(app) == "FormScreen"
        assert "YYYY-MM-DD" in text_of(app.screen.query_one("#problems"))


@sync
async def test_help_lists_every_key_from_the_action_table():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("question_mark")
        await until(pilot, lambda: screen_name(app) == "HelpScreen")
        words = text_of(app.screen.query_one("#help-keys"))
        for action in ACTIONS:
            assert action.help.split("(")[0].split(":")[0].strip()[:30] in " ".join(
                words.split()), action.id
        await pilot.press("q")  # q (or esc, or ?) closes help; it does not quit
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert app.is_running
        await pilot.press("i")
        await until(pilot, lambda: screen_name(app) == "AboutScreen")
        about = " ".join(text_of(app.screen.query_one("#about-text")).split())
        assert "qualified technician" in about and "stop the engine without warning" in about
        assert "maker's schedule" in about and "Weibull" in about


@sync
async def test_each_key_is_bound_once_from_the_table():
    keys = [k.strip() for b in bindings("app") for k in b.key.split(",")]
    assert len(keys) == len(set(keys))
    assert BeltplanApp.COMMAND_PALETTE_BINDING == BY_ID["command_palette"].keys
    bound = {b.action for b in bindings("app")}
    for action in ACTIONS:
        if action.target == "app" and action.id != "command_palette":
            assert action.id in bound and hasattr(BeltplanApp, f"action_{action.id}")


@sync
async def test_command_palette_runs_an_action():
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("ctrl+p")
        await until(pilot, lambda: screen_name(app) == "CommandPalette")
        await pilot.press(*"help")
        await until(pilot, lambda: app.screen.query("CommandList") and
                    app.screen.query_one("CommandList").option_count > 0, what="hits")
        assert "Help" in str(app.screen.query_one("CommandList").get_option_at_index(0).prompt)
        await pilot.press("enter")
        if screen_name(app) == "CommandPalette":  # the first enter may only highlight
            await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "HelpScreen", what="help from palette")


@sync
async def test_file_text_is_shown_literally_never_as_markup(tmp_path):
    path = copy_example(tmp_path)
    path.write_text(path.read_text().replace('label = "Van 1, city rounds"',
                                             'label = "[red]van[/] [b]1"'))
    app = make_app(path)
    async with app.run_test(size=LARGE) as pilot:
        await opened(pilot)
        cells = [c.plain for c in app.main_screen().table.get_row("KL-01")]
        assert "[red]van[/] [b]1" in cells
        await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "DetailScreen")
        assert "[red]van[/] [b]1" in text_of(app.screen.query_one("#d-heading"))


@sync
async def test_no_color_still_reads(monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    app = make_app()
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        assert app.no_color
        row = [c.plain for c in app.main_screen().table.get_row("KL-07")]
        assert "? no-record" in row and "· breakdown" in row
