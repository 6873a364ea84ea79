"""`beltplan check FILE`: validate a fleet file."""

from __future__ import annotations

import argparse

from planner.caution import CAUTION, caution_block
from planner.cli.common import load
from planner.fileio import warnings_of
from planner.safetext import shown


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "check", help="validate a fleet file and list every problem",
        description="Validate a fleet file: every problem is listed with its line, vehicle and "
        "field, and how to fix it. Warnings (a fact missing to plan a belt, a doubtful record, "
        "an old key name) follow the \"valid\" line: the file is planned, the vehicles "
        "concerned as needing attention now. Exit status 0 when the file is valid (with or "
        "without warnings), 2 when not.",
        epilog="example:\n  beltplan check fleet_examples/courier_fleet.toml\n\n" + caution_block(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", help="fleet file (TOML)")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    loaded = load(args.file)
    fleet = loaded.fleet
    n = len(fleet.vehicles)
    print(f"{shown(args.file)}: valid: {n} vehicle{'s' if n != 1 else ''}, "
          f"{len(fleet.engines)} engine profile{'s' if len(fleet.engines) != 1 else ''}, "
          f"distances in {fleet.unit}")
    found = warnings_of(loaded)
    if found:
        print(f"{len(found)} warning{'s' if len(found) != 1 else ''}: planned, but see to these")
        for p in found:
            print(p.render())
        print("Caution: " + CAUTION)  # the warnings advise: the caution goes with them
    return 0
