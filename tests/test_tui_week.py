"""Pilot tests of the week view: the engine's plan on screen, moves and refusals, dates, exports.

Every expectation is computed with `planner.week` / `planner.week_export` on the same fleet and
date, so the tests check that the view shows and writes the engine's plan, not a copy of it.
"""

from __future__ import annotations

import datetime as dt
import shutil

import pytest
from textual.app import App
from textual.screen import Screen
from textual.widgets import ContentSwitcher, Input, Select

from planner import week_export
from planner.errors import PlannerError
from planner.fileio import load_fleet
from planner.tui import clock
from planner.tui.actions import ACTIONS, WEEK, for_scope
from planner.tui.app import BeltplanApp
from planner.tui.app_edit import EditActions
from planner.tui.app_file import FileActions
from planner.tui.app_import import ImportActions
from planner.tui.app_week import WeekActions
from planner.tui.screens.help import keys_tables
from planner.tui.screens.week import WeekScreen
from planner.tui.screens.week_actions import WeekViewActions
from planner.week import move, plan_week
from tests.test_tui_support import (
    ROOT,
    SMALL,
    make_app,
    opened,
    screen_name,
    sync,
    text_of,
    until,
)

GARAGE = ROOT / "fleet_examples" / "garage_customers.toml"
SMALL_WEEK = ROOT / "tests" / "data" / "week" / "small.toml"
FRIDAY = dt.date(2026, 12, 4)
STAMP = dt.datetime(2026, 12, 4, 16, 30, tzinfo=dt.UTC)


def expected(path=GARAGE, **kwargs):
    return plan_week(load_fleet(path).fleet, FRIDAY, **kwargs)


def booked(week):
    """(vehicle, bay, days, start hour) of every booking: what a move changes."""
    return [(b.job.vehicle_id, b.bay, b.days, b.start_hour) for b in week.bookings]


def board_lines(app):
    board = app.screen.board
    return [board.get_option_at_index(k).prompt.plain.rstrip()
            for k in range(board.option_count)]


def board_order(app):
    """The vehicles of the job lines, top to bottom (a job over two days shows twice)."""
    board = app.screen.board
    return [board.vehicle_of[board.get_option_at_index(k).id]
            for k in range(board.option_count)
            if board.get_option_at_index(k).id in board.vehicle_of]


async def open_week(pilot):
    app = await opened(pilot)
    await pilot.press("w")
    await until(pilot, lambda: screen_name(app) == "WeekScreen", what="week view")
    await pilot.pause()
    return app


async def highlight(pilot, vehicle_id):
    app = pilot.app
    assert app.screen.board.select_vehicle(vehicle_id)
    await pilot.pause()
    assert app.screen.board.current_id == vehicle_id


def garage_copy(tmp_path):
    target = tmp_path / "garage.toml"
    shutil.copyfile(GARAGE, target)
    return target


# -- what it shows -----------------------------------------------------------------------------

