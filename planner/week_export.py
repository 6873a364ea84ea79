"""A week plan as text: a terminal table, CSV, JSON, Markdown job sheets and iCalendar.

Pure: a `WeekPlan` in, a string out; no file access and no clock (the calendar's DTSTAMP is a
parameter). Clock times come from the workshop's opening hour, `OPENS` unless given: a bay-day's
jobs run back to back from opening, as `planner.schedule` lays them out.

iCalendar (RFC 5545) is written by hand: one VEVENT per job *per working day* (a job over two
days is two events, each in the bay's working hours, "day 1 of 2" in the summary), because a
single event spanning the night would show the bay busy at 3 a.m. and hide when the work is
done. UIDs are `<vehicle id, escaped>-<yyyymmdd>@beltplan.invalid`: a vehicle has at most one
segment a day, so they are unique in a plan and the same for the same booking on every export.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Iterable, Sequence
from typing import Any

from planner import __version__
from planner.export import CAUTION, json_text, to_csv
from planner.formats import money as _money
from planner.plan import Status
from planner.safetext import UNSHOWN_ABOVE_C0, markdown_text, shown
from planner.week import (
    INCLUDE,
    Booking,
    CallEntry,
    PartsLine,
    Segment,
    UnplacedJob,
    WeekJob,
    WeekPlan,
)

OPENS = dt.time(8, 0)
PRODID = f"-//beltplan//beltplan week {__version__}//EN"
UID_DOMAIN = "beltplan.invalid"  # RFC 2606: a domain that can never be someone else's
LIST_KINDS = ("jobs", "parts", "calls")
WEEKDAY_NAMES = ("Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun")

# -- small formatting helpers --------------------------------------------------------------------


def clean(text: str) -> str:
    """Text from the fleet file made safe to print (`safetext.shown`): line ends, tabs,
    control and format characters written as visible escapes."""
    return shown(text)


def hours_text(h: float) -> str:
    """`4.5 h`, `3 h`."""
    return f"{round(h, 2):g} h"


def money(x: float, currency: str, estimate: bool = False) -> str:
    """`1,234.50 EUR` (`formats.money` to the cent; an `estimate` never reads as zero)."""
    return _money(x, currency, decimals=2, estimate=estimate)


def _jobs_text(n: int) -> str:
    return f"{n} job{'s' if n != 1 else ''}"


def day_text(d: dt.date) -> str:
    """`Mon 2026-12-07`."""
    return f"{WEEKDAY_NAMES[d.weekday()]} {d.isoformat()}"


def clock(day: dt.date, after_opening: float, opens: dt.time = OPENS) -> dt.datetime:
    """The local time `after_opening` hours after opening on `day`, to the minute."""
    return dt.datetime.combine(day, opens) + dt.timedelta(minutes=round(after_opening * 60))


def span_text(s: Segment, opens: dt.time = OPENS) -> str:
    """`08:00-12:30`."""
    a = clock(s.day, s.start_hour, opens)
    b = clock(s.day, s.start_hour + s.hours, opens)
    return f"{a:%H:%M}-{b:%H:%M}"


def _part_of(s: Segment) -> str:
    return f" (day {s.day_index} of {s.day_count})" if s.day_count > 1 else ""


def _weekdays(week: WeekPlan) -> str:
    days = sorted(week.calendar.weekdays)
    return ", ".join(WEEKDAY_NAMES[d] for d in days) or "none"


def _included(week: WeekPlan) -> str:
    return ", ".join(s.value for s in INCLUDE[week.include])


def _title(week: WeekPlan) -> str:
    name = clean(week.fleet_name) or "workshop"
    return f"Week plan: {name}, {week.start} to {week.end}"


def _preface(week: WeekPlan) -> list[str]:
    ws = week.workshop
    lead = ("kits in stock" if ws.kits_in_stock else
            f"parts lead {ws.parts_lead_days} day{'s' if ws.parts_lead_days != 1 else ''}")
    return [
        f"Planned on {day_text(week.as_of)}; candidates: {_included(week)} "
        f"(--include {week.include}); order: triage (risk).",
        f"Workshop: {ws.bays} bay{'s' if ws.bays != 1 else ''} x {hours_text(ws.hours_per_day)} "
        f"a day ({_weekdays(week)}), {lead}; {hours_text(week.labour_hours)} booked of "
        f"{hours_text(week.capacity)}.",
    ]


def required_line(week: WeekPlan) -> str:
    """The jobs due now, with their cost and no risk figure: they are not optional."""
    cur = week.currency
    if not week.required_jobs:
        return "Required now (overdue or no belt record): none booked."
    return (f"Required now (overdue or no belt record; due, not optional): "
            f"{_jobs_text(len(week.required_jobs))}, {hours_text(week.required_hours)}, "
            f"{money(week.required_cost, cur)}. Replace these whatever the cost.")


def near_limit_line(week: WeekPlan) -> str:
    """The near-limit jobs, their cost, and the expected loss doing them now removes."""
    cur = week.currency
    if not week.near_limit_jobs:
        return "Near the limit: none booked."
    return (f"Near the limit: {_jobs_text(len(week.near_limit_jobs))}, "
            f"{money(week.near_limit_cost, cur)}; expected loss they remove (failure within "
            f"{week.risk_model.horizon_days} days x failure cost): "
            f"{money(week.expected_loss_removed, cur, estimate=True)}; due by their dates "
            "in any case.")


def _totals(week: WeekPlan) -> list[str]:
    cur = week.currency
    return [
        required_line(week),
        near_limit_line(week),
        f"Labour: {hours_text(week.labour_hours)} x {money(week.labour_rate, cur)} = "
        f"{money(week.labour_cost, cur)}; parts: {money(week.parts_cost, cur)}; total "
        f"{money(week.total_cost, cur)}.",
    ]


def _booked_rows(week: WeekPlan, opens: dt.time) -> list[list[str]]:
    rows = []
    for b in week.bookings:
        for s in b.segments():
            rows.append([
                day_text(s.day), str(s.bay), span_text(s, opens) + _part_of(s),
                clean(b.job.vehicle_id), clean(b.job.label), hours_text(s.hours),
                b.job.status.value, b.job.action, b.job.consequence.value,
                ", ".join(clean(p) for p in b.job.parts) or "(parts not listed)",
            ])
    return rows


def _parts_rows(week: WeekPlan) -> list[list[str]]:
    return [[("from stock" if p.in_stock else str(p.order_by)), str(p.quantity), clean(p.part),
             ", ".join(clean(v) for v in p.vehicles)] for p in week.parts_order]


def _booked_words(c: CallEntry, opens: dt.time) -> str:
    if c.booked_day is None:
        return "not booked: " + c.not_booked
    start = clock(c.booked_day, c.start_hour or 0.0, opens)
    return f"{day_text(c.booked_day)} {start:%H:%M}, bay {c.bay}"


def _call_rows(week: WeekPlan, opens: dt.time) -> list[list[str]]:
    return [[clean(c.vehicle_id), clean(c.name), clean(c.phone), clean(c.email),
             str(c.due_date or "now"), f"{c.action}: {c.status_words}",
             _booked_words(c, opens)]
            for c in week.call_list]


def _unplaced_rows(week: WeekPlan) -> list[list[str]]:
    return [[clean(u.job.vehicle_id), clean(u.job.label), u.job.status.value, u.job.action,
             "-" if u.job.hours is None else hours_text(u.job.hours), u.reason, clean(u.detail)]
            for u in week.unplaced]


# -- terminal table ------------------------------------------------------------------------------


def _columns(headers: Sequence[str], rows: Sequence[Sequence[str]],
             indent: str = "  ") -> list[str]:
    """Left-aligned text columns with a header and a rule."""
    widths = [max(len(h), *(len(r[i]) for r in rows)) for i, h in enumerate(headers)]

    def line(cells: Sequence[str]) -> str:
        return (indent + "  ".join(c.ljust(w) for c, w in zip(cells, widths, strict=True))).rstrip()
    return [line(headers), indent + "  ".join("-" * w for w in widths), *map(line, rows)]


def _cell_lines(week: WeekPlan, opens: dt.time) -> dict[tuple[dt.date, int], list[str]]:
    cells: dict[tuple[dt.date, int], list[str]] = {}
    for d in week.days:
        for slot in d.bays:
            lines = [f"{span_text(s, opens)} {clean(s.job.vehicle_id)} {hours_text(s.hours)} "
                     f"{s.job.status.value}" + (", replace now" if s.job.required else "")
                     + (f" {s.day_index}/{s.day_count}" if s.day_count > 1 else "")
                     for s in slot.segments]
            if slot.left > 1e-9:
                lines.append(f"  free {hours_text(slot.left)}")
            cells[(d.day, slot.bay)] = lines
    return cells


def to_table(week: WeekPlan, opens: dt.time = OPENS) -> str:
    """The week as text for the terminal: a grid of days (rows) by bays (columns), then the
    booked jobs, what could not be placed, the parts order, the call list and the totals."""
    out = [_title(week), *_preface(week), ""]
    cells = _cell_lines(week, opens)
    bays = list(range(1, week.workshop.bays + 1))
    day_w = len("Mon 2026-12-07")
    width = max([len(f"Bay {b}") for b in bays] + [len(x) for v in cells.values() for x in v]
                + [len("closed (holiday)")])
    head = ["Day".ljust(day_w)] + [f"Bay {b}".ljust(width) for b in bays] + ["Booked"]
    rule = "-+-".join(["-" * day_w] + ["-" * width for _ in bays] + ["-" * 13])
    out += [" | ".join(head).rstrip(), rule]
    for d in week.days:
        if not d.working and not d.closed:
            continue  # a day off every week: not worth a row
        if not d.working:
            out.append(" | ".join([day_text(d.day), "closed (holiday)".ljust(width)]).rstrip())
            out.append(rule)
            continue
        height = max(len(cells[(d.day, b)]) for b in bays)
        for k in range(height):
            row = [day_text(d.day) if k == 0 else " " * day_w]
            for b in bays:
                lines = cells[(d.day, b)]
                row.append((lines[k] if k < len(lines) else "").ljust(width))
            row.append(f"{d.booked:g} of {d.capacity:g} h" if k == 0 else "")
            out.append(" | ".join(row).rstrip())
        out.append(rule)
    out.append("")
    n = len(week.bookings)
    out.append(f"Booked jobs ({n}, {hours_text(week.labour_hours)})")
    if n:
        out += _columns(["Day", "Bay", "Time", "Vehicle", "Label", "Hours", "Status",
                         "Action", "If it fails", "Parts"], _booked_rows(week, opens))
    else:
        out.append("  none")
    out.append("")
    out.append(f"Not placed ({len(week.unplaced)})")
    if week.unplaced:
        out += _columns(["Vehicle", "Label", "Status", "Action", "Hours", "Reason", "Detail"],
                        _unplaced_rows(week))
    else:
        out.append("  none: every candidate is booked")
    out.append("")
    out.append("Parts to order" + (" (kits in stock: take from the shelf)"
                                   if week.calendar.kits_in_stock else ""))
    if week.parts_order:
        out += _columns(["Order by", "Qty", "Part", "For"], _parts_rows(week))
    else:
        out.append("  none")
    out.append("")
    out.append(f"Call list ({len(week.call_list)})")
    if week.call_list:
        out += _columns(["Vehicle", "Name", "Phone", "Email", "Due", "Status", "Booked"],
                        _call_rows(week, opens))
    else:
        out.append("  none: no candidate has a contact")
    out.append("")
    out += _totals(week)
    out.append(week.risk_assumptions)
    out += [f"Note: {n}" for n in week.notes]
    out.append("")
    out.append(CAUTION)
    return "\n".join(out) + "\n"


# -- records (CSV and JSON) ----------------------------------------------------------------------

JOB_FIELDS: tuple[str, ...] = (
    "kind", "day", "bay", "start", "end", "hours", "day_of_job", "vehicle", "label", "engine",
    "drive", "consequence", "status", "due_date", "job_hours", "parts", "parts_cost",
    "expected_loss", "reason", "not_placed", "contact_name", "contact_phone", "action",
)
PARTS_FIELDS: tuple[str, ...] = ("order_by", "quantity", "part", "vehicles", "in_stock")
CALL_FIELDS: tuple[str, ...] = (
    "vehicle", "label", "name", "phone", "email", "due_date", "status", "status_words", "reason",
    "booked_day", "bay", "start", "not_booked", "action",
)


def _iso(d: dt.date | None) -> str | None:
    return None if d is None else d.isoformat()


def job_record(job: WeekJob) -> dict[str, Any]:
    """What a job is, whatever its booking."""
    c = job.contact
    return {
        "vehicle": job.vehicle_id, "label": job.label, "engine": job.engine,
        "drive": job.drive, "consequence": job.consequence.value, "status": job.status.value,
        "due_date": _iso(job.due_date), "job_hours": job.hours, "parts": list(job.parts),
        "parts_cost": job.parts_cost, "expected_loss": job.expected_loss,
        "reason": job.reason, "interval": job.interval,
        "contact_name": c.name if c else None, "contact_phone": c.phone if c else None,
        "action": job.action, "required": job.required,
    }


def segment_record(s: Segment, opens: dt.time = OPENS) -> dict[str, Any]:
    return {
        "kind": "booked", "day": s.day.isoformat(), "bay": s.bay,
        "start": f"{clock(s.day, s.start_hour, opens):%H:%M}",
        "end": f"{clock(s.day, s.start_hour + s.hours, opens):%H:%M}",
        "hours": round(s.hours, 4), "day_of_job": f"{s.day_index} of {s.day_count}",
        **job_record(s.job), "not_placed": None,
    }


def unplaced_record(u: UnplacedJob) -> dict[str, Any]:
    return {"kind": "not placed", "day": None, "bay": None, "start": None, "end": None,
            "hours": None, "day_of_job": None, **job_record(u.job),
            "not_placed": f"{u.reason}: {u.detail}"}


def parts_record(p: PartsLine) -> dict[str, Any]:
    return {"order_by": _iso(p.order_by), "quantity": p.quantity, "part": p.part,
            "vehicles": list(p.vehicles), "in_stock": p.in_stock}


def call_record(c: CallEntry, opens: dt.time = OPENS) -> dict[str, Any]:
    start = None
    if c.booked_day is not None:
        start = f"{clock(c.booked_day, c.start_hour or 0.0, opens):%H:%M}"
    return {"vehicle": c.vehicle_id, "label": c.label, "name": c.name, "phone": c.phone,
            "email": c.email, "due_date": _iso(c.due_date), "status": c.status.value,
            "status_words": c.status_words, "reason": c.reason,
            "booked_day": _iso(c.booked_day), "bay": c.bay, "start": start,
            "not_booked": c.not_booked or None, "action": c.action}


def job_rows(week: WeekPlan, opens: dt.time = OPENS) -> list[dict[str, Any]]:
    """Every booked day segment (day, bay, time order), then every job not placed."""
    rows = [segment_record(s, opens) for b in week.bookings for s in b.segments()]
    rows.sort(key=lambda r: (r["day"], r["bay"], r["start"]))
    return rows + [unplaced_record(u) for u in week.unplaced]


def to_csv_text(week: WeekPlan, kind: str = "jobs", opens: dt.time = OPENS) -> str:
    """One of the plan's lists as CSV (RFC 4180, cells made safe by `export.safe_cell`)."""
    if kind == "jobs":
        return to_csv(job_rows(week, opens), JOB_FIELDS)
    if kind == "parts":
        return to_csv((parts_record(p) for p in week.parts_order), PARTS_FIELDS)
    if kind == "calls":
        return to_csv((call_record(c, opens) for c in week.call_list), CALL_FIELDS)
    raise ValueError(f"unknown list {kind!r}; choose from {', '.join(LIST_KINDS)}")


