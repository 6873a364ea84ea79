"""Which records the fleet table shows and in which order: filters, search, sort. No Textual.

These are display choices over the engine's records, never planning rules: the records come
from `export.assessment_records` in triage order, and "triage" here means keeping that order.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

from planner.plan import Consequence, Status

STATUSES: tuple[str, ...] = tuple(s.value for s in Status)
CONSEQUENCES: tuple[str, ...] = tuple(c.value for c in Consequence)
TRIAGE = ""  # sort field meaning "the engine's triage order"

_RANK = {name: k for k, name in enumerate(STATUSES)}
_SEVERITY = {"engine-damage": 0, "unverified": 1, "breakdown": 2}


@dataclass(frozen=True)
class View:
    """The table's filters and order."""

    statuses: frozenset[str] = field(default_factory=frozenset)  # empty: every status
    consequences: frozenset[str] = field(default_factory=frozenset)
    query: str = ""
    sort: str = TRIAGE
    reverse: bool = False

    @property
    def filtered(self) -> bool:
        return bool(self.statuses or self.consequences or self.query.strip())

    def with_(self, **changes: Any) -> View:
        return replace(self, **changes)


def matches(record: dict[str, Any], view: View) -> bool:
    if view.statuses and record["status"] not in view.statuses:
        return False
    if view.consequences and record["consequence"] not in view.consequences:
        return False
    words = view.query.casefold().split()
    if words:
        hay = f"{record['id']} {record.get('label') or ''}".casefold()
        return all(w in hay for w in words)
    return True


def sort_value(record: dict[str, Any], name: str) -> tuple:
    """A key that orders any column; unknown values always last (whichever direction)."""
    value = record.get(name)
    if name == "status":
        return (0, _RANK.get(value, 99))
    if name == "consequence":
        return (0, _SEVERITY.get(value, 99))
    if value is None:
        return (1, 0)
    if isinstance(value, str):
        return (0, value.casefold())
    if isinstance(value, (list, tuple)):
        return (0, len(value))
    return (0, value)


def arrange(records: Sequence[dict[str, Any]], view: View) -> list[dict[str, Any]]:
    """The records to show, in the order to show them."""
    shown = [r for r in records if matches(r, view)]
    if view.sort == TRIAGE:
        return shown[::-1] if view.reverse else shown
    known = [r for r in shown if r.get(view.sort) is not None]
    unknown = [r for r in shown if r.get(view.sort) is None]
    known.sort(key=lambda r: sort_value(r, view.sort), reverse=view.reverse)
    return known + unknown


def describe(view: View, headings: dict[str, str]) -> str:
    """`overdue, due-soon · engine-damage · by Due ↑`, or `all vehicles · triage order`."""
    def words(chosen: Iterable[str], every: Sequence[str]) -> str:
        return ", ".join(w for w in every if w in chosen)

    parts = [p for p in (words(view.statuses, STATUSES),
                         words(view.consequences, CONSEQUENCES)) if p]
    if view.query.strip():
        parts.append(f"matching {view.query.strip()!r}")
    if not parts:
        parts.append("all vehicles")
    if view.sort == TRIAGE:
        parts.append("triage order" + (" reversed" if view.reverse else ""))
    else:
        parts.append(f"by {headings.get(view.sort, view.sort)} {'↓' if view.reverse else '↑'}")
    return " · ".join(parts)
