"""The pieces of the detail view, as rich renderables built from the engine's results.

Every number and sentence here comes from the plan (`VehiclePlan`), its export record or the
fleet file; these functions only lay them out. File text is always `Text`, never markup.
"""

from __future__ import annotations

import datetime as dt
from typing import Any

from rich import box
from rich.console import Group, RenderableType
from rich.style import Style
from rich.table import Table
from rich.text import Text

from planner import export
from planner.fleet import Fleet
from planner.formats import money
from planner.plan import (
    Consequence,
    IntervalBasis,
    Limit,
    Status,
    VehiclePlan,
    distance_limit_on_record,
    odometer_points,
)
from planner.risk import REQUIRED_STATUSES
from planner.safetext import shown
from planner.tui.look import (
    BOLD,
    DIM,
    STATUS_INK,
    STATUS_STYLE,
    WHAT_IT_MEANS,
    consequence_text,
    field_text,
    literal,
    status_text,
)
from planner.tui.widgets.charts import life_bar, odometer_plot


def _rows(pairs: list[tuple[str, Text | str]]) -> Table:
    grid = Table.grid(padding=(0, 1))
    grid.add_column(style=DIM, no_wrap=True)
    grid.add_column(ratio=1)
    for name, value in pairs:
        grid.add_row(name, value if isinstance(value, Text) else literal(value))
    return grid


def _km(value: float | None, unit: str) -> str:
    return "–" if value is None else f"{value:,.0f} {unit}"


def heading(plan: VehiclePlan) -> Text:
    """`KL-01  Van 1   ✗ overdue · ◆ engine-damage`, and what those two words mean."""
    text = literal(plan.id, "bold")
    if plan.vehicle.label:
        text.append("  ")
        text.append(field_text(plan.vehicle.label, "bold"))
    text.append("   ")
    text.append_text(status_text(plan.status.value))
    text.append(" · ", style=DIM)
    text.append_text(consequence_text(plan.consequence.value))
    text.append(f"\n{WHAT_IT_MEANS[plan.status.value]}; "
                f"{WHAT_IT_MEANS[plan.consequence.value]}", style=DIM)
    return text


def what_to_do(plan: VehiclePlan) -> Text | None:
    """The advice for a vehicle that needs action, always with the cautions."""
    if plan.status is Status.OVERDUE:
        if plan.consequence is Consequence.BREAKDOWN:
            keep = ("Until it is done, use the vehicle as little as possible and never at "
                    "speed where an engine stop is dangerous.")
        else:
            keep = ("Until it is done, take the vehicle off the road where possible: a "
                    "failure can also wreck the engine.")
        lines = [f"Replace now: book the cam-drive job. Past its interval the belt can stop "
                 f"the engine without warning. {keep}"]
    elif plan.status is Status.NO_RECORD:
        lines = ["Replace now: no record of the belt now running. Common practice is to "
                 "replace it on acquisition rather than trust the odometer."]
    elif plan.status is Status.MISSING_FACT:
        lines = ["Find the missing fact now (the first note says which), then book the job: "
                 "until it is known, the belt may already be due. Never read it as safe."]
    elif plan.status is Status.NEAR_LIMIT and plan.due_date is not None:
        lines = [f"Book the job before {plan.due_date} ({plan.days_remaining} days)."]
    else:
        return None
    text = literal(lines[0] + "\n", Style(bold=True) + STATUS_STYLE.get(plan.status.value,
                                                                         Style()))
    text.append("Caution: " + export.CAUTION, style="italic")
    return text


def engine(plan: VehiclePlan, fleet: Fleet) -> Table:
    v, spec, unit = plan.vehicle, plan.spec, fleet.unit
    profile = fleet.engines.get(v.engine) if v.engine else None
    name = literal(v.engine or "none (own fields)", "bold")
    if profile is not None and profile.description:
        name.append("  ")
        name.append(field_text(profile.description))
    interference = spec.interference.value + ("" if spec.interference_given else
                                              " (not recorded)")
    pairs: list[tuple[str, Text | str]] = [
        ("profile", name),
        ("drive", f"{spec.drive_word}, fuel {spec.fuel.value if spec.fuel else '–'}"),
        ("interference", interference),
        ("duty", v.duty.value),
    ]
    if spec.has_interval:
        why = {IntervalBasis.NORMAL: "normal duty: the maker's normal interval",
               IntervalBasis.SEVERE: "severe duty: the severe-service interval",
               IntervalBasis.SEVERE_UNKNOWN: "severe duty, but no severe-service interval is "
               "known: the normal one is used (check the maker's schedule)",
               IntervalBasis.SEVERE_PARTIAL: "severe duty: a severe-service figure for one "
               "limit only, the normal one for the other (see the notes)"}[spec.interval_basis]
        months = "age not known" if spec.interval_months is None else \
            f"{spec.interval_months} months"
        distance = "distance not known" if spec.interval_distance is None else \
            _km(spec.interval_distance, unit)
        pairs.append(("interval", "not known" if spec.interval_months is None and
                      spec.interval_distance is None else
                      f"{distance} or {months}, whichever comes first"))
        pairs.append(("why", why))
    else:
        pairs.append(("interval", "none: replaced on condition"))
    job = []
    if spec.parts:
        job.append(", ".join(shown(p) for p in spec.parts))  # line ends escaped
    if spec.labour_hours:
        job.append(f"{spec.labour_hours:g} h labour")
    if spec.parts_cost is not None:
        job.append(f"parts {money(spec.parts_cost, fleet.fleet.currency, estimate=False)}")
    if job:
        pairs.append(("job", "; ".join(job)))
    if spec.failure_cost is not None:
        pairs.append(("if it fails", f"about {money(spec.failure_cost, fleet.fleet.currency)}"))
    return _rows(pairs)