def _booking_record(b: Booking, opens: dt.time) -> dict[str, Any]:
    return {**job_record(b.job), "bay": b.bay, "days": [d.isoformat() for d in b.days],
            "hours_by_day": [round(h, 4) for h in b.hours_by_day],
            "start": f"{clock(b.first_day, b.start_hour, opens):%H:%M}",
            "parts_ready": _iso(b.parts_ready)}


def to_json_text(week: WeekPlan, opens: dt.time = OPENS) -> str:
    """The whole plan as one JSON document (dates ISO 8601, hours and money as numbers)."""
    ws = week.workshop
    doc = {
        "as_of": week.as_of.isoformat(), "start": week.start.isoformat(),
        "end": week.end.isoformat(), "weeks": week.weeks, "include": week.include,
        "included_statuses": _included(week).split(", "), "unit": week.unit,
        "currency": week.currency, "opens": f"{opens:%H:%M}",
        "workshop": {"bays": ws.bays, "hours_per_day": ws.hours_per_day,
                     "weekdays": list(ws.weekdays), "closed": [d.isoformat() for d in ws.closed],
                     "parts_lead_days": ws.parts_lead_days, "kits_in_stock": ws.kits_in_stock},
        "days": [{
            "day": d.day.isoformat(), "working": d.working, "closed": d.closed,
            "capacity": d.capacity, "booked": round(d.booked, 4), "left": round(d.left, 4),
            "bays": [{"bay": s.bay, "capacity": s.capacity, "booked": round(s.booked, 4),
                      "left": round(s.left, 4),
                      "jobs": [{k: v for k, v in segment_record(g, opens).items()
                                if k in ("vehicle", "start", "end", "hours", "day_of_job",
                                         "status", "consequence")} for g in s.segments]}
                     for s in d.bays],
        } for d in week.days],
        "bookings": [_booking_record(b, opens) for b in week.bookings],
        "not_placed": [{**job_record(u.job), "reason": u.reason, "detail": u.detail,
                        "status_reason": u.job.reason} for u in week.unplaced],
        "parts_order": [parts_record(p) for p in week.parts_order],
        "call_list": [call_record(c, opens) for c in week.call_list],
        "totals": {
            "labour_hours": round(week.labour_hours, 4), "labour_rate": week.labour_rate,
            "labour_cost": round(week.labour_cost, 2), "parts_cost": round(week.parts_cost, 2),
            "total_cost": round(week.total_cost, 2),
            "parts_cost_unknown": list(week.parts_cost_unknown),
            "expected_loss_removed": week.expected_loss_removed,
            "expected_loss_unknown": list(week.loss_unknown),
            "required_jobs": list(week.required_jobs),
            "required_hours": round(week.required_hours, 4),
            "required_cost": round(week.required_cost, 2),
            "near_limit_jobs": list(week.near_limit_jobs),
            "near_limit_cost": round(week.near_limit_cost, 2),
        },
        "risk_assumptions": {**week.risk_model.as_dict(), "text": week.risk_assumptions},
        "notes": list(week.notes),
        "caution": CAUTION,
    }
    return json_text(doc)


