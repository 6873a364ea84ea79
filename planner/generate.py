"""Invented fleets of any size, for benchmarks and scale tests. Seeded: same seed, same file.

Every id, label and engine code is made up, and the intervals are off-round figures of our own
(no maker's). Vehicles get a few years of odometer readings at a rate of their own, and a
belt-job history (on schedule, early, or failed) consistent with them.

    python -m planner.generate 10000 -o /tmp/fleet_10k.toml --seed 7
"""

from __future__ import annotations

import argparse
import datetime as dt
import random

PROFILES = {
    "gen-p14": ("petrol", "belt", "interference", 108300, 71, 2.5, 190.0, 3200.0),
    "gen-d20": ("diesel", "belt", "unknown", 151700, 97, 4.0, 320.0, 5100.0),
    "gen-p12": ("petrol", "belt", "non-interference", 88400, 61, 2.0, 150.0, 500.0),
    "gen-w10": ("petrol", "wet-belt", "interference", 137900, 113, 6.0, 300.0, 4300.0),
    "gen-c22": ("diesel", "chain", "interference", None, None, None, None, 5800.0),
    "gen-g30": ("diesel", "gear", "interference", None, None, None, None, None),
}
WEIGHTS = (30, 25, 20, 12, 10, 3)


def _profile_toml(pid: str, spec: tuple) -> str:
    fuel, drive, interference, dist, months, hours, parts_cost, failure = spec
    lines = [f"[engines.{pid}]", f'description = "Engine {pid} (invented)"', f'fuel = "{fuel}"',
             f'drive = "{drive}"', f'interference = "{interference}"']
    if dist is not None:
        lines += [f"interval_distance = {dist}", f"interval_months = {months}",
                  f"labour_hours = {hours}", f'parts = ["kit {pid}"]', f"parts_cost = {parts_cost}"]
    if failure is not None:
        lines.append(f"failure_cost = {failure}")
    return "\n".join(lines)


def generate_fleet_text(n: int, seed: int = 1, as_of: dt.date = dt.date(2026, 12, 1)) -> str:
    """A valid fleet file with `n` invented vehicles whose records end before `as_of`."""
    rng = random.Random(seed)
    out = [
        f"# Invented fleet of {n} vehicles, generated with seed {seed}. Nothing here is real.",
        "schema = 1",
        "[fleet]",
        f'name = "Generated fleet {n}"',
        'distance_unit = "km"',
        "default_daily_distance = 60",
        "labour_rate = 65.0",
        "",
    ]
    out += [_profile_toml(pid, spec) + "\n" for pid, spec in PROFILES.items()]
    ids = list(PROFILES)
    for k in range(n):
        pid = rng.choices(ids, WEIGHTS)[0]
        spec = PROFILES[pid]
        age_days = rng.randint(60, 12 * 365)
        start = as_of - dt.timedelta(days=age_days)
        rate = rng.choice((15, 40, 80, 150, 250)) * rng.uniform(0.7, 1.3)
        odo0 = 0 if rng.random() < 0.8 else rng.randint(20000, 90000)
        lines = ["[[vehicles]]", f'id = "G-{k:06d}"', f'label = "Generated vehicle {k}"',
                 f'engine = "{pid}"']
        if rng.random() < 0.15:
            lines.append('duty = "severe"')
        lines.append(f"in_service = {start.isoformat()}")
        if odo0:
            lines.append(f"in_service_odometer = {odo0}")
            if rng.random() < 0.3:
                lines.append('belt_history = "unknown"')
        # Readings: every 30-120 days over the last few years.
        readings = []
        day = max(start + dt.timedelta(days=rng.randint(5, 60)),
                  as_of - dt.timedelta(days=rng.randint(365, 4 * 365)))
        while day < as_of:  # readings and jobs lie on one line: odometers only go forward
            readings.append((day, _odometer(odo0, rate, start, day)))
            day += dt.timedelta(days=rng.randint(30, 120))
        fixed = readings
        if fixed:
            body = ",\n  ".join(f"{{ date = {d.isoformat()}, odometer = {o} }}" for d, o in fixed)
            lines.append(f"readings = [\n  {body},\n]")
        out.append("\n".join(lines))
        dist = spec[3]
        if dist is not None:
            out += _jobs(rng, start, odo0, rate, dist, as_of)
        out.append("")
    return "\n".join(out) + "\n"


def _odometer(odo0: int, rate: float, start: dt.date, day: dt.date) -> int:
    return int(odo0 + rate * (day - start).days)


def _jobs(rng: random.Random, start: dt.date, odo0: int, rate: float, interval: int,
          as_of: dt.date) -> list[str]:
    """Belt jobs at roughly the interval; some early, a few failed."""
    jobs = []
    at = odo0 + interval * rng.uniform(0.6, 1.05)
    while True:
        day = start + dt.timedelta(days=int((at - odo0) / rate))
        if day >= as_of - dt.timedelta(days=20):
            break
        reason = rng.choices(("scheduled", "precaution", "failed"), (80, 15, 5))[0]
        jobs.append("\n".join(["[[vehicles.belt_jobs]]", f"date = {day.isoformat()}",
                               f"odometer = {_odometer(odo0, rate, start, day)}",
                               f'reason = "{reason}"', 'work = "belt kit"']))
        at += interval * rng.uniform(0.6, 1.05)
    return jobs


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m planner.generate",
                                     description="Write an invented fleet file of N vehicles.")
    parser.add_argument("n", type=int, help="number of vehicles")
    parser.add_argument("-o", "--output", required=True, help="file to write")
    parser.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    args = parser.parse_args(argv)
    from pathlib import Path

    Path(args.output).write_text(generate_fleet_text(args.n, args.seed), encoding="utf-8")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
