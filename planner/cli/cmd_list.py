"""`beltplan list FILE`: the plan, one row per vehicle, as a table, CSV, JSON or Markdown."""

from __future__ import annotations

import argparse
import io
from collections import Counter
from collections.abc import Sequence

from rich import box
from rich.console import Console
from rich.table import Table
from rich.text import Text

from planner import export
from planner.cli.common import add_as_of, as_of_or_today, emit, load, pick_words
from planner.plan import Status, VehiclePlan, plan_fleet
from planner.units import distance_factor

FORMATS = ("table", "csv", "json", "markdown")
STATUS_STYLE = {
    "overdue": "bold red", "no-record": "bold magenta", "due-soon": "yellow",
    "ok": "green", "on-condition": "cyan",
}
CONSEQUENCE_STYLE = {"engine-damage": "red", "unverified": "magenta", "breakdown": "yellow"}


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "list", help="the plan: which cam drives are overdue or due soon, and why",
        description="Plan every vehicle on the planning date: status, what a failure would "
        "do, distance and days left, the due date and which limit (distance or age) decides.",
        epilog="examples:\n"
        "  beltplan list fleet_examples/courier_fleet.toml\n"
        "  beltplan list fleet.toml --as-of 2027-01-31 --status overdue,due-soon\n"
        "  beltplan list fleet.toml --status overdue --format csv -o overdue.csv\n\n"
        f"statuses: {', '.join(s.value for s in Status)}",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", help="fleet file (TOML)")
    add_as_of(p)
    p.add_argument("--status", metavar="LIST",
                   help="only these statuses, comma separated (e.g. overdue,due-soon)")
    p.add_argument("--format", choices=FORMATS, default="table", help="output format")
    p.add_argument("--unit", choices=("km", "mi"), default=None,
                   help="show distances in this unit (default: the file's unit)")
    p.add_argument("-o", "--output", metavar="OUT", help="write to this file instead of stdout")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    loaded = load(args.file)
    fleet = loaded.fleet
    as_of = as_of_or_today(args)
    plans = plan_fleet(fleet, as_of)
    if args.status:
        wanted = set(pick_words(args.status, [s.value for s in Status], "status"))
        plans = [p for p in plans if p.status.value in wanted]
    unit = args.unit or fleet.unit
    factor = distance_factor(fleet.unit, unit)
    records = [export.plan_record(p, factor) for p in plans]
    title = f"Cam-drive plan: {fleet.fleet.name or loaded.path.name} on {as_of}"
    if args.format == "json":
        text = export.to_json(records, as_of, unit)
    elif args.format == "csv":
        text = export.to_csv(records, export.FIELDS)
    elif args.format == "markdown":
        text = export.to_markdown(records, export.table_columns(unit), title,
                                  preface=[_summary(plans)])
    else:
        text = render_table(plans, records, unit, title, plain=args.output not in (None, "-"))
    emit(text, args.output, loaded.path, what=f"{len(records)} vehicles")
    return 0


def _summary(plans: Sequence[VehiclePlan]) -> str:
    counts = Counter(p.status for p in plans)
    parts = [f"{counts[s]} {s.value}" for s in Status if counts[s]]
    return f"{len(plans)} vehicles: " + (", ".join(parts) if parts else "none")


def render_table(plans: Sequence[VehiclePlan], records: Sequence[dict], unit: str, title: str,
                 plain: bool = False) -> str:
    table = Table(title=title, title_justify="left", title_style="bold", header_style="bold",
                  box=box.SIMPLE_HEAD, pad_edge=False, expand=False)
    for _, heading in export.table_columns(unit):
        right = heading.startswith(("Left", "Days", "Life"))
        table.add_column(heading, justify="right" if right else "left",
                         overflow="fold", no_wrap=heading != "Label",
                         min_width=18 if heading == "Label" else None)
    for rec in records:
        cells = []
        for field, _ in export.table_columns(unit):
            value = export.display(rec.get(field), field)
            style = STATUS_STYLE.get(value) if field == "status" else (
                CONSEQUENCE_STYLE.get(value) if field == "consequence" else None)
            cells.append(Text(value, style=style or ""))  # Text: file content is never markup
        table.add_row(*cells)
    buf = io.StringIO()
    if plain:  # a file: no colour codes, a width that fits every column
        console = Console(file=buf, width=160, color_system=None, highlight=False, emoji=False)
    else:  # the terminal: its own width and colour support (NO_COLOR is respected by rich)
        term = Console(highlight=False)
        width = term.width if term.is_terminal else max(term.width, 120)
        console = Console(file=buf, width=width, color_system=term.color_system,
                          force_terminal=term.is_terminal, highlight=False, emoji=False)
    console.print(table)
    console.print(_summary(plans))
    console.print(Text(export.CAUTION, style="dim"))
    return buf.getvalue()