# -- Markdown ------------------------------------------------------------------------------------

md = markdown_text  # the one Markdown escaping (planner/safetext.py), shared with the list


def _md_table(headers: Sequence[str], rows: Iterable[Sequence[str]]) -> list[str]:
    lines = ["| " + " | ".join(headers) + " |", "|" + "|".join("---" for _ in headers) + "|"]
    lines += ["| " + " | ".join(md(c) for c in r) + " |" for r in rows]
    return lines


def _action_words(j: WeekJob) -> str:
    if j.required:
        why = ("past a limit" if j.status is Status.OVERDUE
               else "no record of the belt now running")
        return f"{j.action}: required, {why}; not optional"
    return f"{j.action}: before {j.due_date}" if j.due_date else j.action


def job_sheet(b: Booking, week: WeekPlan, opens: dt.time = OPENS) -> list[str]:
    """A printable sheet for one booked job."""
    j = b.job
    when = "; ".join(f"{day_text(s.day)} {span_text(s, opens)} ({hours_text(s.hours)})"
                     for s in b.segments())
    parts = ", ".join(md(p) for p in j.parts) or "(parts not listed: identify the kit)"
    cost = "not given" if j.parts_cost is None else money(j.parts_cost, week.currency)
    lines = [
        f"### {md(j.vehicle_id)}: {md(j.label) or 'no label'}",
        "",
        f"- **Action:** {_action_words(j)}",
        f"- **Booked:** bay {b.bay}, {md(when)}",
        f"- **Engine:** {md(j.engine)}, drive: {j.drive}",
        f"- **Interval in force:** {md(j.interval)}",
        f"- **Reason:** {md(j.reason)}",
        f"- **If it fails:** {j.consequence.value}",
        f"- **Parts:** {parts} (cost {md(cost)})",
        f"- **Labour:** {hours_text(sum(b.hours_by_day))}",
    ]
    if j.contact is not None:
        who = ", ".join(md(x) for x in (j.contact.name, j.contact.phone, j.contact.email) if x)
        lines.append(f"- **Customer:** {who or 'no details'}")
    for note in j.plan.notes[1:]:
        lines.append(f"- _Note:_ {md(note)}")
    lines += ["", "Done by: ____________  Date: ____________  Odometer: ____________", "",
              f"> **Caution.** {CAUTION}", ""]
    return lines


