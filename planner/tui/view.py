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
        hay = _haystack(record)
        return all(w in hay for w in words)
    return True


def _haystack(record: dict[str, Any]) -> str:
    """What the find box searches: the id and the label."""
    return f"{record['id']} {record.get('label') or ''}".casefold()


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
    return Listing(records).arrange(view)


class Listing:
    """One plan's records, with what filtering and sorting them needs worked out once.

    The table re-arranges the same records on every keystroke in the find box and every sort;
    the search text and the sort keys of 10,000 records are computed on first use and kept.
    """

    def __init__(self, records: Sequence[dict[str, Any]]) -> None:
        self.records = records
        self._hay: list[str] | None = None
        self._keys: dict[str, tuple[list[tuple], list[bool]]] = {}

    def arrange(self, view: View) -> list[dict[str, Any]]:
        """`arrange(records, view)`: the same records in the same order, found faster."""
        records = self.records
        shown = range(len(records))
        if view.statuses:
            shown = [i for i in shown if records[i]["status"] in view.statuses]
        if view.consequences:
            shown = [i for i in shown if records[i]["consequence"] in view.consequences]
        words = view.query.casefold().split()
        if words:
            if self._hay is None:
                self._hay = [_haystack(r) for r in records]
            hay = self._hay
            shown = [i for i in shown if all(w in hay[i] for w in words)]
        if view.sort == TRIAGE:
            order = list(shown)[::-1] if view.reverse else shown
        else:
            keys, known = self._sort_keys(view.sort)
            first = [i for i in shown if known[i]]
            first.sort(key=keys.__getitem__, reverse=view.reverse)
            order = first + [i for i in shown if not known[i]]
        return [records[i] for i in order]

    def _sort_keys(self, name: str) -> tuple[list[tuple], list[bool]]:
        cached = self._keys.get(name)
        if cached is None:
            cached = self._keys[name] = ([sort_value(r, name) for r in self.records],
                                         [r.get(name) is not None for r in self.records])
        return cached


def describe(view: View, headings: dict[str, str]) -> str:
    """`overdue, near-limit · engine-damage · by Due ↑`, or `all vehicles · triage order`."""
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
