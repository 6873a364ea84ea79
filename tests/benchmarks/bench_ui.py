"""UI benchmark: the terminal UI's first screen, its filters and sorts, a re-plan, at scale.

    python tests/benchmarks/bench_ui.py          # prints the figures and ratios
    python tests/benchmarks/bench_scale.py       # the engine figures, then these

Everything runs headless in this process (`App.run_test(size=(160, 48))`), each timing the best
of a few runs (the machine is shared and noisy), and every ratio is against a baseline measured
in the same run:

- **empty**: an empty Textual app (one `Static`) from construction to its first screen on
  screen and the UI idle; **empty paint**: the same without waiting for idle;
- **first paint** (`paint`): the beltplan app on a generated 5,000-vehicle file, from
  construction to its first screen painted, whatever that screen is (the loading view: the file
  is read in a worker). Compared with the empty app's paint;
- **full first screen** (`first`): the same, until the screen shows the plan with the UI idle:
  the table holds all 5,000 rows, the first visible rows are the engine's first vehicles in
  triage order with their real cells, and the summary line gives the engine's own status
  counts. This includes reading, validating and planning the file: that is what the user waits
  for, with an empty fleet cache (`planner.fleetcache`): the file is parsed. **reopen**: the
  same with the fleet in the cache, as after the UI opened or saved that file before. `engine`
  is that work alone (`Session.read`: load, validate, plan) in the same run, and
  `load_stall` the longest the UI did not answer while it ran in the worker (`engine_cli`: the
  same work in a fresh interpreter, the garbage collector left as the command line has it);
- **drawn**: the UI's drawing alone: the app started on a session already read and planned
  (`DrawnApp`: no loading view, no worker) until the full first screen is on screen and the UI
  idle, at 5,000 vehicles and at none (`drawn_none`: the same screen on a fleet of no vehicles,
  "no vehicles yet" shown). What the UI adds for a big fleet, beside its fixed cost;
- **filter** / **sort** at 10,000 vehicles: from the action (`MainScreen.set_view`, what the
  filter and sort dialogs and the find box call) until the table holds the new order, the screen
  shows it and the UI is idle. Each is the worst of a few kinds (a status filter, clearing it
  again, a find-box query; a column sort, its reverse, back to triage order), each the best of a
  few runs;
- **re-plan** at 10,000 vehicles: from an edit being applied (a reading added, `apply_edit`)
  until the new plan is on screen and the UI idle, with the longest stall meanwhile; `check` is
  the edit's parse and validation of the whole text, which the form does before that.

"Painted" means the screen's compositor rendered to text the way a terminal driver would be fed
(Textual's headless driver skips the terminal write, so the benchmark does that rendering itself,
for the empty app too) and the text checked. "Idle" means the event loop answered a short sleep
on time for a while (QUIET), so work Textual defers to idle time is counted.
"""

from __future__ import annotations

import asyncio
import datetime as dt
import io
import os
import re
import subprocess
import sys
import tempfile
import time
from collections import Counter
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from importlib.metadata import version
from pathlib import Path
from typing import Any

if __name__ == "__main__":
    sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from rich.console import Console
from textual.app import App, ComposeResult
from textual.widgets import Static

from planner import fleetcache
from planner.edit import add_reading
from planner.fileio import load_fleet, parse_fleet_text
from planner.generate import generate_fleet_text
from planner.plan import Status
from planner.risk import assess_fleet_plan
from planner.tui import create_app
from planner.tui.app import BeltplanApp
from planner.tui.background import gc_paused
from planner.tui.look import THEME
from planner.tui.screens.main import MainScreen
from planner.tui.session import Session
from planner.tui.view import View

ROOT = Path(__file__).resolve().parents[2]
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


