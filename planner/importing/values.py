"""One cell's text to a value: dates, numbers with units, enum words; `CellError` when not.

Date order and decimal mark are decided once per column (`decide_date_order`,
`decide_decimal_mark`) from all its values, never guessed from one cell.
"""

from __future__ import annotations

import datetime as dt
import difflib
import re
from collections.abc import Iterable

from planner.errors import Problem

DAY_FIRST = "day-first"
MONTH_FIRST = "month-first"
_MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August",
           "September", "October", "November", "December")

# Unit words, in a header ("Odometer (km)") or after a value ("151,200 km").
KM_WORDS = {"km", "kms", "kilometre", "kilometres", "kilometer", "kilometers"}
MI_WORDS = {"mi", "mile", "miles"}
YEAR_WORDS = {"year", "years", "yr", "yrs"}


class CellError(Exception):
    """A value that cannot be read; becomes a RowProblem."""

    def __init__(self, message: str, hint: str = "") -> None:
        super().__init__(message)
        self.message, self.hint = message, hint


_TIME = r"(?:[T ]+\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?(?:\s*[AaPp][Mm])?(?:Z|[+-]\d{2}:?\d{2})?)?"
_ISO_DATE = re.compile(r"(\d{4})-(\d{2})-(\d{2})" + _TIME)
_NUMERIC_DATE = re.compile(r"(\d{1,2})([/.\-])(\d{1,2})\2(\d{4})" + _TIME)
_SHORT_YEAR = re.compile(r"\d{1,2}([/.\-])\d{1,2}\1\d{2}" + _TIME)
_SERIAL = re.compile(r"\d{5}(?:\.\d+)?")


def _day_month(value: str) -> tuple[int, int, int] | None:
    """(first, second, year) of a dd/mm/yyyy or mm/dd/yyyy value, else None."""
    hit = _NUMERIC_DATE.fullmatch(value.strip())
    return (int(hit[1]), int(hit[3]), int(hit[4])) if hit else None


def _readings_of(first: int, second: int, year: int) -> set[str]:
    """Which orders read a numeric date as a real day: day-first, month-first, both, none."""
    orders = set()
    for order, (day, month) in ((DAY_FIRST, (first, second)), (MONTH_FIRST, (second, first))):
        try:
            dt.date(year, month, day)
        except ValueError:
            continue
        orders.add(order)
    return orders


def decide_date_order(values: Iterable[tuple[int, str]], given: str | None, column: str
                      ) -> tuple[str | None, str, list[Problem]]:
    """The order for one date column: (order, how it was decided, problems if ambiguous).

    `values` are (row number, text). ISO dates need no order. Without `given`, a column is read
    day-first (or month-first) only when every numeric date in it reads that way alone; a day
    equal to its month reads the same both ways.
    """
    only: dict[str, list[tuple[int, str]]] = {DAY_FIRST: [], MONTH_FIRST: []}
    either: list[tuple[int, str]] = []
    for row, text in values:
        parts = _day_month(text)
        if parts is None:
            continue
        orders = _readings_of(*parts)
        if orders == {DAY_FIRST, MONTH_FIRST}:
            if parts[0] != parts[1] and text not in {t for _, t in either}:
                either.append((row, text))
        elif len(orders) == 1:
            only[orders.pop()].append((row, text))
    if given is not None:
        return given, f"{given} (--{given})", []
    if not either and not only[DAY_FIRST] and not only[MONTH_FIRST]:
        return None, "ISO 8601", []
    if not either and bool(only[DAY_FIRST]) != bool(only[MONTH_FIRST]):
        order = DAY_FIRST if only[DAY_FIRST] else MONTH_FIRST
        example = only[order][0][1]
        return order, f"{order}: every numeric date reads only that way (e.g. {example!r})", []
    problems = []
    for row, text in either[:3]:
        first, second, year = _day_month(text)  # type: ignore[misc]
        problems.append(Problem(
            f"row {row}, column {column!r} = {text!r}: {first} {_MONTHS[second - 1]} {year} "
            f"day-first, {second} {_MONTHS[first - 1]} {year} month-first"))
    for order in (DAY_FIRST, MONTH_FIRST):
        for row, text in only[order][:2]:
            problems.append(Problem(f"row {row}, column {column!r} = {text!r}: "
                                    f"only {order} reads it"))
    return None, "", problems


