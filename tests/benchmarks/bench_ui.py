"""UI benchmark: the terminal UI's first screen and its filter and sort, at fleet scale.

    python tests/benchmarks/bench_ui.py          # prints the figures and ratios
    python tests/benchmarks/bench_scale.py       # the engine figures, then these

Everything runs headless in this process (`App.run_test(size=(160, 48))`), each timing the best
of a few runs (the machine is shared and noisy), and every ratio is against a baseline measured
in the same run:

- **empty**: an empty Textual app (one `Static`) from construction to its first screen painted;
- **first paint** (`paint`): the beltplan app on a generated 5,000-vehicle file, from
  construction to its first screen painted, whatever that screen is (a loading view, when the
  file is read in a worker);
- **full first screen** (`first`): the same, until the screen shows the plan: the table holds
  all 5,000 rows, the first visible rows are the engine's first vehicles in triage order with
  their real cells, and the summary line gives the engine's own status counts. This includes
  reading, validating and planning the file: that is what the user waits for;
- **filter** / **sort** at 10,000 vehicles: from the action (`MainScreen.set_view`, what the
  filter and sort dialogs and the find box call) until the table holds the new order and the
  screen shows its first rows. Each is the worst of a few kinds (a status filter, clearing it
  again, a find-box query; a column sort, its reverse, back to triage order), each the best of
  a few runs.

"Painted" means the screen's compositor rendered to text the way a terminal driver would be fed
(Textual's headless driver skips the terminal write, so the benchmark does that rendering itself,
for the empty app too) and the text checked.
"""

from __future__ import annotations

import asyncio
import datetime as dt
import io
import os
import re
import sys
import tempfile
import time
from collections import Counter
from collections.abc import Callable
from pathlib import Path
from typing import Any

if __name__ == "__main__":
    sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from rich.console import Console
from textual.app import App, ComposeResult
from textual.widgets import Static

from planner.fileio import parse_fleet_text
from planner.generate import generate_fleet_text
from planner.plan import Status
from planner.risk import assess_fleet_plan
from planner.tui import create_app
from planner.tui.view import View

AS_OF = dt.date(2026, 12, 7)
SIZE = (160, 48)
FIRST_N = 5000
ACTION_N = 10000
TIMEOUT = 120.0  # seconds: a run that takes longer is a failure, not a figure
POLL = 0.002  # seconds between looks at the app
LATE = 0.004  # a poll answered later than this was held up by work on the UI thread
QUIET = 0.03  # idle for this long after the check holds: done
ID = re.compile(r"G-\d{6}")  # the generator's vehicle ids
MIN_ROWS = 30  # a 48-line terminal shows at least this many table rows


class EmptyApp(App[None]):
    """The baseline: Textual's smallest app with something on screen."""

    def compose(self) -> ComposeResult:
        yield Static("empty app")


def screen_text(app: App[Any]) -> str:
    """The current screen as a terminal would receive it, as plain text."""
    width, height = app.size
    console = Console(width=width, height=height, file=io.StringIO(), force_terminal=True,
                      color_system="truecolor", record=True, legacy_windows=False,
                      safe_box=False)
    console.print(app.screen._compositor.render_update(
        full=True, screen_stack=app._background_screens))
    return console.export_text(styles=False)


async def settle(check: Callable[[], bool], what: str, start: float) -> float:
    """Seconds from `start` until `check()` holds with the UI idle (polled, never a fixed sleep).

    "Idle": the event loop answers a short sleep on time for QUIET seconds in a row, so work
    Textual defers to idle time (the DataTable sizes its new rows then) is counted, and a
    result that holds only until that work runs is not taken.
    """
    ready: float | None = None
    while True:
        before = time.perf_counter()
        await asyncio.sleep(POLL)
        after = time.perf_counter()
        if after - start > TIMEOUT:
            raise TimeoutError(f"no {what} after {TIMEOUT:.0f} s")
        if after - before > POLL + LATE:
            ready = None  # the UI was busy: whatever was checked may change again
        elif ready is None:
            if check():
                ready = after
        elif after - ready >= QUIET:
            return ready - start


class Expected:
    """What a full first screen must show, worked out from the engine, not from the UI."""

    def __init__(self, text: str) -> None:
        plans = assess_fleet_plan(parse_fleet_text(text, "bench.toml"), AS_OF).plans
        self.n = len(plans)
        self.ids = [p.id for p in plans]
        counts = Counter(p.status.value for p in plans)
        self.summary = f"{self.n} vehicles: "
        self.counts = [f"{counts[s.value]} {s.value}" for s in Status if counts[s.value]]
        self.status = {p.id: p.status.value for p in plans}
        self.days = {p.id: p.days_remaining for p in plans}


def _table(app: Any) -> Any:
    main = app.main_screen() if hasattr(app, "main_screen") else None
    return main.table if main is not None else None


def _rows_painted(text: str, ids: list[str], first: bool = False) -> bool:
    """The screen shows a run of `ids` in that order (from the first one when `first`).

    A run, not necessarily the first rows: the table keeps the cursor on its vehicle, so after
    a filter is cleared the screen shows the rows around it.
    """
    seen = list(dict.fromkeys(ID.findall(text)))  # the row line repeats the cursor's id
    if len(seen) < min(len(ids), MIN_ROWS) or not seen:
        return False
    try:
        at = 0 if first else ids.index(seen[0])
    except ValueError:
        return False
    return ids[at:at + len(seen)] == seen