class Watch:
    """Polls the app (never a fixed sleep) and notes the longest the event loop did not answer."""

    def __init__(self) -> None:
        self.stall = 0.0

    async def settle(self, check: Callable[[], bool], what: str, start: float,
                     idle: bool = True) -> float:
        """Seconds from `start` until `check()` holds (and, with `idle`, the UI is idle).

        Idle: the event loop answers a short sleep on time for QUIET seconds in a row, so work
        Textual defers to idle time is counted, and a result that holds only until that work
        runs is not taken.
        """
        ready: float | None = None
        while True:
            before = time.perf_counter()
            await asyncio.sleep(POLL)
            after = time.perf_counter()
            self.stall = max(self.stall, after - before - POLL)
            if after - start > TIMEOUT:
                raise TimeoutError(f"no {what} after {TIMEOUT:.0f} s")
            if after - before > POLL + LATE and idle:
                ready = None  # the UI was busy: whatever was checked may change again
            elif ready is None:
                if check():
                    ready = after
                    if not idle:
                        return ready - start
            elif after - ready >= QUIET:
                return ready - start


async def settle(check: Callable[[], bool], what: str, start: float) -> float:
    return await Watch().settle(check, what, start)


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


async def time_empty() -> tuple[float, float]:
    """(paint, idle) of the empty app."""
    start = time.perf_counter()
    app = EmptyApp()
    async with app.run_test(size=SIZE):
        watch = Watch()
        paint = await watch.settle(lambda: "empty app" in screen_text(app), "empty app", start,
                                   idle=False)
        return paint, await watch.settle(lambda: "empty app" in screen_text(app), "empty app",
                                         start)


async def time_first(path: Path, want: Expected) -> tuple[float, float, float]:
    """(first paint, full first screen, longest stall meanwhile) of the app on `path`."""
    start = time.perf_counter()
    app = create_app(path, AS_OF)
    async with app.run_test(size=SIZE):
        watch = Watch()
        paint = await watch.settle(lambda: "beltplan" in screen_text(app), "first paint", start,
                                   idle=False)
        full = await watch.settle(lambda: _full(app, want), "full first screen", start)
    return paint, full, watch.stall


class DrawnApp(BeltplanApp):
    """The beltplan app started on a session already read and planned: only the drawing.

    What the UI itself adds for a fleet's size, with the file's reading and planning left out
    (the worker's part, `engine`); compared with the same on a fleet of no vehicles.
    """

    def on_mount(self, event: Any) -> None:
        event.prevent_default()  # not the app's own start: no loading view, no worker
        self.register_theme(THEME)
        self.theme = THEME.name
        self.push_screen(MainScreen())


async def time_drawn(session: Session, check: Callable[[App[Any]], bool]) -> float:
    """From constructing `DrawnApp` on `session` to its main screen on screen, UI idle."""
    start = time.perf_counter()
    app = DrawnApp(session)
    async with app.run_test(size=SIZE):
        return await settle(lambda: check(app), "the drawn screen", start)


def read_session(path: Path) -> Session:
    session = Session(path, AS_OF)
    assert session.adopt(session.read())
    return session


def time_engine(path: Path) -> float:
    """The engine's part of the worker's read: load, validate, plan (no UI), the GC paused as
    the worker has it."""
    start = time.perf_counter()
    with gc_paused():
        reading = Session(path, AS_OF).read()
    assert reading.planned is not None and len(reading.planned.records) == FIRST_N
    return time.perf_counter() - start


ENGINE_CLI = """
import datetime as dt, sys, time
from planner.tui.app import BeltplanApp
from planner.tui.look import THEME
from planner.tui.screens.main import MainScreen
from planner.tui.session import Session
start = time.perf_counter()
Session(sys.argv[1], dt.date(2026, 12, 7)).read()
print(time.perf_counter() - start)
"""


