"""The UI tells of warnings: after a read (a fact missing, an old key), and when a belt job is
recorded twice."""

from __future__ import annotations

from planner.tui import create_app
from tests.test_tui_support import (
    AS_OF,
    SMALL,
    copy_example,
    opened,
    record_job,
    sync,
    until,
)


@sync
async def test_a_read_with_warnings_says_so(tmp_path):
    # The courier example's KL-05 is on severe duty and its profile has no severe interval.
    app = create_app(copy_example(tmp_path), AS_OF)
    async with app.run_test(size=SMALL, notifications=True) as pilot:
        await opened(pilot)
        await until(pilot, lambda: "warning" in app.load_notice, what="notice")
        assert "KL-05" in app.load_notice and "severe" in app.load_notice


@sync
async def test_recording_the_same_belt_job_twice_warns(tmp_path):
    app = create_app(copy_example(tmp_path), AS_OF)
    async with app.run_test(size=SMALL, notifications=True) as pilot:
        await opened(pilot)
        await record_job(pilot, odometer="400000")
        assert "Belt job recorded" in app.last_message
        assert "twice" not in app.last_message
        await record_job(pilot, odometer="400000")
        assert "Belt job recorded" in app.last_message
        assert "recorded twice" in app.last_message



def test_the_detail_view_gives_no_risk_figure_for_a_missing_fact():
    from planner.tui.widgets import detail_parts

    said = detail_parts.risk({"status": "missing-fact", "p_fail_horizon": None,
                              "expected_loss": None}, "").plain
    assert "fact is missing" in said and "does not apply" not in said
