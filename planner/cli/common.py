"""Helpers shared by the command modules: options, dates, loading, writing output."""

from __future__ import annotations

import argparse
import datetime as dt
import difflib
import sys
from collections.abc import Sequence
from pathlib import Path

from planner.dates import parse_day
from planner.errors import PlannerError
from planner.fileio import LoadedFleet, load_fleet, write_output
from planner.safetext import shown

EXIT_USER_ERROR = 2


def fail(err: PlannerError) -> int:
    print(f"beltplan: {err.render()}", file=sys.stderr)
    return EXIT_USER_ERROR


def lines_shown(text: str) -> str:
    """A report built here, line by line, with the file text in it made inert: every
    character `safetext.shown` escapes but the line ends the report's own lines are joined by.
    (Ids are single-line by validation; other file text is shown where it is put in.)"""
    return "\n".join(shown(line) for line in text.split("\n"))


def say(text: str = "", file: object = None) -> None:
    """`print` of a report line that holds file text (`lines_shown`)."""
    print(lines_shown(text), file=file or sys.stdout)


def iso_date(text: str) -> dt.date:
    """argparse type for ISO 8601 calendar dates, inside the fleet file's years."""
    try:
        return parse_day(text)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def add_as_of(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--as-of", type=iso_date, metavar="DATE", default=None,
                        help="planning date, YYYY-MM-DD (default: today)")


def as_of_or_today(args: argparse.Namespace) -> dt.date:
    # The clock is read here, at the edge, never inside the engine.
    return args.as_of or dt.date.today()


def pick_words(text: str, allowed: Sequence[str], what: str) -> list[str]:
    """Split 'a,b' and check each word against `allowed`; unknown words are an error."""
    words = [w.strip() for w in text.split(",") if w.strip()]
    if not words:
        raise PlannerError(f"no {what} given", f"choose from: {', '.join(allowed)}")
    for w in words:
        if w not in allowed:
            near = difflib.get_close_matches(w, allowed, n=1)
            hint = f" (did you mean {near[0]!r}?)" if near else ""
            raise PlannerError(f"unknown {what} {w!r}{hint}",
                               f"choose from: {', '.join(allowed)}")
    return words


def load(path: str) -> LoadedFleet:
    return load_fleet(path)


def emit(text: str, out: str | None, fleet_path: Path | None = None, what: str = "") -> None:
    """Print `text`, or write it to `out` and say where it went: a file is replaced
    atomically, a stream, FIFO or device written into (`fileio.write_output`)."""
    if out is None or out == "-":
        sys.stdout.write(text)
        return
    target = Path(out)
    if fleet_path is not None and target.resolve() == fleet_path.resolve():
        raise PlannerError(f"refusing to write over the fleet file {out}",
                           "Choose another output path with -o.")
    write_output(target, text.encode("utf-8"))
    print(f"wrote {what + ' to ' if what else ''}{shown(str(target))}", file=sys.stderr)
