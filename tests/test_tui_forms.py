"""Pilot tests of every form, with valid and rejected input, and of undo and delete."""

from __future__ import annotations

import tomllib

from textual.widgets import Select

from planner.plan import Status
from tests.test_tui_support import (
    SMALL,
    copy_example,
    fill,
    listed_ids,
    make_app,
    opened,
    problems_text,
    screen_name,
    sync,
    text_of,
    until,
)


def vehicle(app, vid):
    return next(v for v in tomllib.loads(app.session.text)["vehicles"] if v["id"] == vid)


async def open_form(pilot, key, *, pick=None):
    app = pilot.app
    await pilot.press(key)
    if pick is not None:  # the engine profile chooser comes first
        await until(pilot, lambda: screen_name(app) == "PickDialog")
        options = app.screen.query_one("#pick")
        ids = [options.get_option_at_index(i).id for i in range(options.option_count)]
        options.highlighted = ids.index(pick)
        await pilot.press("enter")
    await until(pilot, lambda: screen_name(app) == "FormScreen", what=f"form {key}")


async def apply(pilot, closes=True):
    app = pilot.app
    form = app.screen
    tried = form.attempts
    await pilot.press("ctrl+o")  # the form's apply key (a second click within 0.2 s is dropped)
    if closes:
        await until(pilot, lambda: app.screen is not form, what="form closes")
    else:
        await until(pilot, lambda: form.attempts > tried, what="form applied")
        assert app.screen is form and "-shown" in form.query_one("#problems").classes


# -- odometer readings ------------------------------------------------------------------------

