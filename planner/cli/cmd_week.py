"""`beltplan week FILE`: the workshop's week: bay-days, parts to order, call list, calendar."""

from __future__ import annotations

import argparse
import datetime as dt

from planner import week_export
from planner.cli.common import add_as_of, as_of_or_today, emit, iso_date, load
from planner.errors import PlannerError
from planner.export import caution_block
from planner.week import DEFAULT_INCLUDE, INCLUDE, MAX_WEEKS, plan_week

EPILOG = f"""\
examples:
  beltplan week fleet_examples/garage_customers.toml --as-of 2026-12-04
  beltplan week fleet.toml --start 2026-12-07 --weeks 2 --include all-due
  beltplan week fleet.toml --format ics -o week.ics        import into a calendar
  beltplan week fleet.toml --format markdown -o week.md    job sheets to print
  beltplan week fleet.toml --format csv --list parts -o parts.csv

--include:
  near-limit  book what is due now and what is near its limit: overdue, no-record and
              near-limit belts and wet belts (default; the older word due-soon is read too)
  all-due     book only what is already due: overdue and no-record
Chains and gear drives are replaced on condition and never booked by this command.

--list (CSV only): jobs (one row per job and day, then the jobs not placed; default),
parts (the parts order list) or calls (the customers to call).

Jobs are placed in triage order (overdue and no-record first, by expected loss), each on
the earliest working day and bay with room, after its parts can arrive (ordered on the
planning date, parts_lead_days calendar days to arrive, none with kits_in_stock), never on
a day the vehicle is unavailable; a job longer than a bay day runs on consecutive days of
one bay. Clock times start at {week_export.OPENS:%H:%M}. Weeks: 1 to {MAX_WEEKS}.

The totals keep required jobs (overdue or no belt record: due now, not optional) apart from
near-limit jobs; only the near-limit jobs are set against the risk they remove.

{caution_block()}
"""


def _weeks(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number of weeks") from None
    if not 1 <= n <= MAX_WEEKS:
        raise argparse.ArgumentTypeError(f"--weeks must be between 1 and {MAX_WEEKS}, not {n}")
    return n


def _include(text: str) -> str:
    """The include word; `due-soon`, its earlier name, still means `near-limit`."""
    return "near-limit" if text == "due-soon" else text


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "week", help="the workshop's week: belt jobs by day and bay, parts, call list, calendar",
        description="Plan the workshop's next week(s) of belt jobs from the [workshop] table: "
        "which job goes in which bay on which day, the hours left, every job that does not fit "
        "and why, the parts to order and by when, the cost of the required jobs and of the "
        "near-limit ones (with the risk those remove) and the customers to call. Export as "
        "CSV, JSON, Markdown job sheets or an iCalendar file.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", help="fleet file (TOML)")
    add_as_of(p)
    p.add_argument("--start", type=iso_date, metavar="DATE", default=None,
                   help="first day of the plan, YYYY-MM-DD (default: the first working day "
                   "after the planning date)")
    p.add_argument("--weeks", type=_weeks, default=1, metavar="N",
                   help=f"how many weeks to plan, 1 to {MAX_WEEKS} (default 1)")
    p.add_argument("--include", type=_include, choices=tuple(INCLUDE), default=DEFAULT_INCLUDE,
                   help="which vehicles to book: near-limit (overdue, no-record and near-limit; "
                   "default) or all-due (overdue and no-record only)")
    p.add_argument("--format", choices=week_export.FORMATS, default="table",
                   help="output format (default table)")
    p.add_argument("--list", choices=week_export.LIST_KINDS, default=None,
                   help="with --format csv: which list (default jobs)")
    p.add_argument("-o", "--output", metavar="OUT", help="write to this file instead of stdout")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    if args.list is not None and args.format != "csv":
        raise PlannerError(f"--list {args.list} goes with --format csv, not --format "
                           f"{args.format}", "Add --format csv, or leave out --list.")
    loaded = load(args.file)
    as_of = as_of_or_today(args)
    week = plan_week(loaded.fleet, as_of, args.start, args.weeks, args.include)
    if args.format == "csv":
        text = week_export.to_csv_text(week, args.list or "jobs")
    elif args.format == "json":
        text = week_export.to_json_text(week)
    elif args.format == "markdown":
        text = week_export.to_markdown_text(week)
    elif args.format == "ics":
        if not week.bookings:
            raise PlannerError(f"no jobs booked between {week.start} and {week.end}: no "
                               "calendar written", "An iCalendar file needs at least one event; "
                               "see the plan with --format table.")
        # The clock is read here, at the edge: DTSTAMP is when the file was made.
        text = week_export.to_ics(week, dt.datetime.now(dt.UTC).replace(microsecond=0))
    else:
        text = week_export.to_table(week)
    what = f"{len(week.bookings)} booked job{'s' if len(week.bookings) != 1 else ''}"
    emit(text, args.output, loaded.path, what=what)
    return 0