def install_and_usage(plan: VehiclePlan, unit: str) -> Table:
    pairs: list[tuple[str, Text | str]] = []
    if plan.install is not None:
        pairs.append(("belt fitted", f"{plan.install.date} at "
                      f"{_km(plan.install.odometer, unit)}"))
        pairs.append(("known from", plan.install.source))
    else:
        pairs.append(("belt fitted", Text("no record (bought used without a belt receipt)",
                                          style=STATUS_STYLE["no-record"])))
    use = plan.usage
    rate = "–" if use.daily_distance is None else f"{use.daily_distance:,.1f} {unit}/day"
    pairs.append(("usage", f"{rate} ({use.basis})"))
    if use.last_date is not None:
        pairs.append(("last value", f"{_km(use.last_odometer, unit)} on {use.last_date}"))
    pairs.append(("est. odometer", _km(use.est_odometer, unit)))
    return _rows(pairs)


def limits(plan: VehiclePlan, unit: str, as_of: dt.date) -> RenderableType:
    if not plan.spec.has_interval:
        return Text("no distance or age limit: this drive is replaced on condition", style=DIM)
    if plan.due_date is None and plan.spec.missing:
        return Text("no limits can be dated while a fact is missing: see the notes",
                    style=DIM)
    if plan.due_date is None:
        return Text("no limits can be dated without a record of the belt now running",
                    style=DIM)
    table = Table(box=box.SIMPLE_HEAD, pad_edge=False, show_edge=False, expand=False)
    for name in ("limit", "reached at", "date", "left", ""):
        table.add_column(name, style="" if name else BOLD, no_wrap=True)
    dist_date = plan.distance_due_date.isoformat() if plan.distance_due_date else "–"
    left = _km(plan.distance_remaining, unit)
    decides = {limit: "◀ decides" if plan.deciding_limit is limit else "" for limit in Limit}
    captions = []
    if plan.distance_due_date:  # passed between two recorded values, or a projection
        dist_date += "*"
        captions.append("* distance date " + (
            "between two recorded values" if distance_limit_on_record(plan)
            else "projected from the usage fit"))
    table.add_row("distance", _km(plan.due_odometer, unit), dist_date, left,
                  decides[Limit.DISTANCE])
    time_due = plan.time_due_date
    days = f"{(time_due - as_of).days:,} days" if time_due else "–"
    table.add_row("age", f"{plan.spec.interval_months} months",
                  time_due.isoformat() if time_due else "–", days, decides[Limit.TIME])
    if plan.status is Status.MISSING_FACT:  # severe duty, no severe figure: the normal ones
        captions.append("normal interval: the latest these can be (a severe one is shorter)")
    # Below the table, not in its cells: a narrow pane then cuts no figure short.
    return Group(table, Text("\n".join(captions), style=DIM)) if captions else table


def life(plan: VehiclePlan) -> Text:
    return life_bar(plan.life_used, style=STATUS_INK.get(plan.status.value, ""))


def odometer(plan: VehiclePlan, unit: str, as_of: dt.date, width: int) -> Text:
    return odometer_plot(odometer_points(plan.vehicle, as_of), as_of, plan.usage.est_odometer,
                         plan.due_odometer, unit, total_width=max(30, width))


def risk(record: dict[str, Any], describe: str) -> RenderableType:
    if record.get("status") == Status.MISSING_FACT.value:
        return Text("no risk figure while a fact is missing: the interval in force is not "
                    "known (see the notes)", style=DIM)
    if record.get("p_fail_horizon") is None and record.get("expected_loss") is None:
        return Text("the risk model does not apply to this drive", style=DIM)
    pairs: list[tuple[str, Text | str]] = [
        ("in the horizon", export.cell(record, "p_fail_horizon")),
        ("before it is due", export.cell(record, "p_fail_before_due")),
        ("expected loss", export.cell(record, "expected_loss")),
    ]
    parts: list[RenderableType] = []
    if record.get("status") in REQUIRED_STATUSES:
        parts.append(Text("Required now: these figures extrapolate beyond the maker's data "
                          "and are no reason to wait.", style="bold"))
    elif record.get("risk_extrapolated"):
        parts.append(Text("extrap.: within the horizon the belt passes the maker's interval; "
                          "the figure extrapolates beyond the maker's data.", style="bold"))
    return Group(*parts, _rows(pairs), Text(describe, style="italic dim"))


def notes(record: dict[str, Any], plan: VehiclePlan) -> Text:
    text = Text()
    for note in record.get("notes") or plan.notes:
        text.append("• ")
        text.append(literal(note))
        text.append("\n")
    if plan.vehicle.notes:
        text.append("• file note: ", style=DIM)
        text.append(field_text(plan.vehicle.notes))
        text.append("\n")
    text.rstrip()
    return text or Text("no notes", style=DIM)


def jobs(plan: VehiclePlan, unit: str) -> RenderableType:
    history = sorted(plan.vehicle.belt_jobs, key=lambda j: (j.date, j.odometer), reverse=True)
    if not history:
        return Text("no belt jobs recorded", style=DIM)
    table = Table(box=box.SIMPLE_HEAD, pad_edge=False, show_edge=False, expand=True)
    table.add_column("date", no_wrap=True)
    table.add_column(f"odometer ({unit})", justify="right", no_wrap=True)
    table.add_column("reason", no_wrap=True)
    table.add_column("work and notes", ratio=1)
    for job in history:
        words = field_text(job.work)
        if job.notes:
            words.append(" — " if job.work else "")
            words.append(field_text(job.notes, "italic"))
        reason = literal(job.reason.value, "bold" if job.reason.value == "failed" else "")
        table.add_row(literal(job.date), literal(f"{job.odometer:,.0f}"), reason, words)
    return table
