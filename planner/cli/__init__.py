"""The command line: `beltplan COMMAND …`, or `beltplan [FILE]` to open the terminal UI.

Each command lives in its own module with a `register(subparsers)` that adds its parser and sets
`run`; this package only dispatches. Every user-caused error is a `PlannerError`: printed, exit 2.
"""

from __future__ import annotations

import argparse
import errno
import gc
import importlib
import os
import sys
from collections.abc import Sequence

from planner import __version__
from planner.caution import caution_block
from planner.cli.common import EXIT_USER_ERROR, fail
from planner.errors import PlannerError

# One line per command module; the order is the order of `beltplan --help`.
COMMANDS = ("check", "import", "list", "readings", "risk", "week", "schema")
NO_CYCLES = ("check", "list", "risk", "week", "schema")  # read, plan, print: no edited TOML

DESCRIPTION = """\
Timing-belt service and failure-risk planner.

Reads a TOML fleet file and tells which cam drives are overdue or near their limit, by distance
or age, whichever comes first, projected from odometer readings, and what a failure would cost.
"""

EPILOG = """\
examples:
  beltplan fleet_examples/courier_fleet.toml      open the terminal UI on a fleet file
  beltplan                                        open ./fleet.toml (offers to create it)
  beltplan list fleet_examples/courier_fleet.toml
  beltplan list fleet.toml --status overdue --format csv -o overdue.csv
  beltplan check fleet.toml
  beltplan COMMAND --help      more on one command

"""


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="beltplan", description=DESCRIPTION + "\n" + caution_block(), epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"beltplan {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        importlib.import_module(f"planner.cli.cmd_{name.replace('-', '_')}").register(sub)
    return parser


# What writing to standard output can meet: a full disk, a closed pipe or descriptor, a device
# error, a quota or size limit.
_OUTPUT_ERRORS = {errno.ENOSPC, errno.EPIPE, errno.EBADF, errno.EIO, errno.EDQUOT, errno.EFBIG}


def _quiet_stdout() -> None:
    """Point standard output at the null device, so that the interpreter's last flush on exit
    does not fail again on what could not be written."""
    try:
        null = os.open(os.devnull, os.O_WRONLY)
        os.dup2(null, sys.stdout.fileno())
        os.close(null)
    except (OSError, ValueError, AttributeError):
        pass


def main(argv: Sequence[str] | None = None) -> int:
    args_in = list(sys.argv[1:] if argv is None else argv)
    # `beltplan [FILE] [options]` (no command word) opens the terminal UI: only its own parser
    # is built, so the UI does not wait for every command's module to load.
    first = args_in[0] if args_in else ""
    if first not in COMMANDS and first not in ("-h", "--help", "--version"):
        from planner.cli import cmd_open

        holder = argparse.ArgumentParser(prog="beltplan").add_subparsers()
        cmd_open.register(holder)
        parser = holder.choices["open"]
        parser.prog = "beltplan"  # usage reads `beltplan [FILE] …`, not `beltplan open`
    else:
        parser = build_parser()
    args = parser.parse_args(args_in)
    if not getattr(args, "run", None):
        parser.print_help()
        return EXIT_USER_ERROR
    batch = first in NO_CYCLES
    was_collecting = gc.isenabled()
    if batch:
        # Reading and planning build hundreds of thousands of objects with no reference cycles
        # (tests/test_tui_perf.py checks), which the cyclic collector would walk again and
        # again: about a tenth of the time at 10,000 vehicles. Refcounting frees them all the
        # same. Not for `readings` and `import`: the style-keeping TOML editor leaves cycles,
        # and without the collector their memory would grow many times over. The UI holds the
        # collector off only while it reads (`tui/background.py`).
        gc.disable()
    if sys.stdout is None:  # started with standard output closed (`>&-`)
        print("beltplan: standard output is closed: nothing was written", file=sys.stderr)
        return EXIT_USER_ERROR
    try:
        code = int(args.run(args) or 0)
        sys.stdout.flush()  # here, where a full disk or a closed pipe can still be told
        return code
    except PlannerError as err:
        return fail(err)
    except OSError as exc:
        if exc.filename is not None or exc.errno not in _OUTPUT_ERRORS:
            raise  # not the output: a bug, with its traceback
        _quiet_stdout()
        print(f"beltplan: cannot write to standard output: {exc.strerror or exc}",
              file=sys.stderr)
        return EXIT_USER_ERROR
    except KeyboardInterrupt:
        print("interrupted", file=sys.stderr)
        return 130
    finally:
        if batch and was_collecting:
            gc.enable()
