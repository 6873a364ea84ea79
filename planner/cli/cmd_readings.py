"""`beltplan readings FILE --from export.csv`: add odometer readings from a weekly export."""

from __future__ import annotations

import argparse
import datetime as dt
import sys

from planner import importer, inuse
from planner.caution import caution_block
from planner.cli.cmd_import import add_csv_options
from planner.cli.common import load, say
from planner.errors import PlannerError
from planner.fileio import backup_path, read_csv, save_fleet_text
from planner.safetext import shown

EPILOG = """\
examples:
  beltplan readings fleet_examples/courier_fleet.toml --from fleet_examples/weekly_readings.csv
  beltplan readings fleet.toml --from fuelcard.csv --map "Registration=id" --dry-run

fields a column can fill (--map COLUMN=field):
  id                vehicle id as in the fleet file (map a plate column here if the fleet's
                    ids are plates; case, spaces and dashes are ignored when matching)
  reading_date      day of the reading (ISO 8601, or dd/mm/yyyy with --day-first, ...)
  reading_odometer  odometer, in the fleet file's unit ("12,345 km" is fine; another unit
                    is rejected, never converted)

A reading already in the file (same vehicle, day and odometer) is skipped. A reading that
goes backwards, is dated before the vehicle entered service or after today, or names no
vehicle in the file is rejected with the reason. The file is saved with its comments and
layout, atomically, with the previous version kept as FILE.bak.
"""


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "readings", help="add odometer readings from a CSV export to a fleet file",
        description="Add the odometer readings of a CSV export (fuel card, telematics, "
        "driver's log) to a fleet file, matched by vehicle id.",
        epilog=EPILOG + "\n\n" + caution_block(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", help="fleet file (TOML) to update")
    p.add_argument("--from", dest="csv", metavar="EXPORT.csv", required=True,
                   help="the readings, as CSV")
    add_csv_options(p)
    p.add_argument("--dry-run", action="store_true",
                   help="print what would be added, skipped and rejected; save nothing")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    loaded = load(args.file)
    decoded = read_csv(args.csv)
    # The clock is read here, at the edge: a reading dated after today is a typing slip.
    result = importer.import_readings(
        decoded.text, loaded.fleet, loaded.text, source=args.csv,
        column_map=importer.parse_map(args.map), date_order=args.date_order,
        today=dt.date.today(), decoded=decoded)
    if result.added and not args.dry_run:
        try:
            save_fleet_text(loaded, result.text)
        except PlannerError as err:
            # stdout alone (a log, a script) must not read as if the readings were added.
            n = len(result.added)
            say(f"Nothing was saved by this run ({err.title}): the {n} reading"
                f"{'s' * (n != 1)} below {'were' if n != 1 else 'was'} NOT added. Run the "
                "command again (readings already in the file are skipped).")
            say("\n".join(not_added(result.report)))
            raise
    say("\n".join(result.report))
    if args.dry_run:
        say(f"\nDry run: {shown(args.file)} was not changed.")
    elif not result.added:
        say(f"\nNothing to add: {shown(args.file)} was not changed.")
    else:
        say(f"\nSaved {shown(args.file)} with {len(result.added)} new reading"
            f"{'s' * (len(result.added) != 1)} (the previous version is "
            f"{backup_path(loaded.path)}).")
        note_open_window(args.file, inuse.holder(loaded.path))
    return 0


def not_added(report: tuple[str, ...] | list[str]) -> list[str]:
    """The import report, its "added" words turned to "to add" (the save failed)."""
    lines = list(report)
    for k, line in enumerate(lines):
        if line.startswith("Readings: "):
            lines[k] = line.replace(" added,", " to add (not saved),", 1)
        elif line.startswith("  added: "):
            lines[k] = "  not added: " + line[len("  added: "):]
    return lines


def note_open_window(file: str, held: inuse.Holder | None) -> None:
    """One line on stderr when a beltplan window has the file open: its next save is refused."""
    if held is None:
        return
    now = dt.datetime.now(dt.UTC)  # the clock at the edge, for "12 minutes ago"
    say(f"beltplan: note: {shown(file)} is open in a beltplan window of {held.who()} since "
          f"{held.since(now)}; that window will have to reload the file before it can save.",
          file=sys.stderr)
