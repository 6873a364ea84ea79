"""Shared helpers for the UI tests (imported by the other test_tui_* modules; no tests here).

Every test builds the app with the same factory the command line uses, at the fixed planning
date below, and waits for conditions with a capped loop of `pilot.pause()`, never a sleep.
"""

from __future__ import annotations

import asyncio
import datetime as dt
import functools
import io
import shutil
from collections.abc import Callable, Coroutine
from pathlib import Path
from typing import Any

from rich.console import Console
from textual.pilot import Pilot
from textual.widgets import Input, Select

from planner.tui import create_app
from planner.tui.app import BeltplanApp

AS_OF = dt.date(2026, 12, 7)
ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "fleet_examples" / "courier_fleet.toml"
SMALL = (80, 24)
LARGE = (160, 48)


def sync(test: Callable[..., Coroutine[Any, Any, None]]) -> Callable[..., None]:
    """Run an async test with asyncio.run (the test extra has no asyncio plugin)."""
    @functools.wraps(test)
    def run(*args: Any, **kwargs: Any) -> None:
        asyncio.run(test(*args, **kwargs))

    return run


def copy_example(tmp_path: Path, name: str = "fleet.toml") -> Path:
    """A private copy of the courier fleet, for any test that may save."""
    target = tmp_path / name
    shutil.copyfile(EXAMPLE, target)
    return target


def make_app(path: Path | str = EXAMPLE, as_of: dt.date = AS_OF) -> BeltplanApp:
    return create_app(path, as_of)


async def until(pilot: Pilot, condition: Callable[[], object], tries: int = 60,
                what: str = "") -> None:
    """Let the app run until `condition()` is true (at most `tries` pauses)."""
    for _ in range(tries):
        if condition():
            return
        await pilot.pause()
    assert condition(), f"timed out waiting for {what or condition}"


def screen_name(app: BeltplanApp) -> str:
    return type(app.screen).__name__


async def opened(pilot: Pilot) -> BeltplanApp:
    """Wait until the app shows its first view (the list or the error view)."""
    app = pilot.app
    await until(pilot, lambda: screen_name(app) in ("MainScreen", "ErrorScreen"), what="start")
    await pilot.pause()
    return app  # type: ignore[return-value]


def still_cursor(app: BeltplanApp) -> None:
    """No blinking text cursors (snapshots would differ by one cell)."""
    for widget in app.screen.query(Input):
        widget.cursor_blink = False


def fill(app: BeltplanApp, **values: str) -> None:
    """Type values into the form's text fields (by field name)."""
    for name, text in values.items():
        app.screen.query_one(f"#f-{name}", Input).value = text


def text_of(renderable: object) -> str:
    """Plain text of a widget's content (Text, Table, Group …), styles dropped."""
    content = getattr(renderable, "content", renderable)
    console = Console(width=200, file=io.StringIO(), color_system=None, record=True)
    console.print(content)
    return console.export_text()


def problems_text(app: BeltplanApp) -> str:
    return text_of(app.screen.query_one("#problems"))


def listed_ids(app: BeltplanApp) -> list[str]:
    main = app.main_screen()
    assert main is not None
    return [r["id"] for r in main.table.listed]


async def record_job(pilot: Pilot, odometer: str = "226000") -> None:
    """Record a scheduled belt job on the highlighted vehicle through the form."""
    app = pilot.app
    await pilot.press("j")
    await until(pilot, lambda: screen_name(app) == "FormScreen")
    fill(app, odometer=odometer, work="belt kit, water pump")
    app.screen.query_one("#f-reason", Select).value = "scheduled"
    await pilot.press("ctrl+o")
    await until(pilot, lambda: screen_name(app) != "FormScreen", what="job recorded")