def to_markdown_text(week: WeekPlan, opens: dt.time = OPENS) -> str:
    """The week as Markdown: the grid, the lists, then one job sheet per booked job."""
    out = [f"# {md(_title(week))}", ""]
    for line in _preface(week):
        out += [md(line), ""]
    bays = range(1, week.workshop.bays + 1)
    cells = _cell_lines(week, opens)
    out.append("## The week")
    out.append("")
    grid = []
    for d in week.days:
        if not d.working:
            if d.closed:
                grid.append([day_text(d.day), *("closed (holiday)" for _ in bays), "–"])
            continue
        grid.append([day_text(d.day)]
                    + ["; ".join(x.strip() for x in cells[(d.day, b)]) for b in bays]
                    + [f"{d.booked:g} of {d.capacity:g} h"])
    out += _md_table(["Day", *(f"Bay {b}" for b in bays), "Booked"], grid)
    out += ["", f"## Booked jobs ({len(week.bookings)})", ""]
    booked_heads = ["Day", "Bay", "Time", "Vehicle", "Label", "Hours", "Status", "Action",
                    "If it fails", "Parts"]
    out += _md_table(booked_heads, _booked_rows(week, opens)) if week.bookings else ["None."]
    out += ["", f"## Not placed ({len(week.unplaced)})", ""]
    out += _md_table(["Vehicle", "Label", "Status", "Action", "Hours", "Reason", "Detail"],
                     _unplaced_rows(week)) if week.unplaced else ["None: every job is booked."]
    out += ["", "## Parts to order", ""]
    out += _md_table(["Order by", "Qty", "Part", "For"], _parts_rows(week)) \
        if week.parts_order else ["None."]
    out += ["", f"## Call list ({len(week.call_list)})", ""]
    out += _md_table(["Vehicle", "Name", "Phone", "Email", "Due", "Status", "Booked"],
                     _call_rows(week, opens)) if week.call_list else ["None."]
    out += ["", "## Totals", ""]
    for line in _totals(week):
        out += [md(line), ""]
    out += [f"_{md(week.risk_assumptions)}_", ""]
    out += [f"- {md(n)}" for n in week.notes]
    out += ["", "## Job sheets", ""]
    for k, b in enumerate(week.bookings):
        if k:
            out += ["---", ""]
        out += job_sheet(b, week, opens)
    if not week.bookings:
        out += ["No jobs booked.", ""]
    out.append(f"> **Caution.** {CAUTION}")
    return "\n".join(out) + "\n"


