"""Hostile-input benchmark: broken fleet files whose messages must come in time linear in size.

    python tests/benchmarks/bench_hostile.py            # each case at n and 4n
    python tests/benchmarks/bench_hostile.py --scale 4  # larger n (x4)

For each case it prints the seconds at n and at 4n and their ratio (linear growth gives about 4,
quadratic about 16), and beside them a bare `tomllib` parse of the 4n text: the standard
library's share, which the planner cannot go below (tomllib walks strings character by
character, and a deep key's cost grows with the square of its depth: the planner refuses a key
of more than `locate.MAX_KEY_NAMES` names before tomllib sees it, so that column is what tomllib
alone would take). Every case must end in a `PlannerError` (the messages a user reads), never a
traceback or a hang. The cases (`CASES`, shared with tests/test_hostile.py):
- quoted dates: one vehicle with n readings whose dates are in quotes (n wrong types);
- quoted odometers over many vehicles: n vehicles, each with a quoted odometer;
- deep header: a table header n names deep, `[a.a.a. … .a]`;
- deep dotted key: a key n names deep, `a.a. … .a = 1`;
- long string: a bad file with a note of n×1,000 characters (the locator walks past it);
- unknown keys: n misspelt keys in one vehicle.
"""

from __future__ import annotations

import argparse
import time
import tomllib
from collections.abc import Callable

from planner.errors import PlannerError
from planner.fileio import parse_fleet_text

HEAD = """schema = 1
[engines.p1]
drive = "belt"
interval_distance = 99000
interval_months = 59
"""

VEHICLE = """
[[vehicles]]
id = "V{k}"
engine = "p1"
in_service = 2020-01-01
"""


def quoted_dates(n: int) -> str:
    rows = ",\n".join(f'  {{ date = "2021-01-{1 + k % 28:02d}", odometer = {k} }}'
                      for k in range(n))
    return HEAD + VEHICLE.format(k=1) + f"readings = [\n{rows}\n]\n"


def quoted_odometers(n: int) -> str:
    return HEAD + "".join(VEHICLE.format(k=k) + 'in_service_odometer = "12"\n'
                          for k in range(n))


def deep_header(n: int) -> str:
    return HEAD + "[" + ".".join(["a"] * n) + "]\nx = 1\n" + VEHICLE.format(k=1)


def deep_dotted_key(n: int) -> str:
    return HEAD + VEHICLE.format(k=1) + ".".join(["a"] * n) + " = 1\n"


def long_string(n: int) -> str:
    return (HEAD + VEHICLE.format(k=1) + 'notes = "' + "x" * (n * 1000) + '"\n'
            + 'in_service_odometer = "12"\n')


def unknown_keys(n: int) -> str:
    return HEAD + VEHICLE.format(k=1) + "".join(f"labl{k} = 1\n" for k in range(n))


# name -> (text of size n, n for the benchmark)
CASES: dict[str, tuple[Callable[[int], str], int]] = {
    "quoted dates": (quoted_dates, 4000),
    "quoted odometers": (quoted_odometers, 2000),
    "deep header": (deep_header, 10000),
    "deep dotted key": (deep_dotted_key, 10000),
    "long string": (long_string, 12500),
    "unknown keys": (unknown_keys, 4000),
}


def messages(text: str) -> PlannerError:
    """The error a user would read for `text` (AssertionError if the file was accepted)."""
    try:
        parse_fleet_text(text, "hostile.toml")
    except PlannerError as err:
        return err
    raise AssertionError("a hostile file was accepted")


def seconds(text: str, runs: int = 3) -> float:
    best = float("inf")
    for _ in range(runs):
        t0 = time.perf_counter()
        messages(text)
        best = min(best, time.perf_counter() - t0)
    return best


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--scale", type=int, default=1, help="multiply every n by this")
    parser.add_argument("--only", help="run only the case whose name contains this")
    args = parser.parse_args()
    print(f"{'case':<18} {'n':>9} {'MB at 4n':>8} {'s at n':>8} {'s at 4n':>8} {'ratio':>6} "
          f"{'tomllib':>8}")
    for name, (make, n) in CASES.items():
        if args.only and args.only not in name:
            continue
        n *= args.scale
        small, large = make(n), make(4 * n)
        t1, t4 = seconds(small), seconds(large)
        print(f"{name:<18} {n:>9,} {len(large) / 1e6:>8.1f} {t1:>8.3f} {t4:>8.3f} "
              f"{t4 / t1:>6.1f} {floor(large):>8}", flush=True)


def floor(text: str) -> str:
    """Seconds of a bare `tomllib` parse of the same text: the standard library's own share."""
    t0 = time.perf_counter()
    try:
        tomllib.loads(text)
    except tomllib.TOMLDecodeError:
        pass
    except RecursionError:
        return "-"
    return f"{time.perf_counter() - t0:.3f}"


if __name__ == "__main__":
    main()
