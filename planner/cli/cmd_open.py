"""`beltplan [FILE]`: open the terminal UI on a fleet file (default ./fleet.toml).

When the file does not exist, offer to start it from a short commented template: a y/N question
in a terminal, or `--create` without asking; with no terminal, say how and exit 2.
"""

from __future__ import annotations

import argparse
import datetime as dt
import sys
from importlib import resources
from pathlib import Path

from planner.caution import caution_block
from planner.cli.common import EXIT_USER_ERROR, add_as_of, as_of_or_today
from planner.errors import PlannerError
from planner.fileio import write_atomic

DEFAULT_FILE = "fleet.toml"


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "open", help="open the terminal UI on a fleet file",
        description="Open the terminal UI: the fleet in triage order, the detail of each "
        "vehicle, forms to record readings and belt jobs, and a save that keeps your "
        "comments. Press ? in the UI for every key.",
        epilog="examples:\n  beltplan fleet_examples/courier_fleet.toml\n"
        "  beltplan                      opens ./fleet.toml (offers to create it)\n"
        "  beltplan fleet.toml --as-of 2027-01-31\n\n" + caution_block(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", nargs="?", default=None,
                   help=f"fleet file (default: {DEFAULT_FILE} in this folder)")
    add_as_of(p)
    p.add_argument("--create", action="store_true",
                   help="if the file does not exist, create it from the commented template "
                   "without asking")
    p.set_defaults(run=run)


def template_text() -> str:
    """The short commented fleet file offered to a new user."""
    return (resources.files("planner") / "templates" / "fleet.toml").read_text(
        encoding="utf-8")


def create_from_template(path: Path) -> None:
    if path.exists():
        raise PlannerError(f"{path} already exists", "Nothing was written.")
    write_atomic(path, template_text().encode("utf-8"))


def _interactive() -> bool:
    return sys.stdin.isatty() and sys.stdout.isatty()


def run(args: argparse.Namespace) -> int:
    as_of = as_of_or_today(args)  # the clock is read here, at the edge, never in the UI
    path = Path(args.file or DEFAULT_FILE)
    if not path.exists():
        if args.create:
            create_from_template(path)
            print(f"created {path} from the template", file=sys.stderr)
            if not _interactive():
                print(f"open it in a terminal with:  beltplan {path}", file=sys.stderr)
                return 0
        elif not _interactive():
            print(f"beltplan: no fleet file at {path}\n"
                  f"Start one from a commented template with:  beltplan {path} --create\n"
                  "or copy fleet_examples/courier_fleet.toml and edit it.", file=sys.stderr)
            return EXIT_USER_ERROR
        else:
            answer = input(f"No fleet file at {path}. Create it from a short commented "
                           "template? [y/N] ").strip().lower()
            if answer not in ("y", "yes"):
                print(f"Nothing created. Give a file: beltplan FILE, or run beltplan {path} "
                      "--create.", file=sys.stderr)
                return 0
            create_from_template(path)
            print(f"created {path}", file=sys.stderr)
    if not _interactive():
        print(f"beltplan: the UI needs a terminal. For a table use:  beltplan list {path}",
              file=sys.stderr)
        return EXIT_USER_ERROR
    return run_ui(path, as_of)


def run_ui(path: Path, as_of: dt.date) -> int:
    from planner.tui import create_app

    app = create_app(path, as_of)
    app.run()
    if app.recovered_to is not None:
        print(f"beltplan: stopped by a bug; your unsaved edits are in {app.recovered_to} "
              f"(copy what you need into {path}).", file=sys.stderr)
    elif app.recovery_failed:
        print(f"beltplan: stopped by a bug, and the unsaved edits could not be written beside "
              f"{path}: {app.recovery_failed}", file=sys.stderr)
    return app.return_code or 0