# -- iCalendar (RFC 5545) ------------------------------------------------------------------------


def ics_text(text: str) -> str:
    """A TEXT value (RFC 5545 §3.3.11): backslash, semicolon, comma and newline escaped; other
    control characters, which TEXT does not allow, removed, and so are format characters such
    as a bidi override (U+202E), which TEXT has no escape for."""
    text = text.replace("\r\n", "\n").replace("\r", "\n")
    text = UNSHOWN_ABOVE_C0.sub("", re.sub(r"[\x00-\x08\x0b-\x1f\x7f]", "", text))
    text = text.replace("\\", "\\\\").replace(";", "\\;").replace(",", "\\,")
    return text.replace("\n", "\\n")


def fold(line: str, limit: int = 75) -> str:
    """Fold a content line at `limit` octets (RFC 5545 §3.1): CRLF then one space, never
    inside a UTF-8 character. A continuation line's leading space counts toward its limit."""
    pieces: list[str] = []
    current, size = "", 0
    for ch in line:
        n = len(ch.encode("utf-8"))
        if size + n > limit:
            pieces.append(current)
            current, size = " ", 1
        current += ch
        size += n
    pieces.append(current)
    return "\r\n".join(pieces)


def uid_part(text: str) -> str:
    """Letters, digits, '.' and '-' kept; anything else as _XX (hex bytes), so two ids never
    give one UID."""
    out = []
    for ch in text:
        if ch.isascii() and (ch.isalnum() or ch in ".-"):
            out.append(ch)
        else:
            out.extend(f"_{b:02X}" for b in ch.encode("utf-8"))
    return "".join(out)