def time_engine_cli(path: Path) -> float:
    """The same work in a fresh interpreter with the GC as the command line has it."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    out = subprocess.run([sys.executable, "-c", ENGINE_CLI, str(path)], cwd=ROOT, env=env,
                         check=True, capture_output=True, text=True)
    return float(out.stdout.strip())


async def time_replan(path: Path, want: Expected, runs: int) -> dict[str, float]:
    """An edit at 10,000 vehicles: the whole-text check, then the re-plan in the worker."""
    app = create_app(path, AS_OF)
    best = {"check": float("inf"), "replan": float("inf"), "replan_stall": 0.0}
    async with app.run_test(size=SIZE):
        await settle(lambda: _full(app, want), "the plan on screen", time.perf_counter())
        session, table = app.session, app.main_screen().table
        vid = want.ids[0]
        for k in range(runs):
            assert session.fleet is not None
            vehicle = next(v for v in session.fleet.vehicles if v.id == vid)
            odometer = (vehicle.readings[-1].odometer if vehicle.readings else 0) + 500
            day = dt.date(2026, 12, 2) + dt.timedelta(days=k)  # after the last reading
            text = add_reading(session.text, vid, day, odometer)
            start = time.perf_counter()
            session.check(text)  # what the form's apply does before it closes
            best["check"] = min(best["check"], time.perf_counter() - start)
            start = time.perf_counter()
            app.apply_edit(text, "benchmark reading")
            watch = Watch()
            elapsed = await watch.settle(lambda: (
                session.planned and not app.planning and table.records is session.records()
                and _rows_painted(screen_text(app), table.ordered_keys)), "the re-plan", start)
            row = next(r for r in table.records if r["id"] == vid)
            assert row["est_odometer"] >= odometer, "the table does not show the new reading"
            best["replan"] = min(best["replan"], elapsed)
            best["replan_stall"] = max(best["replan_stall"], watch.stall)
    return best


def _ordered_ids(table: Any) -> list[str]:
    """The row keys in the order the table shows them."""
    return list(table.ordered_keys)


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


@contextmanager
def cache_at(folder: str) -> Iterator[None]:
    """The fleet cache (`planner.fleetcache`) in `folder` meanwhile ("off": none)."""
    saved = os.environ.get(fleetcache.ENV)
    os.environ[fleetcache.ENV] = folder
    try:
        yield
    finally:
        if saved is None:
            del os.environ[fleetcache.ENV]
        else:
            os.environ[fleetcache.ENV] = saved


async def _measure(runs: int) -> dict[str, Any]:
    with tempfile.TemporaryDirectory() as tmp:
        first_path = Path(tmp) / "fleet_5k.toml"
        first_text = generate_fleet_text(FIRST_N, seed=7)
        first_path.write_text(first_text, encoding="utf-8")
        action_path = Path(tmp) / "fleet_10k.toml"
        action_text = generate_fleet_text(ACTION_N, seed=7)
        action_path.write_text(action_text, encoding="utf-8")
        first_want, action_want = Expected(first_text), Expected(action_text)

        r: dict[str, Any] = {k: float("inf") for k in
                             ("empty_paint", "empty", "paint", "first", "engine", "engine_cli",
                              "reopen")}
        r["load_stall"] = 0.0
        warm = str(Path(tmp) / "warm-cache")
        with cache_at(warm):
            loaded = load_fleet(first_path)
            assert fleetcache.put(loaded.digest, loaded.fleet), "the cache cannot be written"
        for k in range(runs):  # interleaved, so a noisy moment hits each alike
            empty_paint, empty = await time_empty()
            with cache_at(str(Path(tmp) / f"cold-{k}")):  # empty: the file is parsed
                paint, full, stall = await time_first(first_path, first_want)
            with cache_at(warm):  # as after the UI opened or saved the file before
                _, reopen, _ = await time_first(first_path, first_want)
            with cache_at("off"):
                engine, engine_cli = time_engine(first_path), time_engine_cli(first_path)
            for key, value in (("empty_paint", empty_paint), ("empty", empty), ("paint", paint),
                               ("first", full), ("engine", engine), ("engine_cli", engine_cli),
                               ("reopen", reopen)):
                r[key] = min(r[key], value)
            r["load_stall"] = max(r["load_stall"], stall)
        none_path = Path(tmp) / "fleet_0.toml"
        none_path.write_text(generate_fleet_text(0, seed=7), encoding="utf-8")
        with cache_at("off"):
            drawn_full, drawn_none = read_session(first_path), read_session(none_path)
        r["drawn"] = r["drawn_none"] = float("inf")
        for _ in range(runs + 2):
            r["drawn"] = min(r["drawn"], await time_drawn(drawn_full,
                                                          lambda app: _full(app, first_want)))
            r["drawn_none"] = min(r["drawn_none"], await time_drawn(
                drawn_none, lambda app: "no vehicles yet" in screen_text(app)))
        with cache_at("off"):  # never the user's own cache
            steps = await time_actions(action_path, action_want, runs + 2)  # cheap: more runs
            r.update(await time_replan(action_path, action_want, runs=3))
    r["steps"] = steps
    r["filter"] = max(v for k, v in steps.items() if k.startswith("filter"))
    r["sort"] = max(v for k, v in steps.items() if k.startswith("sort"))
    return r


def measure(runs: int = 3) -> dict[str, Any]:
    """The UI figures in seconds: "first", "empty", "filter", "sort" (what bench_scale prints),
    and "reopen" (the first screen with the fleet cached), "drawn", "drawn_none", "paint", "empty_paint", "engine", "engine_cli", "load_stall", "check", "replan",
    "replan_stall", "steps" (each filter and sort)."""
    return asyncio.run(_measure(runs))


def main() -> int:
    print(f"beltplan UI benchmark on {os.cpu_count()} cores, Python {sys.version.split()[0]}, "
          f"Textual {version('textual')}, terminal {SIZE[0]}x{SIZE[1]} (headless), best of 3")
    r = measure()
    ms = 1000
    print(f"  empty Textual app: painted {r['empty_paint'] * ms:.0f} ms, "
          f"on screen and idle {r['empty'] * ms:.0f} ms")
    print(f"  {FIRST_N:,} vehicles, first paint (loading view): {r['paint'] * ms:.0f} ms, "
          f"ratio {r['paint'] / r['empty_paint']:.2f} to the empty app's paint")
    print(f"  {FIRST_N:,} vehicles, full first screen: {r['first']:.3f} s, "
          f"ratio {r['first'] / r['empty']:.2f} (goal: <= 2)")
    print(f"  {FIRST_N:,} vehicles opened again, the fleet cached: {r['reopen']:.3f} s, "
          f"ratio {r['reopen'] / r['empty']:.2f}")
    print(f"      of which the engine (load, validate, plan): {r['engine']:.3f} s as the "
          f"worker runs it, GC paused ({r['engine_cli']:.3f} s in a fresh interpreter with the "
          f"GC on); the UI's own part: {(r['first'] - r['engine']) * ms:.0f} ms")
    print(f"      longest the UI did not answer while loading: {r['load_stall'] * ms:.0f} ms")
    print(f"  the UI's drawing alone (the plan at hand, no loading view): {FIRST_N:,} vehicles "
          f"{r['drawn'] * ms:.0f} ms, no vehicles {r['drawn_none'] * ms:.0f} ms, ratio "
          f"{r['drawn'] / r['drawn_none']:.2f}; ratio {r['drawn'] / r['empty']:.2f} to the "
          "empty Textual app")
    for name, seconds in r["steps"].items():
        print(f"  {ACTION_N:,} vehicles, {name:<24} {seconds * ms:5.0f} ms")
    print(f"  filter (worst kind) {r['filter'] * ms:.0f} ms, sort (worst kind) "
          f"{r['sort'] * ms:.0f} ms (goal: < 100 ms)")
    print(f"  {ACTION_N:,} vehicles, an edit: whole-text check {r['check']:.3f} s (in the form, "
          f"on the UI thread), re-plan in the worker {r['replan']:.3f} s with the UI's longest "
          f"stall {r['replan_stall'] * ms:.0f} ms")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
