"""The week view's other sections as Rich renderables: the parts order, the call list, totals.

Every figure is the week plan's own (`planner.week`); this module only lays it out. Text from
the fleet file (names, parts, labels) is shown literally, never read as markup.
"""

from __future__ import annotations

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text

from planner.export import CAUTION
from planner.tui.look import ACCENT, DIM, field_text, literal, status_text
from planner.week import WeekPlan
from planner.week_export import (
    OPENS,
    clock,
    day_text,
    hours_text,
    money,
    near_limit_line,
    required_line,
)


def _heading(words: str) -> Text:
    return literal(words, "bold underline")


def parts_order(week: WeekPlan) -> RenderableType:
    """The parts to order, by order-by date: quantity, part, the vehicles it is for."""
    out: list[RenderableType] = [_heading(
        "Parts to order" + (" (kits in stock: take them from the shelf)"
                            if week.calendar.kits_in_stock else ""))]
    if not week.parts_order:
        out.append(Text("None: no job is booked.", style=DIM))
    else:
        table = Table(box=None, padding=(0, 1), show_edge=False, header_style="bold")
        table.add_column("Order by", no_wrap=True, style=ACCENT)
        table.add_column("Qty", justify="right", no_wrap=True)
        table.add_column("Part", ratio=2)
        table.add_column("For", ratio=3)
        for p in week.parts_order:
            table.add_row("from stock" if p.in_stock else str(p.order_by), str(p.quantity),
                          field_text(p.part), field_text(", ".join(p.vehicles)))
        out.append(table)
    out.append(Text(""))
    out.append(literal(week.notes[0] if week.notes else "", DIM))
    return Group(*out)


def call_list(week: WeekPlan) -> RenderableType:
    """Customers to call: who, how to reach them, what is due and the slot (or why none)."""
    out: list[RenderableType] = [_heading(f"Call list ({len(week.call_list)})")]
    if not week.call_list:
        out.append(Text("None: no vehicle in the plan has a contact.", style=DIM))
        return Group(*out)
    table = Table.grid(padding=(0, 1))
    table.add_column(no_wrap=True)
    table.add_column(ratio=1)
    for k, c in enumerate(week.call_list):
        if k:
            table.add_row("", "")
        who = field_text(c.name or "(no name)", "bold")
        for part in (c.phone, c.email):
            if part:
                who.append("  ")
                who.append(field_text(part))
        table.add_row(literal(c.vehicle_id, ACCENT), who)
        due = Text.assemble(status_text(c.status.value), "  ",
                            (c.action, "bold"), f": {c.status_words}, due {c.due_date or 'now'}")
        table.add_row("", due)
        if c.booked_day is not None:
            start = clock(c.booked_day, c.start_hour or 0.0, OPENS)
            table.add_row("", Text(f"booked {day_text(c.booked_day)} {start:%H:%M}, bay {c.bay}"))
        else:
            table.add_row("", literal(f"not booked: {c.not_booked}", "bold"))
    out.append(table)
    out += [Text(""), literal(f"Caution: {CAUTION}", DIM)]
    return Group(*out)


def totals(week: WeekPlan) -> RenderableType:
    """Hours, the cost of the required jobs and of the near-limit ones (with the risk those take
    away), the assumptions, notes and caution."""
    cur = week.currency
    table = Table.grid(padding=(0, 2))
    table.add_column(no_wrap=True, style=DIM)
    table.add_column(ratio=1)
    table.add_row("Window", f"{day_text(week.start)} to {day_text(week.end)} "
                  f"({week.weeks} week{'s' if week.weeks != 1 else ''}), planned on "
                  f"{week.as_of}, booking {week.include}")
    table.add_row("Booked", f"{len(week.bookings)} job{'s' if len(week.bookings) != 1 else ''}"
                  f", {hours_text(week.labour_hours)} of {hours_text(week.capacity)}; "
                  f"{len(week.unplaced)} not placed")
    table.add_row("Labour", f"{hours_text(week.labour_hours)} x {money(week.labour_rate, cur)}"
                  f" = {money(week.labour_cost, cur)}")
    table.add_row("Parts", money(week.parts_cost, cur))
    table.add_row("Total", Text(money(week.total_cost, cur), style="bold"))
    table.add_row("Required now", Text(required_line(week).removeprefix("Required now "),
                                       style="bold"))
    table.add_row("Near the limit", near_limit_line(week).removeprefix("Near the limit: "))
    out: list[RenderableType] = [_heading("Totals"), table, Text(""),
                                 _heading("Risk figures"), literal(week.risk_assumptions)]
    if week.notes:
        out += [Text(""), _heading("Notes")]
        out += [literal(f"• {n}") for n in week.notes]
    out += [Text(""), _heading("Caution"), literal(CAUTION)]
    return Group(*out)