def _utc(stamp: dt.datetime) -> str:
    if stamp.tzinfo is not None:
        stamp = stamp.astimezone(dt.UTC)
    return f"{stamp:%Y%m%dT%H%M%S}Z"


def _local(t: dt.datetime) -> str:
    return f"{t:%Y%m%dT%H%M%S}"  # floating local time: the workshop's own clock


def _description(s: Segment, b: Booking, week: WeekPlan) -> str:
    j = s.job
    lines = [
        f"{j.vehicle_id}: {j.label}".rstrip(": "),
        f"Action: {_action_words(j)}",
        f"Engine: {j.engine}, drive: {j.drive}",
        f"Interval: {j.interval}",
        f"Reason: {j.reason}",
        f"If it fails: {j.consequence.value}",
        f"Bay {s.bay}, {hours_text(s.hours)} this day, {hours_text(sum(b.hours_by_day))} "
        f"in all{_part_of(s)}",
        "Parts: " + (", ".join(j.parts) or "not listed: identify the kit"),
    ]
    if j.contact is not None:
        who = ", ".join(x for x in (j.contact.name, j.contact.phone, j.contact.email) if x)
        if who:
            lines.append(f"Customer: {who}")
    lines.append(CAUTION)
    return "\n".join(lines)


def to_ics(week: WeekPlan, stamp: dt.datetime, opens: dt.time = OPENS) -> str:
    """The booked jobs as an iCalendar file: one VEVENT per job per day, CRLF line ends.

    `stamp` is the DTSTAMP (when the file was made; UTC, naive taken as UTC): the caller reads
    the clock, this function never does. Raises ValueError when nothing is booked: RFC 5545
    (§3.6) wants at least one component in a calendar.
    """
    if not week.bookings:
        raise ValueError(f"no jobs booked between {week.start} and {week.end}: a calendar "
                         "needs at least one event")
    lines = ["BEGIN:VCALENDAR", "VERSION:2.0", f"PRODID:{PRODID}", "CALSCALE:GREGORIAN",
             "METHOD:PUBLISH"]
    for b in week.bookings:
        for s in b.segments():
            j = s.job
            summary = f"Belt job {j.vehicle_id}" + (f" {j.label}" if j.label else "") + \
                f" ({j.status.value}){_part_of(s)}"
            lines += [
                "BEGIN:VEVENT",
                f"UID:{uid_part(j.vehicle_id)}-{s.day:%Y%m%d}@{UID_DOMAIN}",
                f"DTSTAMP:{_utc(stamp)}",
                f"DTSTART:{_local(clock(s.day, s.start_hour, opens))}",
                f"DTEND:{_local(clock(s.day, s.start_hour + s.hours, opens))}",
                f"SUMMARY:{ics_text(summary)}",
                f"LOCATION:{ics_text(f'Bay {s.bay}')}",
                f"DESCRIPTION:{ics_text(_description(s, b, week))}",
                "STATUS:CONFIRMED",
                "TRANSP:OPAQUE",
                "END:VEVENT",
            ]
    lines.append("END:VCALENDAR")
    return "".join(fold(line) + "\r\n" for line in lines)


FORMATS = ("table", "csv", "json", "markdown", "ics")
