"""Plans as records, and records as CSV (RFC 4180), JSON and Markdown text. Pure: strings out.

`plan_record` fixes the field names scripts rely on; every format is built from it, so the
columns of CSV, JSON and Markdown can never drift apart.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import json
from collections.abc import Iterable, Sequence
from typing import Any

from planner.caution import CAUTION as CAUTION  # re-exported: the one caution text
from planner.caution import caution_block as caution_block
from planner.formats import money, percent
from planner.plan import VehiclePlan
from planner.risk import REQUIRED_STATUSES, FleetAssessment, Risk, action_words
from planner.safetext import UNSHOWN_ABOVE_C0, markdown_text

# The JSON field names, in order. Scripts rely on them: add, never rename.
FIELDS: tuple[str, ...] = (
    "id", "label", "status", "consequence", "drive", "interference", "duty",
    "install_date", "install_odometer", "interval_distance", "interval_months",
    "est_odometer", "daily_distance", "distance_remaining", "time_due_date",
    "distance_due_date", "due_date", "days_remaining", "deciding_limit", "notes",
    "life_used", "p_fail_horizon", "p_fail_before_due", "expected_loss", "risk_basis",
    "action", "risk_extrapolated",
)


def _whole(x: float | None) -> int | None:
    return None if x is None else int(round(x))


def _iso(d: dt.date | None) -> str | None:
    return None if d is None else d.isoformat()


def plan_record(p: VehiclePlan, factor: float = 1.0, risk: Risk | None = None) -> dict[str, Any]:
    """One vehicle's plan (and risk) as a flat record: distances whole, dates ISO 8601,
    unknowns None.

    `factor` converts distances for display in another unit (see `planner.units`).
    """

    def dist(x: float | None) -> int | None:
        return _whole(None if x is None else x * factor)

    return {
        "id": p.vehicle.id,
        "label": p.vehicle.label,
        "status": p.status.value,
        "consequence": p.consequence.value,
        "drive": p.spec.drive_word,
        "interference": p.spec.interference.value,
        "duty": p.vehicle.duty.value,
        "install_date": _iso(p.install.date) if p.install else None,
        "install_odometer": dist(p.install.odometer) if p.install else None,
        "interval_distance": dist(p.spec.interval_distance) if p.spec.has_interval
        else None,
        "interval_months": p.spec.interval_months if p.spec.has_interval else None,
        "est_odometer": dist(p.usage.est_odometer),
        "daily_distance": None if p.usage.daily_distance is None
        else round(p.usage.daily_distance * factor, 1),
        "distance_remaining": dist(p.distance_remaining),
        "time_due_date": _iso(p.time_due_date),
        "distance_due_date": _iso(p.distance_due_date),
        "due_date": _iso(p.due_date),
        "days_remaining": p.days_remaining,
        "deciding_limit": p.deciding_limit.value if p.deciding_limit else None,
        "notes": list(p.notes),
        "life_used": None if p.life_used is None else round(p.life_used, 3),
        "p_fail_horizon": _prob(risk.p_fail_horizon) if risk else None,
        "p_fail_before_due": _prob(risk.p_fail_before_due) if risk else None,
        "expected_loss": None if risk is None else risk.expected_loss,
        "risk_basis": risk.basis if risk else None,
        "action": action_words(p),
        "risk_extrapolated": bool(risk and risk.extrapolated),
    }


def _prob(x: float | None) -> float | None:
    """Probabilities keep full precision: a tiny one is data, not zero."""
    return x


def assessment_records(a: FleetAssessment, factor: float = 1.0) -> list[dict[str, Any]]:
    """Records of a whole assessment, in its order, risk notes appended to each."""
    out = []
    for p in a.plans:
        r = a.risks.get(p.id)
        rec = plan_record(p, factor, r)
        if r is not None and r.notes:
            rec["notes"] = rec["notes"] + list(r.notes)
        out.append(rec)
    return out


def table_columns(unit: str, horizon_days: int = 90) -> list[tuple[str, str]]:
    """(field, heading) of the human-readable table, shared by the terminal and Markdown."""
    return [
        ("id", "Vehicle"), ("label", "Label"), ("drive", "Drive"),
        ("consequence", "If it fails"), ("status", "Status"), ("action", "Action"),
        ("distance_remaining", f"Left ({unit})"), ("due_date", "Due"),
        ("days_remaining", "Days"), ("deciding_limit", "Limit"),
        ("life_used", "Life used"), ("p_fail_horizon", f"Risk {horizon_days} d"),
        ("expected_loss", "Exp. loss"),
    ]


# Fractions shown as percentages in tables (the records keep fractions).
PERCENT_FIELDS = {"life_used", "p_fail_horizon", "p_fail_before_due"}


EXTRAPOLATED = "extrap."  # beside a probability past the maker's interval
REQUIRED = "required"  # in place of an expected loss for a job that is due


def display(value: Any, field: str = "") -> str:
    """A record value as table text: thousands separators, a dash for unknown."""
    if value is None:
        return "–"
    if field in PERCENT_FIELDS:
        return percent(value, 0 if field == "life_used" else 1)
    if isinstance(value, bool):
        return "yes" if value else "no"
    if field == "expected_loss":
        return money(value)
    if isinstance(value, int):
        return f"{value:,}"
    if isinstance(value, float):
        return f"{value:,.1f}"
    if isinstance(value, (list, tuple)):
        return "; ".join(str(v) for v in value)
    return str(value)


def mark(record: dict[str, Any], field: str) -> str | None:
    """How a record's risk figure is marked for people: `EXTRAPOLATED` beside a probability
    past the maker's interval (overdue, no belt record, or passing it within the horizon),
    `REQUIRED` in place of an expected loss for a job that is due; None for a plain figure."""
    if field == "expected_loss" and record.get("status") in REQUIRED_STATUSES:
        return REQUIRED  # also where no figure could be made (an interval not known)
    if not record.get("risk_extrapolated"):
        return None
    if field in ("p_fail_horizon", "p_fail_before_due") and record.get(field) is not None:
        return EXTRAPOLATED
    return None


def cell(record: dict[str, Any], field: str) -> str:
    """A record's value as people read it, marked as `mark` says: no expected loss is set
    against a job that is required."""
    how = mark(record, field)
    if how == REQUIRED:
        return REQUIRED
    text = display(record.get(field), field)
    return f"{text} {how}" if how else text


def to_json(records: Sequence[dict[str, Any]], as_of: dt.date, unit: str,
            extra: dict[str, Any] | None = None) -> str:
    doc: dict[str, Any] = {"as_of": as_of.isoformat(), "unit": unit}
    doc.update(extra or {})
    doc["vehicles"] = list(records)
    doc["caution"] = CAUTION
    return json_text(doc)


def json_text(doc: Any) -> str:
    """`doc` as indented JSON, non-ASCII kept readable, but every control, format and line
    separator character written as a \\u escape (RFC 8259 §7 allows any character so), so
    printed JSON neither commands a terminal nor breaks a line."""
    text = UNSHOWN_ABOVE_C0.sub(lambda m: f"\\u{ord(m.group()):04x}",
                                json.dumps(doc, indent=2, ensure_ascii=False))
    return text + "\n"


# What a spreadsheet may take for the start of a formula (OWASP "CSV Injection"): = + - @,
# tab and carriage return, and the fullwidth = + - @ (U+FF1D, U+FF0B, U+FF0D, U+FF20) that some
# spreadsheets read as the plain ones.
_RISKY_START = ("=", "+", "-", "@", "\t", "\r", "\uff1d", "\uff0b", "\uff0d", "\uff20")


def safe_cell(value: Any) -> Any:
    """Neutralise a text cell a spreadsheet would run as a formula (OWASP: CSV injection).

    Numbers stay numbers (a negative distance is data, not a formula); text that starts with
    = + - @ tab or carriage return, or their fullwidth forms, also after leading white space or
    line ends (a spreadsheet may trim them), gets a leading apostrophe.
    """
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        return value
    if isinstance(value, (list, tuple)):
        value = "; ".join(str(v) for v in value)
    text = str(value)
    if text.startswith(_RISKY_START) or text.lstrip().startswith(_RISKY_START):
        return "'" + text
    return text


def to_csv(records: Iterable[dict[str, Any]], fields: Sequence[str]) -> str:
    """RFC 4180: comma separated, CRLF line ends, quotes doubled, a header row."""
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n", quoting=csv.QUOTE_MINIMAL)
    writer.writerow(fields)
    for rec in records:
        writer.writerow([safe_cell(rec.get(f)) for f in fields])
    return out.getvalue()


def _md_cell(record: dict[str, Any], field: str) -> str:
    return markdown_text(cell(record, field))


def to_markdown(records: Sequence[dict[str, Any]], columns: Sequence[tuple[str, str]],
                title: str, preface: Sequence[str] = (), footer: Sequence[str] = ()) -> str:
    """A titled Markdown table of `columns` ((field, heading) pairs) with the caution below."""
    lines = [f"# {markdown_text(title)}", ""]
    for line in preface:
        lines.append(line)
    if preface:
        lines.append("")
    lines.append("| " + " | ".join(h for _, h in columns) + " |")
    lines.append("|" + "|".join("---" for _ in columns) + "|")
    for rec in records:
        lines.append("| " + " | ".join(_md_cell(rec, f) for f, _ in columns) + " |")
    lines.append("")
    for line in footer:
        lines.append(line)
    lines.append(f"> **Caution.** {CAUTION}")
    return "\n".join(lines) + "\n"
