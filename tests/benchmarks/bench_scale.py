"""Scale benchmark: prints figures and ratios against baselines measured in the same run.

    python tests/benchmarks/bench_scale.py            # 1,000 / 10,000 / 100,000 vehicles
    python tests/benchmarks/bench_scale.py --quick    # 1,000 / 10,000 only

Ratios, not seconds, are the figures to compare across machines (these machines are noisy):
- load + validate + plan ÷ bare `tomllib` parse of the same text (the floor for a TOML format);
- plan time at 100,000 ÷ plan time at 10,000 (linear growth gives 10);
- UI first screen with 5,000 vehicles ÷ an empty Textual app's first screen, and the time to
  apply a filter or a sort at 10,000 vehicles (see `ui_figures`);
- the same first screens from spawning the process, in a real pty (see `launch_figures`);
- peak memory (max RSS) of a process that loads and plans 100,000 vehicles.
Each timing is the best of several runs, to keep the noise of a shared machine out. The engine
figures run with the cyclic garbage collector off for the baseline and the work alike, as
`beltplan` runs its commands (and the UI its reading worker); the 10,000 ratio with it on is
printed too.
"""

from __future__ import annotations

import argparse
import datetime as dt
import gc
import os
import subprocess
import sys
import tempfile
import time
import tomllib
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from planner.fileio import parse_fleet_text
from planner.generate import generate_fleet_text
from planner.risk import assess_fleet_plan

AS_OF = dt.date(2026, 12, 7)


def best_of(runs: int, fn) -> float:
    best = float("inf")
    for _ in range(runs):
        start = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - start)
    return best


@contextmanager
def collector(on: bool) -> Iterator[None]:
    """The cyclic garbage collector on or off meanwhile (then as it was)."""
    was = gc.isenabled()
    (gc.enable if on else gc.disable)()
    try:
        yield
    finally:
        (gc.enable if was else gc.disable)()


def engine_figures(n: int, runs: int, gc_on: bool = False) -> dict[str, float]:
    """Baseline and work under the same collector setting: off, as the command line runs
    (`planner.cli.main`) and the UI's reading worker; `gc_on` for the reference figure."""
    text = generate_fleet_text(n, seed=7)
    raw = text.encode("utf-8")
    with collector(gc_on):
        parse = best_of(runs, lambda: tomllib.loads(raw.decode("utf-8")))

        def full() -> None:
            fleet = parse_fleet_text(raw.decode("utf-8"), "bench.toml")
            assess_fleet_plan(fleet, AS_OF)

        total = best_of(runs, full)
        fleet = parse_fleet_text(text, "bench.toml")
        plan = best_of(3, lambda: assess_fleet_plan(fleet, AS_OF))  # best of 3 at every size
    return {"n": n, "mb": len(raw) / 1e6, "parse": parse, "total": total, "plan": plan}


PEAK_SCRIPT = """
import gc, resource, sys, datetime as dt
gc.disable()  # as the command line runs
from planner.fileio import parse_fleet_text
from planner.risk import assess_fleet_plan
text = open(sys.argv[1], encoding="utf-8").read()
fleet = parse_fleet_text(text, "bench.toml")
assess_fleet_plan(fleet, dt.date(2026, 12, 7))
print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)
"""


def peak_memory_mb(n: int) -> float:
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "fleet.toml"
        path.write_text(generate_fleet_text(n, seed=7), encoding="utf-8")
        out = subprocess.run([sys.executable, "-c", PEAK_SCRIPT, str(path)], check=True,
                             capture_output=True, text=True).stdout
    return int(out.strip()) / 1024  # ru_maxrss is in KiB on Linux


def ui_figures() -> dict[str, float] | None:
    try:
        from tests.benchmarks.bench_ui import measure
    except ImportError:
        return None
    return measure()


def launch_figures() -> dict[str, float] | None:
    """From spawning the process to the first screen, in a pty (`bench_launch.py`)."""
    try:
        from tests.benchmarks.bench_launch import measure, pty_available
    except ImportError:  # no pyte (the test extra), or no POSIX terminals here
        return None
    return measure() if pty_available() else None


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__,
                                     formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--quick", action="store_true", help="skip 100,000 vehicles")
    args = parser.parse_args()
    sizes = [1000, 10000] if args.quick else [1000, 10000, 100000]
    print(f"beltplan scale benchmark on {os.cpu_count()} cores, Python "
          f"{sys.version.split()[0]}")
    rows = {}
    for n in sizes:
        rows[n] = engine_figures(n, runs=3 if n <= 10000 else 1)
        r = rows[n]
        print(f"  {n:>7,} vehicles ({r['mb']:6.1f} MB): tomllib parse {r['parse']:7.3f} s, "
              f"load+validate+plan {r['total']:7.3f} s, ratio {r['total'] / r['parse']:.2f}"
              f"{'  (goal at 10,000: <= 1.5)' if n == 10000 else ''}")
    ref = engine_figures(10000, runs=3, gc_on=True)
    print(f"   10,000 vehicles with the collector on (both sides): ratio "
          f"{ref['total'] / ref['parse']:.2f} ({ref['total']:.3f} s / {ref['parse']:.3f} s)")
    if 100000 in rows:
        growth = rows[100000]["plan"] / rows[10000]["plan"]
        print(f"  plan time 10,000 -> 100,000: {rows[10000]['plan']:.3f} s -> "
              f"{rows[100000]['plan']:.3f} s, ratio {growth:.2f} (goal: <= 11)")
        print(f"  peak memory loading and planning 100,000 vehicles: "
              f"{peak_memory_mb(100000):,.0f} MB")
    ui = ui_figures()
    if ui:
        print(f"  UI first screen, 5,000 vehicles: {ui['first']:.3f} s vs empty app "
              f"{ui['empty']:.3f} s, ratio {ui['first'] / ui['empty']:.2f} (goal: <= 2)")
        print(f"  UI filter at 10,000 vehicles: {ui['filter'] * 1000:.0f} ms, sort: "
              f"{ui['sort'] * 1000:.0f} ms (goal: < 100 ms)")
    launch = launch_figures()
    if launch:
        empty = launch["empty"]
        print(f"  launch to first screen (a real pty): empty app {empty * 1000:.0f} ms, courier "
              f"example {launch['small'] * 1000:.0f} ms, ratio {launch['small'] / empty:.2f}")
        print(f"  launch, 5,000 vehicles: first paint {launch['paint'] * 1000:.0f} ms, ratio "
              f"{launch['paint'] / empty:.2f}; full first screen {launch['first']:.3f} s, ratio "
              f"{launch['first'] / empty:.2f} (goal: <= 2)")
    return 0


if __name__ == "__main__":
    sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
    raise SystemExit(main())