@sync
async def test_week_view_shows_the_engines_plan_for_the_garage():
    week = expected()
    app = make_app(GARAGE, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        # The jobs in the engine's day, bay and clock order, then the one not placed: the taxi
        # MR-1118, on severe duty with no severe interval known (listed, never booked).
        assert board_order(app) == [s.job.vehicle_id for d in week.days for slot in d.bays
                                    for s in slot.segments] + ["MR-1118"]
        assert len(week.bookings) == 9
        assert [u.job.vehicle_id for u in week.unplaced] == ["MR-1118"]
        lines = board_lines(app)
        for d in week.days:
            if not d.working:
                continue
            head = next(x for x in lines if x.startswith(week_export.day_text(d.day)))
            assert f"{d.booked:g} of {d.capacity:g} h booked" in head
            for slot in d.bays:
                lane = next(x for x in lines[lines.index(head):] if
                            x.strip().startswith(f"bay {slot.bay} "))
                assert (f"{week_export.hours_text(slot.left)} free" in lane if slot.left
                        else "full" in lane)
        # Each job line: clock span, vehicle, hours, status and consequence in words.
        for b in week.bookings:
            s = b.segments()[0]
            line = next(x for x in lines if f" {b.job.vehicle_id} " in x)
            assert week_export.span_text(s).replace("-", "–") in line
            assert week_export.hours_text(s.hours) in line
            assert b.job.status.value in line and b.job.consequence.value in line
        assert [x for x in lines if "MR-1204" in x][0].count("◇ unverified") == 1
        summary = text_of(app.screen.query_one("#w-summary"))
        assert ("Mon 2026-12-07 to Sun 2026-12-13 │ 9 jobs, 33 of 80 h │ 1 not placed"
                in summary)
        assert "Not saved to the fleet file" in text_of(app.screen.query_one("#w-help"))
        # The highlighted job says why it is due (the engine's words).
        first = week.bookings[0].job
        assert first.reason in text_of(app.screen.query_one("#w-info"))


@sync
async def test_holiday_long_job_and_a_job_not_placed_with_its_reason():
    week = expected(SMALL_WEEK)
    app = make_app(SMALL_WEEK, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        lines = board_lines(app)
        assert "Wed 2026-12-09 · closed (holiday)" in lines
        assert sum("day 1 of 2" in x or "day 2 of 2" in x for x in lines) == 2
        [u] = week.unplaced
        assert f"Not placed ({len(week.unplaced)}), each with its reason" in lines
        k = next(k for k, x in enumerate(lines) if x.strip().startswith("not placed"))
        assert u.job.vehicle_id in lines[k] and "Hatchback, no h" in lines[k]
        assert lines[k + 1].strip().startswith(f"{u.reason}: set labour_hours")
        await highlight(pilot, u.job.vehicle_id)
        assert u.detail in text_of(app.screen.query_one("#w-info"))
        # File text is shown literally: the label is not run or read as markup.
        await highlight(pilot, "G-01")
        assert '=HYPERLINK("http://x.invalid")' in text_of(app.screen.query_one("#w-info"))


@sync
async def test_sections_parts_calls_and_totals():
    week = expected()
    app = make_app(GARAGE, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        switcher = app.screen.query_one(ContentSwitcher)
        await pilot.press("2")
        assert switcher.current == "w-parts"
        parts = text_of(app.screen.query_one("#w-parts-text"))
        for p in week.parts_order:
            assert p.part in parts
        assert "wet belt kit Frew" in parts and week.notes[0][:40] in parts
        await pilot.press("3")
        assert switcher.current == "w-calls"
        calls = text_of(app.screen.query_one("#w-calls-text"))
        for c in week.call_list:
            assert c.name in calls and c.status_words in calls
        assert "booked Tue 2026-12-08 08:00, bay 1" in calls
        await pilot.press("4")
        totals = " ".join(text_of(app.screen.query_one("#w-totals-text")).split())
        assert week_export.money(week.total_cost, week.currency) == "4,221.00 GBP"
        assert "4,221.00 GBP" in totals
        # Garage example: 5 required jobs (overdue or no record) and 4 near the limit; only the
        # near-limit ones carry a risk figure, and the two costs make the total.
        assert f"{len(week.required_jobs)} jobs" in totals and "not optional" in totals
        assert week.required_cost + week.near_limit_cost == week.total_cost
        assert week_export.money(week.expected_loss_removed, week.currency, True) in totals
        assert " ".join(week.risk_assumptions.split()) in totals
        assert "qualified technician" in totals
        await pilot.press("1")
        assert switcher.current == "w-board" and app.focused is app.screen.board


# -- moving ------------------------------------------------------------------------------------

@sync
async def test_move_a_job_with_the_form_to_another_day_and_bay(tmp_path):
    path = garage_copy(tmp_path)
    original = path.read_bytes()
    thursday = dt.date(2026, 12, 10)
    app = make_app(path, FRIDAY)
    async with app.run_test(size=SMALL, notifications=True) as pilot:
        await open_week(pilot)
        await highlight(pilot, "MR-1131")
        await pilot.press("m")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        app.screen.query_one("#f-day", Select).value = thursday.isoformat()
        app.screen.query_one("#f-bay", Select).value = "2"
        await pilot.press("ctrl+o")
        await until(pilot, lambda: screen_name(app) == "WeekScreen", what="moved")
        want = move(expected(path), "MR-1131", thursday, 2)
        assert booked(app.week_state().plan()) == booked(want)
        assert app.last_message == ("Moved MR-1131: bay 2 from Thu 2026-12-10 (this session "
                                    "only, not saved).")
        assert board_order(app) == [s.job.vehicle_id for d in want.days for slot in d.bays
                                    for s in slot.segments] + ["MR-1118"]  # not placed
        assert app.screen.board.current_id == "MR-1131"
        assert "1 move" in text_of(app.screen.query_one("#w-summary"))
        # A planning aid: the fleet text and file are untouched.
        assert not app.session.dirty
    assert path.read_bytes() == original


@sync
async def test_a_refused_move_shows_the_engines_reason_and_changes_nothing():
    week = expected()
    wednesday = dt.date(2026, 12, 9)
    with pytest.raises(PlannerError) as refusal:
        move(week, "MR-1077", wednesday, 1)
    reason = refusal.value.title
    # Wednesday's bay 1 holds MR-1042 and MR-1131, 3 h each: 2 h of 8 left; MR-1077 needs 4.5 h.
    assert "2 h left" in reason and "needs 4.5 h" in reason
    app = make_app(GARAGE, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        await highlight(pilot, "MR-1077")
        await pilot.press("shift+down")  # a day later, same bay: Wednesday's bay 1 is full
        await pilot.pause()
        info = app.screen.query_one("#w-info")
        assert reason in " ".join(text_of(info).split())
        assert info.has_class("-refused") and app.last_message == reason
        assert booked(app.week_state().plan()) == booked(week)
        # The move form shows the same refusal in place and stays open.
        await pilot.press("m")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        app.screen.query_one("#f-day", Select).value = wednesday.isoformat()
        await pilot.press("ctrl+o")
        await until(pilot, lambda: app.screen.attempts == 1)
        assert screen_name(app) == "FormScreen"
        assert reason in " ".join(text_of(app.screen.query_one("#problems")).split())
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "WeekScreen")
        assert booked(app.week_state().plan()) == booked(week)
        # Moving the highlight clears the refusal.
        await pilot.press("down")
        await pilot.pause()
        assert not app.screen.query_one("#w-info").has_class("-refused")


@sync
async def test_keys_move_a_day_and_a_bay_and_undo_takes_moves_back():
    week = expected()
    # MR-1131 (3 h) is booked Wed 2026-12-09 in bay 1: to bay 2 (3.5 h free), then a day later
    # twice (bay 2 is free on Thursday and Friday).
    wednesday, thursday, friday = (dt.date(2026, 12, d) for d in (9, 10, 11))
    steps = [move(week, "MR-1131", wednesday, 2)]
    steps.append(move(steps[-1], "MR-1131", thursday, 2))
    steps.append(move(steps[-1], "MR-1131", friday, 2))
    app = make_app(GARAGE, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        await highlight(pilot, "MR-1131")
        for key, want in zip(("b", "shift+down", "shift+down"), steps, strict=True):
            await pilot.press(key)
            await pilot.pause()
            assert booked(app.week_state().plan()) == booked(want), key
            assert app.screen.board.current_id == "MR-1131"
        await pilot.press("shift+down")  # Friday is the plan's last working day
        await pilot.pause()
        assert "cannot move MR-1131 later: the plan ends on 2026-12-13" in app.last_message
        assert app.screen.query_one("#w-info").has_class("-refused")
        await pilot.press("u")
        await pilot.pause()
        assert booked(app.week_state().plan()) == booked(steps[1])
        assert app.last_message == "Move undone: MR-1131 to bay 2 on 2026-12-11."
        await pilot.press("u", "u")
        await pilot.pause()
        assert booked(app.week_state().plan()) == booked(week)
        await pilot.press("u")
        assert app.last_message == "No move to undo."


@sync
async def test_moves_stay_for_the_session_and_go_when_the_planning_date_changes():
    app = make_app(GARAGE, FRIDAY)
    async with app.run_test(size=SMALL, notifications=True) as pilot:
        await open_week(pilot)
        await highlight(pilot, "MR-1131")
        await pilot.press("b")  # Wed bay 1 -> bay 2 (3.5 h free for its 3 h)
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        await pilot.press("w")
        await until(pilot, lambda: screen_name(app) == "WeekScreen")
        assert len(app.week_state().moves) == 1
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        app.session.as_of = dt.date(2026, 12, 7)
        app.refresh_views()
        await pilot.press("w")
        await until(pilot, lambda: screen_name(app) == "WeekScreen")
        assert "1 move was dropped" in app.last_message
        fresh = plan_week(load_fleet(GARAGE).fleet, dt.date(2026, 12, 7))
        assert booked(app.week_state().plan()) == booked(fresh)


@sync
async def test_dates_form_plans_again_and_refuses_a_start_before_the_planning_date():
    app = make_app(GARAGE, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        await pilot.press("d")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        app.screen.query_one("#f-start", Input).value = "2026-12-01"
        app.screen.query_one("#f-weeks", Input).value = "2.5"
        await pilot.press("ctrl+o")
        await until(pilot, lambda: app.screen.attempts == 1)
        problems = text_of(app.screen.query_one("#problems"))
        assert "cannot start before the planning date (2026-12-04)" in problems
        assert "whole number from 1 to 52" in problems
        app.screen.query_one("#f-start", Input).value = "2026-12-14"
        app.screen.query_one("#f-weeks", Input).value = "2"
        app.screen.query_one("#f-include", Select).value = "all-due"
        await pilot.press("ctrl+o")
        await until(pilot, lambda: screen_name(app) == "WeekScreen")
        want = expected(start=dt.date(2026, 12, 14), weeks=2, include="all-due")
        got = app.week_state().plan()
        assert (got.start, got.weeks, got.include) == (want.start, 2, "all-due")
        assert booked(got) == booked(want)
        assert "Mon 2026-12-14 to Sun 2026-12-27" in text_of(app.screen.query_one("#w-summary"))
        # Two weeks: the garage's stock-take day ([workshop] closed) shows as a closed day.
        assert "Wed 2026-12-16 · closed (holiday)" in board_lines(app)


# -- export ------------------------------------------------------------------------------------

async def export_week(pilot, kind, target):
    app = pilot.app
    await pilot.press("x")
    await until(pilot, lambda: screen_name(app) == "FormScreen")
    app.screen.query_one("#f-kind", Select).value = kind
    await pilot.pause()
    default = app.screen.query_one("#f-file", Input).value
    app.screen.query_one("#f-file", Input).value = str(target)
    await pilot.press("ctrl+o")
    await until(pilot, lambda: screen_name(app) == "WeekScreen", what="exported")
    return default


@sync
async def test_export_writes_what_beltplan_week_writes_moves_included(tmp_path, monkeypatch):
    monkeypatch.setattr(clock, "utc_now", lambda: STAMP)
    path = garage_copy(tmp_path)
    # MR-1131 (3 h) is booked Wed 2026-12-09 in bay 1; bay 2 has 3.5 h free that day.
    wednesday = dt.date(2026, 12, 9)
    want = move(expected(path), "MR-1131", wednesday, 2)
    writers = {
        "jobs": week_export.to_csv_text(want, "jobs"),
        "parts": week_export.to_csv_text(want, "parts"),
        "calls": week_export.to_csv_text(want, "calls"),
        "json": week_export.to_json_text(want),
        "markdown": week_export.to_markdown_text(want),
        "ics": week_export.to_ics(want, STAMP),
    }
    endings = {"jobs": "-jobs.csv", "parts": "-parts.csv", "calls": "-calls.csv",
               "json": ".json", "markdown": ".md", "ics": ".ics"}
    app = make_app(path, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        await highlight(pilot, "MR-1131")
        await pilot.press("b")
        await pilot.pause()
        assert booked(app.week_state().plan()) == booked(want)
        for kind, text in writers.items():
            target = tmp_path / "out" / f"week{endings[kind]}"
            target.parent.mkdir(exist_ok=True)
            default = await export_week(pilot, kind, target)
            assert default == f"garage-week-2026-12-07{endings[kind]}"
            assert target.read_bytes() == text.encode("utf-8"), kind
            assert app.last_message.endswith(f" to {target}")
        assert "DTSTAMP:20261204T163000Z" in (tmp_path / "out" / "week.ics").read_text()
        assert "MR-1131" in (tmp_path / "out" / "week-jobs.csv").read_text()
        # A relative name goes beside the fleet file; the message says where.
        await pilot.press("x")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        await pilot.press("ctrl+o")
        await until(pilot, lambda: screen_name(app) == "WeekScreen")
        beside = tmp_path / "garage-week-2026-12-07-jobs.csv"
        assert beside.read_bytes() == writers["jobs"].encode("utf-8")
        assert app.last_message == f"Exported the jobs as CSV to {beside}"
        # Never over the fleet file.
        await pilot.press("x")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        app.screen.query_one("#f-file", Input).value = "garage.toml"
        await pilot.press("ctrl+o")
        await until(pilot, lambda: app.screen.attempts == 1)
        assert "refusing to write over the fleet file" in text_of(
            app.screen.query_one("#problems"))
    assert path.read_bytes() == GARAGE.read_bytes()


# -- the action table --------------------------------------------------------------------------

def test_week_keys_come_from_the_action_table_and_do_not_collide():
    week_actions = for_scope(WEEK)
    ids = {a.id for a in week_actions}
    assert {"week_move", "week_earlier", "week_later", "week_bay", "week_export",
            "week_dates", "week_close", "help", "quit"} <= ids
    for action in ACTIONS:
        if action.target == "app" and action.id != "command_palette":
            assert hasattr(BeltplanApp, f"action_{action.id}"), action.id
        elif action.target == "screen" and WEEK in action.scopes:
            assert hasattr(WeekScreen, f"action_{action.id}"), action.id
    bound = {b.action for b in WeekScreen.BINDINGS}
    assert bound == {a.id for a in week_actions if a.target == "screen"}
    scopes = {s for a in ACTIONS for s in a.scopes}
    for scope in scopes:
        keys = [k.strip() for a in for_scope(scope) for k in a.keys.split(",")]
        assert len(keys) == len(set(keys)), f"a key is bound twice in {scope}: {keys}"
    help_text = " ".join(text_of(t) for t in keys_tables())
    assert "Week plan" in help_text and "shift+down" in help_text
    assert "Import odometer readings" in help_text


def test_the_apps_mixins_do_not_shadow_each_other():
    def own(cls):
        return {n for n in vars(cls) if not n.startswith("__")}

    mixins = [EditActions, FileActions, ImportActions, WeekActions]
    for k, a in enumerate(mixins):
        for b in mixins[k + 1:]:
            assert not own(a) & own(b), (a.__name__, b.__name__, own(a) & own(b))
        # Overriding one of Textual's actions (quit) is meant; any other name is a clash.
        assert not {n for n in own(a) if hasattr(App, n) and not n.startswith("action_")}, \
            a.__name__
    assert not {n for n in own(WeekViewActions) if hasattr(Screen, n)}
    assert not own(WeekViewActions) & own(WeekScreen)


@sync
async def test_palette_in_the_week_view_offers_the_week_actions():
    app = make_app(GARAGE, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        first = board_order(app)[0]
        await pilot.press("ctrl+p")
        await until(pilot, lambda: screen_name(app) == "CommandPalette")
        await pilot.press(*"move")
        await until(pilot, lambda: "Move (week plan)" in str(app.screen.query_one(
            "CommandList").get_option_at_index(0).prompt) if app.screen.query_one(
            "CommandList").option_count else False, what="palette hit")
        await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "FormScreen")
        assert app.screen.spec.title == f"Move the job on {first}"  # the board's first job


@sync
async def test_enter_opens_the_vehicle_and_escape_comes_back_to_the_week():
    app = make_app(GARAGE, FRIDAY)
    async with app.run_test(size=SMALL) as pilot:
        await open_week(pilot)
        await highlight(pilot, "MR-1204")
        await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "DetailScreen")
        assert app.screen.vehicle_id == "MR-1204"
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "WeekScreen")
        assert app.screen.board.current_id == "MR-1204"
