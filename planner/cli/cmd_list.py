"""`beltplan list FILE`: the plan, one row per vehicle, as a table, CSV, JSON or Markdown."""

from __future__ import annotations

import argparse
import dataclasses
import io
from collections import Counter
from collections.abc import Sequence

from rich import box
from rich.console import Console
from rich.table import Table
from rich.text import Text

from planner import export
from planner.cli.common import add_as_of, as_of_or_today, emit, load, pick_words
from planner.plan import Status, VehiclePlan
from planner.risk import ORDERS, assess_fleet_plan
from planner.safetext import shown
from planner.units import distance_factor

FORMATS = ("table", "csv", "json", "markdown")
# The same scheme as the UI's (planner/tui/look.py): tags with their own background for the
# statuses that need a job now, a petrol blue for the warning band, no colour for "ok"; readable
# on dark and light terminals, and the word says it without colour.
STATUS_STYLE = {
    "overdue": "bold #ffffff on #a8325f", "no-record": "bold #ffffff on #5646a8",
    "near-limit": "bold #3d8fd1", "ok": "", "on-condition": "italic #4f9a94",
    "missing-fact": "bold #ffffff on #8a5a00",
}
CONSEQUENCE_STYLE = {"engine-damage": "bold #c9622a", "unverified": "#9a6fd0",
                     "breakdown": "#a08a5a"}


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "list", help="the plan: which cam drives are overdue or near their limit, and why",
        description="Plan every vehicle on the planning date: status, what a failure would "
        "do, distance and days left, the due date and which limit (distance or age) decides.",
        epilog="examples:\n"
        "  beltplan list fleet_examples/courier_fleet.toml\n"
        "  beltplan list fleet.toml --as-of 2027-01-31 --status overdue,near-limit\n"
        "  beltplan list fleet.toml --status overdue --format csv -o overdue.csv\n\n"
        f"statuses: {', '.join(s.value for s in Status)}\n\n"
        "Overdue and no-record belts lead with the action (replace now); their failure "
        "probabilities are marked \"extrap.\" (beyond the maker's data) and their expected loss "
        "reads \"required\": those jobs are due, not a cost decision.\n\n"
        + export.caution_block(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", help="fleet file (TOML)")
    add_as_of(p)
    p.add_argument("--status", metavar="LIST",
                   help="only these statuses, comma separated (e.g. overdue,near-limit)")
    p.add_argument("--format", choices=FORMATS, default="table", help="output format")
    p.add_argument("--sort", choices=ORDERS, default="triage",
                   help="triage: overdue and no-record first, then by expected loss (default); "
                   "due-date: by status, consequence, then due date")
    p.add_argument("--unit", choices=("km", "mi"), default=None,
                   help="show distances in this unit (default: the file's unit)")
    p.add_argument("-o", "--output", metavar="OUT", help="write to this file instead of stdout")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    loaded = load(args.file)
    fleet = loaded.fleet
    as_of = as_of_or_today(args)
    assessment = assess_fleet_plan(fleet, as_of, args.sort)
    if args.status:
        words = ",".join("near-limit" if w.strip() == "due-soon" else w  # its earlier name
                         for w in args.status.split(","))
        wanted = set(pick_words(words, [s.value for s in Status], "status"))
        assessment = dataclasses.replace(
            assessment, plans=tuple(p for p in assessment.plans if p.status.value in wanted))
    plans = assessment.plans
    unit = args.unit or fleet.unit
    factor = distance_factor(fleet.unit, unit)
    records = export.assessment_records(assessment, factor)
    title = f"Cam-drive plan: {fleet.fleet.name or loaded.path.name} on {as_of}"
    columns = export.table_columns(unit, assessment.model.horizon_days)
    footer = [assessment.model.describe()]
    if args.format == "json":
        text = export.to_json(records, as_of, unit, {
            "order": args.sort, "risk_assumptions": assessment.model.as_dict()})
    elif args.format == "csv":
        text = export.to_csv(records, export.FIELDS)
    elif args.format == "markdown":
        text = export.to_markdown(records, columns, title, preface=[_summary(plans)],
                                  footer=[f"_{line}_" for line in footer] + [""])
    else:
        text = render_table(plans, records, columns, title, footer,
                            plain=args.output not in (None, "-"))
    emit(text, args.output, loaded.path, what=f"{len(records)} vehicles")
    return 0


def _summary(plans: Sequence[VehiclePlan]) -> str:
    counts = Counter(p.status for p in plans)
    parts = [f"{counts[s]} {s.value}" for s in Status if counts[s]]
    return f"{len(plans)} vehicles: " + (", ".join(parts) if parts else "none")


# Dropped first when the terminal is too narrow for every column.
DROP_ORDER = ("label", "expected_loss", "deciding_limit", "drive", "life_used", "days_remaining")


def fit_columns(columns: Sequence[tuple[str, str]], records: Sequence[dict],
                width: int) -> list[tuple[str, str]]:
    """Leave out the least needed columns until the rest fit `width` without folding."""
    def need(field: str, heading: str) -> int:
        cells = [len(shown(export.cell(r, field))) for r in records]
        return max([len(heading), *cells]) + 3

    kept = list(columns)
    for field in DROP_ORDER:
        if sum(need(f, h) for f, h in kept) <= width:
            break
        kept = [c for c in kept if c[0] != field]
    return kept


def _console(buf: io.StringIO, plain: bool) -> Console:
    if plain:  # a file: no colour codes, a width that fits every column
        return Console(file=buf, width=200, color_system=None, highlight=False, emoji=False)
    # The terminal: its own width and colour support (rich respects NO_COLOR).
    term = Console(highlight=False)
    width = term.width if term.is_terminal else max(term.width, 200)
    return Console(file=buf, width=width, color_system=term.color_system,
                   force_terminal=term.is_terminal, highlight=False, emoji=False)


def render_table(plans: Sequence[VehiclePlan], records: Sequence[dict],
                 columns: Sequence[tuple[str, str]], title: str, footer: Sequence[str] = (),
                 plain: bool = False) -> str:
    buf = io.StringIO()
    console = _console(buf, plain)
    columns = fit_columns(columns, records, console.width)
    table = Table(title=shown(title), title_justify="left", title_style="bold", header_style="bold",
                  box=box.SIMPLE_HEAD, pad_edge=False, expand=False)
    for field, heading in columns:
        right = field in ("distance_remaining", "days_remaining", "life_used", "p_fail_horizon",
                          "expected_loss")
        if field == "action":
            table.add_column(heading, justify="left", no_wrap=True, style="bold")
            continue
        table.add_column(heading, justify="right" if right else "left", no_wrap=True)
    for rec in records:
        cells = []
        for field, _ in columns:
            value = export.cell(rec, field)
            style = STATUS_STYLE.get(value) if field == "status" else (
                CONSEQUENCE_STYLE.get(value) if field == "consequence" else None)
            # Text: file content is never markup; shown: never a command or a line end
            cells.append(Text(shown(value), style=style or ""))
        table.add_row(*cells)
    console.print(table)
    console.print(_summary(plans))
    for line in footer:
        console.print(Text(shown(line), style="italic"))
    console.print(Text("Caution: " + export.CAUTION, style="bold"))
    return buf.getvalue()