def parse_date(value: str, order: str | None) -> dt.date:
    """An ISO 8601 date, or a numeric date in the given order. A time of day is dropped."""
    text = value.strip()
    hit = _ISO_DATE.fullmatch(text)
    try:
        if hit:
            return dt.date(int(hit[1]), int(hit[2]), int(hit[3]))
        parts = _day_month(text)
        if parts is not None:
            first, second, year = parts
            if order is None:  # unreachable after decide_date_order; kept as a guard
                raise CellError("day and month order unknown",
                                "import with --day-first or --month-first")
            day, month = (first, second) if order == DAY_FIRST else (second, first)
            return dt.date(year, month, day)
    except ValueError:
        raise CellError(f"no such day ({order or 'ISO 8601'})",
                        "check the day and the month" +
                        ("" if hit else "; or import with the other of --day-first and "
                         "--month-first")) from None
    if _SHORT_YEAR.fullmatch(text):
        raise CellError("two-digit year", "write the year in full, e.g. 20/11/2026")
    if _SERIAL.fullmatch(text):
        raise CellError("a spreadsheet day number, not a date",
                        "format the column as a date in the spreadsheet and export again")
    raise CellError("not a date", "write 2026-11-20 (ISO 8601), or 20/11/2026 with --day-first")


_GROUP_CHARS = " '\u00a0\u202f"  # always thousands separators
_NUMBER = re.compile(r"[+-]?\d[\d.,'\u00a0\u202f ]*")
UNIT_OF = {**{w: "km" for w in KM_WORDS}, **{w: "mi" for w in MI_WORDS}}


def _shape(number: str) -> tuple[str | None, str | None, str | None]:
    """(thousands separator, decimal mark, ambiguous separator) seen in one number."""
    seps = [c for c in number if not c.isdigit() and c not in "+-"]
    if not seps:
        return None, None, None
    last = seps[-1]
    if last in ".," and seps.count(last) == 1 and any(s != last for s in seps):
        others = {s for s in seps if s != last}
        return (others.pop() if len(others) == 1 else None), last, None
    if last in _GROUP_CHARS or seps.count(last) > 1:
        return last, None, None
    after = len(number) - number.rindex(last) - 1
    return (None, None, last) if after == 3 else (None, last, None)


def decide_decimal_mark(values: Iterable[tuple[int, str]], column: str
                        ) -> tuple[str | None, str, list[Problem]]:
    """The decimal mark of one number column: '.', ',' or None (no decimals seen).

    A lone '.' or ',' followed by three digits ('151,200', '151.200') is a thousands separator
    unless the column shows that mark used as a decimal elsewhere.
    """
    point: list[tuple[int, str]] = []
    comma: list[tuple[int, str]] = []
    ambiguous = 0
    for row, text in values:
        hit = _NUMBER.search(text)
        if not hit:
            continue
        thousands, decimal, unsure = _shape(hit[0].strip())
        if decimal == "." or thousands == ",":
            point.append((row, text))
        if decimal == "," or thousands == ".":
            comma.append((row, text))
        ambiguous += unsure is not None
    if point and comma:
        return None, "", [
            Problem(f"row {point[0][0]}, column {column!r} = {point[0][1]!r}: decimal point"),
            Problem(f"row {comma[0][0]}, column {column!r} = {comma[0][1]!r}: decimal comma")]
    mark = "." if point else "," if comma else None
    how = {".": "decimal point", ",": "decimal comma", None: "whole numbers"}[mark]
    if ambiguous and mark is None:
        how += "; '.' or ',' before three digits read as a thousands separator"
    return mark, how, []