@sync
async def test_reading_valid_updates_the_plan(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        before = app.session.plan_of("KL-01").usage.est_odometer
        await open_form(pilot, "r")
        assert "224,300 km on 2026-11-27" in text_of(app.screen.query_one(".intro"))
        fill(app, odometer="226,900")
        await apply(pilot)
        assert vehicle(app, "KL-01")["readings"][-1] == {
            "date": __import__("datetime").date(2026, 12, 7), "odometer": 226900}
        assert app.session.dirty and app.session.plan_of("KL-01").usage.est_odometer != before
        assert "Reading added to KL-01" in app.last_message
        assert "unsaved" in text_of(app.screen.query_one("#title-right"))


@sync
async def test_reading_lower_than_the_last_is_rejected_with_the_reason(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        text = app.session.text
        await open_form(pilot, "r")
        fill(app, odometer="224000")
        await apply(pilot, closes=False)
        words = problems_text(app)
        assert "odometer goes backwards" in words and "224,300" in words
        assert "odometers only go forward" in words
        assert "-invalid" in app.screen.query_one("#f-odometer").classes
        assert app.session.text == text and not app.session.dirty
        fill(app, odometer="many")
        await apply(pilot, closes=False)
        assert "'many' is not a number" in problems_text(app)
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert app.session.text == text


# -- belt jobs --------------------------------------------------------------------------------

@sync
async def test_belt_job_changes_the_status_at_once_in_the_detail_view(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await pilot.press("enter")
        await until(pilot, lambda: screen_name(app) == "DetailScreen")
        assert "overdue" in text_of(app.screen.query_one("#d-heading"))
        await open_form(pilot, "j")
        fill(app, odometer="226000", work="belt kit, water pump", notes="done at bay 2")
        app.screen.query_one("#f-reason", Select).value = "scheduled"
        await apply(pilot)
        assert screen_name(app) == "DetailScreen"
        heading = text_of(app.screen.query_one("#d-heading"))
        assert "✓ ok" in heading and "overdue" not in heading
        assert "done at bay 2" in text_of(app.screen.query_one("#d-jobs"))
        job = vehicle(app, "KL-01")["belt_jobs"][-1]
        assert job["reason"] == "scheduled" and job["odometer"] == 226000
        await pilot.press("escape")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        table = app.main_screen().table
        assert "✓ ok" in [c.plain for c in table.get_row("KL-01")]


@sync
async def test_belt_job_rejected_before_service_and_without_odometer(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await open_form(pilot, "j")
        fill(app, date="2019-01-01", odometer="5000")
        await apply(pilot, closes=False)
        # Before service is accepted only as a previous owner's job with an odometer at most
        # the in-service one: 5,000 km is above KL-01's.
        assert "before the vehicle entered service" in problems_text(app)
        assert "-invalid" in app.screen.query_one("#f-odometer").classes
        fill(app, date="2026-12-07", odometer="")
        await apply(pilot, closes=False)
        assert "odometer" in problems_text(app) and "required" in problems_text(app)
        assert not app.session.dirty


# -- vehicles ---------------------------------------------------------------------------------

@sync
async def test_add_vehicle_valid_and_a_duplicate_id_rejected(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await open_form(pilot, "a")
        fill(app, id="KL-02", label="twin", in_service="2026-01-05")
        app.screen.query_one("#f-engine", Select).value = "tesk"
        await apply(pilot, closes=False)
        assert "already used" in problems_text(app)
        fill(app, id="KL-20")
        await apply(pilot)
        assert "KL-20" in listed_ids(app)
        assert vehicle(app, "KL-20") == {"id": "KL-20", "label": "twin", "engine": "tesk",
                                         "duty": "normal",
                                         "in_service": __import__("datetime").date(2026, 1, 5),
                                         "belt_history": "known"}


@sync
async def test_add_vehicle_without_engine_or_drive_is_added_as_missing_fact(tmp_path):
    # A missing drive type is a warning, not an error: the vehicle is planned as missing-fact
    # (never ok) and the form's message says what is missing.
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await open_form(pilot, "a")
        fill(app, id="KL-30", in_service="2026-01-05")
        await apply(pilot)
        assert app.session.plan_of("KL-30").status is Status.MISSING_FACT
        assert "Vehicle added" in app.last_message and "no drive type" in app.last_message


@sync
async def test_edit_vehicle_valid_and_rejected(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await open_form(pilot, "e")
        assert app.screen.query_one("#f-label").value == "Van 1, city rounds"
        fill(app, in_service="2026-12-01")
        await apply(pilot, closes=False)
        assert "before the vehicle entered service" in problems_text(app)
        fill(app, in_service="2020-02-03", label="Van 1, ring road")
        app.screen.query_one("#f-duty", Select).value = "normal"
        await apply(pilot)
        v = vehicle(app, "KL-01")
        assert v["label"] == "Van 1, ring road" and v["duty"] == "normal"
        assert "# stop-start delivery" in app.session.text  # the line's comment stays
        assert "Van 1, ring road" in text_of(app.screen.query_one("#rowinfo"))


@sync
async def test_delete_asks_keeps_on_no_and_undo_brings_it_back(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        original = app.session.text
        await pilot.press("delete")
        await until(pilot, lambda: screen_name(app) == "AskDialog")
        await pilot.click("#ask-keep")
        await until(pilot, lambda: screen_name(app) == "MainScreen")
        assert "KL-01" in listed_ids(app)
        await pilot.press("delete")
        await until(pilot, lambda: screen_name(app) == "AskDialog")
        await pilot.click("#ask-delete")
        await until(pilot, lambda: "KL-01" not in listed_ids(app), what="deleted")
        assert app.session.dirty
        await pilot.press("u")
        await until(pilot, lambda: "KL-01" in listed_ids(app), what="undone")
        assert app.session.text == original and not app.session.dirty
        await pilot.press("u")
        assert app.last_message == "Nothing to undo."


@sync
async def test_undo_goes_back_one_edit_at_a_time(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        texts = [app.session.text]
        for odo in ("225000", "226000"):
            await open_form(pilot, "r")
            fill(app, odometer=odo)
            await apply(pilot)
            texts.append(app.session.text)
        assert "2 unsaved changes" in text_of(app.screen.query_one("#title-right"))
        await pilot.press("u")
        assert app.session.text == texts[1]
        await pilot.press("ctrl+z")
        assert app.session.text == texts[0]


# -- engine profiles --------------------------------------------------------------------------

@sync
async def test_new_engine_profile_valid_and_rejected(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await open_form(pilot, "p", pick="\x00new")
        fill(app, id="zz9", description="ZZ9 1.4 petrol", labour_hours="-1")
        app.screen.query_one("#f-drive", Select).value = "belt"
        await apply(pilot, closes=False)
        assert "labour hours" in problems_text(app) and "greater than 0" in problems_text(app)
        fill(app, id="tesk", labour_hours="")
        await apply(pilot, closes=False)
        assert "already a profile 'tesk'" in problems_text(app)
        fill(app, id="zz9", interval_distance="100 000", interval_months="60",
             parts="belt kit, pump")
        await apply(pilot)
        profile = tomllib.loads(app.session.text)["engines"]["zz9"]
        assert profile == {"description": "ZZ9 1.4 petrol", "drive": "belt",
                           "interval_distance": 100000, "interval_months": 60,
                           "parts": ["belt kit", "pump"]}


@sync
async def test_edit_engine_profile_keeps_its_comments(tmp_path):
    app = make_app(copy_example(tmp_path))
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await open_form(pilot, "p", pick="tesk")
        assert app.screen.query_one("#f-id").disabled
        fill(app, labour_hours="4", interval_months="0")
        await apply(pilot, closes=False)
        assert "interval, months: interval_months must be greater than 0" in problems_text(app)
        fill(app, interval_months="72")
        await apply(pilot)
        assert tomllib.loads(app.session.text)["engines"]["tesk"]["labour_hours"] == 4.0
        assert "failure_cost = 3900.0              # head repair estimate" in app.session.text
