"""`beltplan risk FILE`: the risk model in force, the fleet's own fit, cost-optimal points."""

from __future__ import annotations

import argparse

from planner import export
from planner.cli.common import add_as_of, as_of_or_today, emit, lines_shown, load
from planner.formats import money, percent
from planner.reliability import weibull_cdf
from planner.risk import FLEET_FIT, fitted_model, replacement_points, risk_model
from planner.safetext import shown


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "risk", help="the failure-risk assumptions, the fit from your own records, and the "
        "cost-optimal replacement point",
        description="Show the Weibull life model in force (assumed, or fitted to the fleet's "
        "own belt-job history with right censoring), and for each engine profile the "
        "replacement point that minimises cost per unit of life, never past the maker's "
        "interval.",
        epilog="examples:\n  beltplan risk fleet_examples/courier_fleet.toml\n"
        "  beltplan risk fleet.toml --format json\n\n"
        "Failures are belt jobs with reason = \"failed\"; scheduled and precaution jobs, and "
        "belts still running, count as survivors (right-censored).\n\n"
        "The replacement point is never later than the maker's interval, and a fit from the "
        "fleet's records never lengthens an interval: statuses always follow the maker's.\n\n"
        + export.caution_block(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", help="fleet file (TOML)")
    add_as_of(p)
    p.add_argument("--format", choices=("text", "json"), default="text", help="output format")
    p.add_argument("-o", "--output", metavar="OUT", help="write to this file instead of stdout")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    loaded = load(args.file)
    fleet = loaded.fleet
    as_of = as_of_or_today(args)
    model = risk_model(fleet, as_of)
    points = replacement_points(fleet, model)
    report = model.fit
    alt = fitted_model(fleet, report) if model.basis != FLEET_FIT else None
    alt_points = {p.profile: p for p in replacement_points(fleet, alt)} if alt else {}
    if args.format == "json":
        doc = {
            "as_of": as_of.isoformat(),
            "risk_assumptions": model.as_dict(),
            "replacement_points": [
                {"profile": p.profile, "planned_cost": round(p.planned_cost, 2),
                 "failure_cost": round(p.failure_cost, 2),
                 "replace_at_share_of_interval": None if p.u_star is None
                 else round(p.u_star, 4),
                 "capped_at_maker_interval": p.capped, "message": p.message,
                 "with_fleet_fit": None if p.profile not in alt_points else (
                     None if alt_points[p.profile].u_star is None
                     else round(alt_points[p.profile].u_star, 4))}
                for p in points],
            "caution": export.CAUTION,
        }
        emit(export.json_text(doc), args.output, loaded.path, what="the risk report")
        return 0

    cur = f" {fleet.fleet.currency}" if fleet.fleet.currency else ""
    name = shown(fleet.fleet.name or loaded.path.name)
    lines = [f"Failure-risk model for {name} on {as_of}", ""]
    lines.append("In force")
    lines.append(f"  {model.describe()}")
    lines.append("  Life is the share of the maker's interval used: distance or age, whichever "
                 "is larger.")
    lines.append("")
    lines.append("This fleet's own records (censored maximum-likelihood Weibull fit)")
    lines.append(f"  failures: {report.failures}   survivors (right-censored): "
                 f"{report.suspensions}")
    if report.fit is not None:
        f = report.fit
        share = _share(f.beta, f.eta)
        lines.append(f"  fitted shape {f.beta:.2f}: {percent(share)} of belts failed by the "
                     "maker's interval")
    lines.append(f"  {report.message}")
    if report.fit is not None and model.basis != FLEET_FIT:
        lines.append("  The fit comes from few failures: check it before you rely on it.")
    lines.append("")
    lines.append("Cost-optimal replacement point (age replacement policy), as a share of the "
                 "maker's interval")
    width = max([len(p.profile) for p in points] + [6])
    head = f"  {'engine':<{width}}  {'planned job':>12}  {'failure':>12}  {'replace at':>10}"
    if alt_points:
        head += f"  {'(fleet fit)':>11}"
    lines.append(head)
    for p in points:
        row = (f"  {p.profile:<{width}}  {money(p.planned_cost, estimate=False):>8}{cur:<4}  "
               f"{money(p.failure_cost, estimate=False):>8}{cur:<4}  {_pct(p.u_star):>10}")
        if alt_points:
            row += f"  {_pct(alt_points[p.profile].u_star):>11}"
        lines.append(row + f"  {p.message}")
    if not points:
        lines.append("  no belt-driven engines in the file")
    lines.append("")
    lines.append(f"Caution: {export.CAUTION}")
    emit(lines_shown("\n".join(lines)) + "\n", args.output, loaded.path,
         what="the risk report")
    return 0


def _pct(u: float | None) -> str:
    return percent(u, 0)


def _share(beta: float, eta: float) -> float:
    return weibull_cdf(1.0, beta, eta)
