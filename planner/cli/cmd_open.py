"""`beltplan [FILE]`: open the terminal UI on a fleet file (default ./fleet.toml)."""

from __future__ import annotations

import argparse

from planner.cli.common import add_as_of


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("open", help="open the terminal UI on a fleet file")
    p.add_argument("file", nargs="?", default="fleet.toml",
                   help="fleet file (default: fleet.toml in this folder)")
    add_as_of(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    # Until the terminal UI exists, opening a file shows its plan.
    from planner.cli import cmd_list

    ns = argparse.Namespace(file=args.file, as_of=args.as_of, status=None, format="table",
                            unit=None, output=None)
    return cmd_list.run(ns)
