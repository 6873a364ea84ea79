"""`beltplan import FILE.csv -o fleet.toml`: a new fleet file from a spreadsheet export."""

from __future__ import annotations

import argparse
import datetime as dt
import sys
from pathlib import Path

from planner import importer
from planner.caution import caution_block
from planner.cli.common import say
from planner.errors import PlannerError
from planner.fileio import backup_path, load_fleet, read_csv, write_atomic
from planner.safetext import shown

EPILOG = """\
examples:
  beltplan import fleet_examples/spreadsheet_export.csv -o fleet.toml --day-first
  beltplan import vans.csv -o fleet.toml --unit mi --map "Fleet no=id" --map "Reg=ignore"
  beltplan import vans.csv --dry-run          report and show the file, write nothing

fields a column can fill (--map COLUMN=field):
{fields}

Columns are matched to fields by their header words ("Odometer (km)" -> reading_odometer,
unit km); the mapping used is printed. Dates: ISO 8601 (2026-11-20) always; 20/11/2026 needs
--day-first, 11/20/2026 --month-first, unless every date in the column reads only one way.
Rows with a problem are listed with row, column and value, and left out. Rows that share
drive, interference and intervals become one engine profile (--no-profiles: they do not).
"""


def register(sub: argparse._SubParsersAction) -> None:
    fields = "\n".join(f"  {name:<25}{info.help}" for name, info in
                       importer.FLEET_FIELDS.items())
    p = sub.add_parser(
        "import", help="make a fleet file from a spreadsheet (CSV)",
        description="Make a new fleet file from a spreadsheet saved as CSV (comma or "
        "semicolon, UTF-8 or Windows-1252). Prints the column mapping and a report, writes the "
        "file, then loads it back to prove it is valid.",
        epilog=EPILOG.format(fields=fields) + "\n\n" + caution_block(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    add_csv_options(p)
    p.add_argument("csv", metavar="FILE.csv", help="the spreadsheet, saved as CSV")
    p.add_argument("-o", "--output", metavar="FLEET.toml",
                   help="the fleet file to write (required unless --dry-run)")
    p.add_argument("--unit", choices=("km", "mi"), default=None,
                   help="the fleet's distance unit (default: the unit the sheet names)")
    p.add_argument("--name", default="", help="the fleet's name, for titles")
    p.add_argument("--no-profiles", action="store_true",
                   help="keep drive fields on each vehicle instead of grouping engine profiles")
    p.add_argument("--force", action="store_true",
                   help="overwrite FLEET.toml if it exists (the old file is kept as .bak)")
    p.add_argument("--dry-run", action="store_true",
                   help="print the report and the file it would write; write nothing")
    p.set_defaults(run=run)


def add_csv_options(p: argparse.ArgumentParser) -> None:
    """--map and --day-first/--month-first, shared with `beltplan readings`."""
    p.add_argument("--map", action="append", metavar="COLUMN=field", default=[],
                   help="read this column into this field (repeatable); COLUMN=ignore leaves "
                   "a column out")
    order = p.add_mutually_exclusive_group()
    order.add_argument("--day-first", dest="date_order", action="store_const",
                       const=importer.DAY_FIRST, help="numeric dates are dd/mm/yyyy")
    order.add_argument("--month-first", dest="date_order", action="store_const",
                       const=importer.MONTH_FIRST, help="numeric dates are mm/dd/yyyy")


def run(args: argparse.Namespace) -> int:
    if not args.output and not args.dry_run:
        raise PlannerError("say where to write the fleet file",
                           "add -o fleet.toml (or --dry-run to see the result first)")
    out = Path(args.output) if args.output else None
    if out is not None and not args.dry_run:
        if out.resolve() == Path(args.csv).resolve():
            raise PlannerError(f"refusing to write over the spreadsheet {args.csv}",
                               "choose another path with -o")
        if out.is_dir():
            raise PlannerError(f"{out} is a folder", "give -o the path of a .toml file")
        folder = out.parent if str(out.parent) else Path(".")
        if not folder.is_dir():
            raise PlannerError(f"cannot write {out}", f"the folder {folder} does not exist")
        if out.exists() and not args.force:
            raise PlannerError(f"{out} already exists; nothing was written",
                               "choose another path with -o, or add --force to replace it "
                               "(the old file is then kept as "
                               f"{backup_path(out).name})")
    decoded = read_csv(args.csv)
    result = importer.import_fleet(
        decoded.text, source=args.csv, when=dt.datetime.now().replace(second=0, microsecond=0),
        unit=args.unit, column_map=importer.parse_map(args.map), date_order=args.date_order,
        name=args.name, group_profiles=not args.no_profiles, decoded=decoded)
    say("\n".join(result.report))
    if args.dry_run:
        say(f"\nDry run: nothing written. The fleet file would be"
              f"{' ' + str(out) if out else ''}:\n")
        sys.stdout.write(result.text)
        return 0
    assert out is not None
    kept = ""
    if out.exists():
        write_atomic(backup_path(out), out.read_bytes(), like=out, backup=True)
        kept = f" (the old file is kept as {backup_path(out)})"
    write_atomic(out, result.text.encode("utf-8"))
    loaded = load_fleet(out)  # the normal loader: what was written must be a valid fleet file
    fleet = loaded.fleet
    say(f"\nWrote {shown(str(out))}{kept}: {len(fleet.vehicles)} vehicles, "
        f"{len(fleet.engines)} engine profiles, distances in {fleet.unit}; loaded back and "
        "valid.")
    if result.problems:
        say(f"{len({p.row for p in result.problems})} rows were left out: fix them in the "
              "sheet and import again with --force, or add them to the file by hand.")
    say(f"Next: beltplan list {shown(str(out))}")
    return 0