def _full(app: Any, want: Expected) -> bool:
    """The table holds every row in triage order and the screen shows the first ones."""
    table = _table(app)
    if table is None or table.row_count != want.n:
        return False
    text = screen_text(app)
    summary = next((line for line in text.splitlines() if want.summary in line), "")
    return (_rows_painted(text, want.ids, first=True) and all(c in summary for c in want.counts)
            and want.status[want.ids[0]] in text)


async def time_empty() -> float:
    start = time.perf_counter()
    app = EmptyApp()
    async with app.run_test(size=SIZE):
        return await settle(lambda: "empty app" in screen_text(app), "empty app", start)


async def time_first(path: Path, want: Expected) -> tuple[float, float]:
    """(first paint, full first screen) of the app on `path`."""
    start = time.perf_counter()
    app = create_app(path, AS_OF)
    async with app.run_test(size=SIZE):
        paint = await settle(lambda: "beltplan" in screen_text(app), "first paint", start)
        full = await settle(lambda: _full(app, want), "full first screen", start)
    return paint, full


def _ordered_ids(table: Any) -> list[str]:
    return [row.key.value for row in table.ordered_rows]


async def time_actions(path: Path, want: Expected, runs: int) -> dict[str, float]:
    """Best of `runs` for each kind of filter and sort, on one open app."""
    app = create_app(path, AS_OF)
    every = View()
    overdue = [v for v in want.ids if want.status[v] == "overdue"]
    query_ids = [v for v in want.ids if "g-0012" in v.casefold()]
    known = sorted((v for v in want.ids if want.days[v] is not None),
                   key=lambda v: want.days[v])
    unknown = [v for v in want.ids if want.days[v] is None]
    by_days = known + unknown  # a stable sort keeps triage order among equal days
    by_days_rev = sorted(known, key=lambda v: want.days[v], reverse=True) + unknown
    steps: list[tuple[str, str, View, list[str]]] = [
        ("filter", "status overdue", every.with_(statuses=frozenset({"overdue"})), overdue),
        ("filter", "clear the filter", every, want.ids),
        ("filter", "find 'g-0012'", every.with_(query="g-0012"), query_ids),
        ("filter", "clear the find", every, want.ids),
        ("sort", "by days left", every.with_(sort="days_remaining"), by_days),
        ("sort", "reversed", every.with_(sort="days_remaining", reverse=True), by_days_rev),
        ("sort", "triage order", every, want.ids),
    ]
    best: dict[str, float] = {}
    async with app.run_test(size=SIZE):
        await settle(lambda: _full(app, want), "the plan on screen", time.perf_counter())
        main = app.main_screen()
        table = main.table
        for _ in range(runs):
            for kind, name, view, ids in steps:
                start = time.perf_counter()
                main.set_view(view)
                elapsed = await settle(lambda ids=ids: (
                    table.row_count == len(ids) and _ordered_ids(table)[:3] == ids[:3]
                    and _rows_painted(screen_text(app), ids)), f"{kind} {name}", start)
                assert _ordered_ids(table) == ids, f"{kind} {name}: wrong rows or order"
                key = f"{kind}: {name}"
                best[key] = min(best.get(key, float("inf")), elapsed)
    return best


async def _measure(runs: int) -> dict[str, Any]:
    with tempfile.TemporaryDirectory() as tmp:
        first_path = Path(tmp) / "fleet_5k.toml"
        first_text = generate_fleet_text(FIRST_N, seed=7)
        first_path.write_text(first_text, encoding="utf-8")
        action_path = Path(tmp) / "fleet_10k.toml"
        action_text = generate_fleet_text(ACTION_N, seed=7)
        action_path.write_text(action_text, encoding="utf-8")
        first_want, action_want = Expected(first_text), Expected(action_text)

        empty = paint = full = float("inf")
        for _ in range(runs):  # interleaved, so a noisy moment hits both alike
            empty = min(empty, await time_empty())
            p, f = await time_first(first_path, first_want)
            paint, full = min(paint, p), min(full, f)
        steps = await time_actions(action_path, action_want, runs)
    return {
        "empty": empty, "paint": paint, "first": full,
        "filter": max(v for k, v in steps.items() if k.startswith("filter")),
        "sort": max(v for k, v in steps.items() if k.startswith("sort")),
        "steps": steps,
    }


def measure(runs: int = 3) -> dict[str, Any]:
    """The UI figures in seconds: "empty", "paint", "first", "filter", "sort" (and "steps")."""
    return asyncio.run(_measure(runs))


def main() -> int:
    print(f"beltplan UI benchmark on {os.cpu_count()} cores, Python {sys.version.split()[0]}, "
          f"terminal {SIZE[0]}x{SIZE[1]} (headless), best of 3")
    r = measure()
    print(f"  empty Textual app, first screen:     {r['empty']:.3f} s")
    print(f"  {FIRST_N:,} vehicles, first paint:       {r['paint']:.3f} s, "
          f"ratio {r['paint'] / r['empty']:.2f}")
    print(f"  {FIRST_N:,} vehicles, full first screen: {r['first']:.3f} s, "
          f"ratio {r['first'] / r['empty']:.2f} (goal: <= 2)")
    for name, seconds in r["steps"].items():
        print(f"  {ACTION_N:,} vehicles, {name:<28} {seconds * 1000:6.0f} ms")
    print(f"  filter (worst kind) {r['filter'] * 1000:.0f} ms, sort (worst kind) "
          f"{r['sort'] * 1000:.0f} ms (goal: < 100 ms)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