def parse_number(text: str, mark: str | None) -> tuple[float, str]:
    """(value, the word after it) of '151,200 km', '1.234,5', '72 months', '€260'."""
    body = text.strip().replace("\u2212", "-")
    body = re.sub(r"^[€£$]\s*|\s*[€£$]$", "", body)
    hit = _NUMBER.match(body)
    if not hit:
        raise CellError("not a number")
    number = hit[0].strip()
    rest = body[hit.end():].strip().rstrip(".").casefold()
    if rest and not re.fullmatch(r"[a-z]+", rest):
        raise CellError("not a number", "write the number alone, or with a unit: 151200 km")
    whole, found, frac = number.partition(mark) if mark else (number, "", "")
    if found and (not frac or any(not c.isdigit() for c in frac)):
        raise CellError("not a number as written", f"use {mark!r} only as the decimal mark")
    sign = "-" if whole.startswith("-") else ""
    groups = re.split(r"[.,'\u00a0\u202f ]", whole.lstrip("+-"))
    if len(groups) > 1 and (not 1 <= len(groups[0]) <= 3 or
                            any(len(g) != 3 for g in groups[1:])):
        raise CellError("not a number as written",
                        "thousands separators go every three digits: 151,200")
    return float(sign + "".join(groups) + ("." + frac if frac else "")), rest


def whole(x: float) -> int | float:
    """151200.0 -> 151200: whole numbers as integers, the way the fleet file writes them."""
    return int(x) if float(x).is_integer() else x


def grouped(x: float) -> str:
    """151200 -> '151,200', for the report."""
    return f"{x:,.0f}" if float(x).is_integer() else f"{x:,}"


_ENUM_WORDS: dict[str, dict[str, str]] = {
    "drive": {"belt": "belt", "timing belt": "belt", "dry belt": "belt", "cambelt": "belt",
              "cam belt": "belt", "toothed belt": "belt", "wet belt": "wet-belt",
              "belt in oil": "wet-belt", "oil bath belt": "wet-belt", "chain": "chain",
              "timing chain": "chain", "gear": "gear", "gears": "gear", "gear drive": "gear"},
    "interference": {"interference": "interference", "yes": "interference", "y": "interference",
                     "true": "interference", "non interference": "non-interference",
                     "noninterference": "non-interference", "free running": "non-interference",
                     "no": "non-interference", "n": "non-interference",
                     "false": "non-interference", "unknown": "unknown", "not known": "unknown",
                     "unsure": "unknown", "check": "unknown"},
    "fuel": {"petrol": "petrol", "gasoline": "petrol", "unleaded": "petrol", "diesel": "diesel",
             "other": "other", "lpg": "other", "cng": "other"},
    "duty": {"normal": "normal", "standard": "normal", "no": "normal", "n": "normal",
             "false": "normal", "severe": "severe", "heavy": "severe", "yes": "severe",
             "y": "severe", "true": "severe"},
    "belt_history": {"known": "known", "unknown": "unknown", "no record": "unknown",
                     "none": "unknown"},
    "belt_reason": {"scheduled": "scheduled", "service": "scheduled", "routine": "scheduled",
                    "failed": "failed", "failure": "failed", "broke": "failed",
                    "broken": "failed", "snapped": "failed", "precaution": "precaution",
                    "precautionary": "precaution"},
}


def parse_enum(name: str, text: str) -> str:
    """The field's own word for what the cell says ('Timing chain' -> 'chain'), or CellError."""
    words = _ENUM_WORDS[name]
    key = " ".join(re.findall(r"[a-z0-9]+", text.casefold()))
    if key in words:
        return words[key]
    allowed = sorted(set(words.values()))
    near = difflib.get_close_matches(key, list(words), n=1)
    raise CellError(f"not one of {', '.join(allowed)}",
                    f"did you mean {words[near[0]]!r}?" if near else "")
