"""Bringing data in: a fleet file from a spreadsheet export, odometer readings from a weekly CSV.

Pure: bytes or text in, data and a report out. No file access and no clock: the command line
reads the files, passes the time for the header comment, writes the result and loads it back.

The reading rules, in the order they apply:
- bytes: UTF-8 with or without a BOM; otherwise Windows-1252, and the report says so.
- table: comma or semicolon, chosen from the header row (an Excel `sep=;` first line wins);
  quoting per RFC 4180 (doubled quotes, separators and line breaks inside quoted fields).
- columns: `--map COLUMN=field` first, then our own list of likely header words per field.
- dates: ISO 8601 always; day/month/year or month/day/year only when the user says which, or
  when every such value in the column can be read one way only. Never a guess.
- numbers: thousands separators and a unit suffix ("151,200 km"); a unit that contradicts the
  fleet's is an error for that row, never converted.
A row with a problem is reported with its row number, column and value, and left out.
"""

from __future__ import annotations

import codecs
import csv
import datetime as dt
import difflib
import io
import re
import tomllib
from collections import Counter
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import tomli_w

from planner import edit
from planner.edit import add_readings  # noqa: F401  (was defined here)
from planner.errors import PlannerError, Problem
from planner.fleet import MAX_ODOMETER, SCHEMA_VERSION, SPEC_FIELDS, Fleet, Reading
from planner.validate import build_fleet

DAY_FIRST = "day-first"
MONTH_FIRST = "month-first"
MAX_ROWS = 100_000
_MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August",
           "September", "October", "November", "December")


# -- bytes to text ----------------------------------------------------------------------------

@dataclass(frozen=True)
class Decoded:
    """The text of a CSV file and how its bytes were read."""

    text: str
    encoding: str  # "UTF-8", "UTF-8 with BOM" or "Windows-1252"
    note: str = ""  # set when the Windows-1252 fallback was used


def decode_bytes(raw: bytes, name: str) -> Decoded:
    """UTF-8 (a leading BOM dropped), else Windows-1252 with a note saying so."""
    if raw.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        raise PlannerError(f"{name} is UTF-16 text",
                           "Save the sheet as 'CSV UTF-8' (or plain CSV) and import that file.")
    if b"\x00" in raw:
        raise PlannerError(f"{name} is not a text file",
                           "It contains NUL bytes; export the sheet as CSV and import that file.")
    bom = raw.startswith(codecs.BOM_UTF8)
    body = raw[len(codecs.BOM_UTF8):] if bom else raw
    try:
        return Decoded(body.decode("utf-8"), "UTF-8 with BOM" if bom else "UTF-8")
    except UnicodeDecodeError as exc:
        bad, line = body[exc.start], body[: exc.start].count(b"\n") + 1
    if bom:
        raise PlannerError(f"{name} starts with a UTF-8 mark but is not UTF-8",
                           f"Byte 0x{bad:02x} on line {line} cannot be read; save it as "
                           "'CSV UTF-8' again.")
    try:
        text = body.decode("cp1252")
    except UnicodeDecodeError as exc:
        line2 = body[: exc.start].count(b"\n") + 1
        raise PlannerError(f"{name}: unknown text encoding",
                           f"It is neither UTF-8 (byte 0x{bad:02x}, line {line}) nor Windows-1252 "
                           f"(byte 0x{body[exc.start]:02x}, line {line2}). Save it as 'CSV UTF-8'."
                           ) from None
    return Decoded(text, "Windows-1252",
                   f"not UTF-8 (byte 0x{bad:02x} on line {line}), so read as Windows-1252, the "
                   "Western European Windows code page: check names with accents or symbols "
                   "(saving the sheet as 'CSV UTF-8' avoids the question)")


# -- text to a table --------------------------------------------------------------------------

@dataclass(frozen=True)
class RowProblem:
    """Why one row of the CSV was left out: where, which column, which value."""

    row: int  # spreadsheet row: the header is row 1
    line: int  # file line where the row starts (differs after quoted line breaks)
    message: str
    column: str | None = None
    value: str | None = None
    hint: str = ""

    def render(self) -> str:
        where = f"row {self.row}" + (f" (line {self.line})" if self.line != self.row else "")
        if self.column is not None:
            where += f", column {self.column!r}"
        if self.value is not None:
            where += f" = {_show(self.value)}"
        return f"{where}: {self.message}" + (f"\n    fix: {self.hint}" if self.hint else "")

    def as_problem(self, file: str) -> Problem:
        text = self.render().split("\n    fix: ")[0]
        return Problem(text, file=file, line=self.line, hint=self.hint)


def _show(value: str) -> str:
    """A cell as the user typed it, quoted, line breaks visible, cut when long."""
    shown = repr(value)
    return shown if len(shown) <= 60 else shown[:56] + "...'"


@dataclass(frozen=True)
class Row:
    number: int
    line: int
    cells: tuple[str, ...]


@dataclass(frozen=True)
class CsvTable:
    header: tuple[str, ...]
    rows: tuple[Row, ...]
    delimiter: str
    blank_rows: int = 0
    problems: tuple[RowProblem, ...] = ()  # rows whose cell count does not match the header
    notes: tuple[str, ...] = ()


DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "bar"}


def read_table(text: str, name: str) -> CsvTable:
    """Split CSV text into a header and rows (RFC 4180 quoting; comma or semicolon)."""
    notes: list[str] = []
    line_offset = 0
    sep = re.match(r"sep=(.)\r?\n", text)
    if sep and sep[1] in DELIMITER_NAMES:
        delimiter, text, line_offset = sep[1], text[sep.end():], 1
        notes.append(f"separator {DELIMITER_NAMES[delimiter]} from the file's 'sep=' line")
    else:
        delimiter = _sniff(text)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, quotechar='"',
                        doublequote=True, strict=True)
    header: tuple[str, ...] | None = None
    rows: list[Row] = []
    problems: list[RowProblem] = []
    blank = 0
    record = 0
    start = 1
    try:
        for cells in reader:
            record += 1
            number, line = record, start + line_offset
            start = reader.line_num + 1
            if not any(c.strip() for c in cells):
                blank += 1 if header is not None else 0
                if header is None:
                    record -= 1
                continue
            if header is None:
                header = tuple(c.strip() or f"(column {k + 1})" for k, c in enumerate(cells))
                continue
            if len(rows) >= MAX_ROWS:
                raise PlannerError(f"{name} has more than {MAX_ROWS:,} rows",
                                   "Split the file and import it in parts.")
            cells = [c.replace("\r\n", "\n") for c in cells]
            width = len(header)
            if len(cells) > width and not any(c.strip() for c in cells[width:]):
                cells = cells[:width]  # trailing empty cells, as some spreadsheets write them
            if len(cells) != width:
                problems.append(RowProblem(
                    number, line, f"{len(cells)} cells, but the header has {width} columns",
                    hint="a separator is missing or extra on this row, or a text with a "
                    f"{DELIMITER_NAMES.get(delimiter, delimiter)} in it is not in quotes"))
                continue
            rows.append(Row(number, line, tuple(cells)))
    except csv.Error as exc:
        if "end of data" in str(exc):  # the row's opening quote is never closed
            problem = Problem("a quoted text starts in this row and never ends", file=name,
                              line=start + line_offset)
        else:
            problem = Problem(f"CSV error: {exc}", file=name, line=reader.line_num + line_offset)
        raise PlannerError(
            f"{name} is not valid CSV",
            "Fix the quoting at the place shown (a quote inside a quoted text is written "
            "twice: \"\"), or export the sheet again; nothing was imported.", [problem],
        ) from None
    if header is None:
        raise PlannerError(f"{name} is empty", "Export the sheet with its header row.")
    if not rows and not problems:
        raise PlannerError(f"{name} has a header row but no rows under it",
                           "Export the sheet with its data; nothing was imported.")
    return CsvTable(header, tuple(rows), delimiter, blank, tuple(problems), tuple(notes))


def _sniff(text: str) -> str:
    """Comma or semicolon: whichever appears more often in the header, outside quotes."""
    counts = {",": 0, ";": 0}
    quoted = False
    for ch in text:
        if ch == '"':
            quoted = not quoted
        elif not quoted:
            if ch in counts:
                counts[ch] += 1
            elif ch in "\r\n":
                break
    return ";" if counts[";"] > counts[","] else ","


# -- the fields a column can fill -------------------------------------------------------------

@dataclass(frozen=True)
class FieldInfo:
    kind: str  # text, id, enum, date, distance, months, number, parts
    words: tuple[str, ...]  # likely header words, most specific first (normalised)
    help: str


# Our own list of likely header words, after normalising (lower case, words only, distance
# units taken out): "Odometer (km)" -> "odometer". A field's own name always matches too.
FLEET_FIELDS: dict[str, FieldInfo] = {
    "id": FieldInfo("id", ("vehicle id", "fleet no", "fleet number", "fleet", "fleet id",
                           "unit no", "unit number", "asset", "asset id", "asset no",
                           "vehicle no", "vehicle number", "vehicle", "registration", "reg",
                           "reg no", "plate", "number plate", "licence plate", "license plate",
                           "vrm"), "unique vehicle id (fleet number or plate)"),
    "label": FieldInfo("text", ("name", "vehicle name", "description", "make model",
                                "make and model", "model", "nickname", "role"),
                       "name shown beside the id"),
    "engine": FieldInfo("text", ("engine profile", "engine", "engine code", "engine type",
                                 "profile"), "engine profile id (rows sharing it form a profile)"),
    "fuel": FieldInfo("enum", ("fuel type",), "petrol, diesel or other"),
    "drive": FieldInfo("enum", ("cam drive", "timing drive", "drive type", "timing",
                                "timing type", "belt or chain"), "belt, wet-belt, chain or gear"),
    "interference": FieldInfo("enum", ("interference engine", "interfering"),
                              "interference, non-interference or unknown (yes/no accepted)"),
    "duty": FieldInfo("enum", ("duty cycle", "severe duty", "severe", "usage"),
                      "normal or severe (yes/no accepted)"),
    "in_service": FieldInfo("date", ("in service date", "date in service", "in service from",
                                     "on fleet", "date on fleet", "service start",
                                     "acquired", "date acquired",
                                     "purchase date", "purchased", "start date"),
                            "day the vehicle entered service (or the fleet)"),
    "first_registered": FieldInfo("date", ("first registration", "date first registered",
                                           "date of first registration", "registration date",
                                           "registered"),
                                  "day first registered, if bought used (the risk model "
                                  "assumes an unknown belt this old)"),
    "in_service_odometer": FieldInfo("distance", ("odometer in service", "start odometer",
                                                  "starting odometer", "odometer at start",
                                                  "odometer at purchase", "opening odometer",
                                                  "start mileage", "purchase mileage",
                                                  "mileage at purchase"),
                                     "odometer on the in-service day"),
    "belt_history": FieldInfo("enum", ("belt record",), "known or unknown (bought used "
                                                        "without a belt record)"),
    "interval_distance": FieldInfo("distance", ("belt interval", "interval", "belt interval "
                                                "distance", "service interval", "change every",
                                                "replace every"),
                                   "maker's interval by distance"),
    "interval_months": FieldInfo("months", ("belt interval months", "belt interval years",
                                            "interval months", "interval years", "interval age",
                                            "age limit", "interval time"),
                                 "maker's interval by age, months (a 'years' column is x12)"),
    "severe_interval_distance": FieldInfo("distance", ("severe interval",),
                                          "severe-service interval by distance"),
    "severe_interval_months": FieldInfo("months", ("severe interval years",),
                                        "severe-service interval by age"),
    "labour_hours": FieldInfo("number", ("labour", "labor hours", "labor", "hours", "job hours",
                                         "labour time"), "workshop hours for the job"),
    "parts": FieldInfo("parts", ("parts list", "parts needed", "kit"),
                       "parts, separated by ';', ',' or '|'"),
    "parts_cost": FieldInfo("number", ("parts price", "kit cost", "kit price", "cost of parts"),
                            "cost of the parts"),
    "failure_cost": FieldInfo("number", ("repair estimate", "failure repair", "engine repair cost",
                                         "damage cost", "cost if it fails"),
                              "repair estimate if the drive fails"),
    "notes": FieldInfo("text", ("note", "comments", "comment", "remarks"), "free text"),
    "contact_name": FieldInfo("text", ("customer", "customer name", "owner", "contact"),
                              "customer's name (contact.name)"),
    "contact_phone": FieldInfo("text", ("phone", "telephone", "tel", "mobile"),
                               "telephone (contact.phone)"),
    "contact_email": FieldInfo("text", ("email", "e mail"), "e-mail (contact.email)"),
    "belt_date": FieldInfo("date", ("last belt date", "last belt change", "last belt",
                                    "belt changed", "belt change date", "belt replaced",
                                    "date belt replaced", "belt done", "last cambelt"),
                           "day of the latest belt job (becomes a belt_jobs entry)"),
    "belt_odometer": FieldInfo("distance", ("last belt odometer", "belt changed at",
                                            "odometer at belt change", "mileage at belt change",
                                            "belt mileage", "last belt mileage"),
                               "odometer at the latest belt job"),
    "belt_reason": FieldInfo("enum", ("belt job reason", "reason"),
                             "scheduled, failed or precaution (default: scheduled, reported)"),
    "belt_work": FieldInfo("text", ("work done", "work"), "what the belt job replaced"),
    "belt_notes": FieldInfo("text", ("job notes",), "notes on the belt job"),
    "reading_date": FieldInfo("date", ("last reading date", "odometer date", "date of reading",
                                       "mileage date", "read on", "last reading"),
                              "day of the latest odometer reading"),
    "reading_odometer": FieldInfo("distance", ("odometer reading", "odometer", "current odometer",
                                               "latest odometer", "last odometer", "odo",
                                               "mileage", "current mileage", "reading"),
                                  "the latest odometer reading"),
}

READING_FIELDS: dict[str, FieldInfo] = {
    "id": FLEET_FIELDS["id"],
    "reading_date": FieldInfo("date", ("date", "reading date", "odometer date", "date of reading",
                                       "day", "read on", "transaction date", "timestamp"),
                              "day of the reading"),
    "reading_odometer": FieldInfo("distance", ("odometer", "odometer reading", "odo", "mileage",
                                               "reading", "km", "kms", "miles", "distance"),
                                  "odometer at that day, in the fleet's unit"),
}

# Vehicle keys that no single column can hold.
NOT_MAPPABLE = {"readings": "use reading_date and reading_odometer",
                "belt_jobs": "use belt_date and belt_odometer (and belt_reason, belt_work)",
                "unavailable": "add unavailable ranges in the fleet file itself",
                "contact": "use contact_name, contact_phone and contact_email"}
IGNORE = "ignore"

_KM_WORDS = {"km", "kms", "kilometre", "kilometres", "kilometer", "kilometers"}
_MI_WORDS = {"mi", "mile", "miles"}
_YEAR_WORDS = {"year", "years", "yr", "yrs"}


def header_key(header: str) -> tuple[str, str | None]:
    """Normalised header words and the distance unit the header names: 'Odo (km)' -> odo, km."""
    words = re.findall(r"[a-z0-9]+", header.casefold())
    unit = "km" if _KM_WORDS & set(words) else "mi" if _MI_WORDS & set(words) else None
    kept = [w for w in words if w not in _KM_WORDS | _MI_WORDS]
    return " ".join(kept or words), unit


@dataclass(frozen=True)
class ColumnUse:
    """What the importer does with one column, and why."""

    index: int
    header: str
    field: str | None
    how: str  # "--map", "header word 'odometer'", or why the column is not used
    unit: str | None = None  # distance unit named in the header


def parse_map(items: Sequence[str] | None) -> dict[str, str]:
    """`['Reg=id', 'Odo (km)=reading_odometer']` -> {column: field}; checks the shape only."""
    out: dict[str, str] = {}
    for item in items or ():
        column, eq, name = item.rpartition("=")
        if not eq or not column.strip() or not name.strip():
            raise PlannerError(f"--map {item!r} is not COLUMN=field",
                               "write the column's header, '=', then the field, e.g. "
                               "--map \"Fleet no=id\" (or COLUMN=ignore to leave a column out)")
        out[column.strip()] = name.strip()
    return out


def map_columns(header: Sequence[str], explicit: Mapping[str, str],
                fields: Mapping[str, FieldInfo]) -> list[ColumnUse]:
    """Decide which column fills which field: `--map` first, then header words."""
    chosen: dict[int, ColumnUse] = {}
    taken: dict[str, int] = {}
    keys = [header_key(h) for h in header]
    for column, name in explicit.items():
        hits = [k for k, h in enumerate(header) if h == column] or \
            [k for k, h in enumerate(header) if h.casefold() == column.casefold()]
        if not hits:
            near = difflib.get_close_matches(column, list(header), n=1, cutoff=0.5)
            raise PlannerError(f"--map: no column named {column!r}",
                               (f"did you mean {near[0]!r}? " if near else "") +
                               "the columns are: " + ", ".join(repr(h) for h in header))
        if len(hits) > 1:
            raise PlannerError(f"--map: {len(hits)} columns are named {column!r}",
                               "rename one of them in the sheet, then import again")
        if name != IGNORE and name not in fields:
            if name in NOT_MAPPABLE:
                raise PlannerError(f"--map: {name!r} cannot come from one column",
                                   NOT_MAPPABLE[name])
            near = difflib.get_close_matches(name, list(fields), n=1)
            raise PlannerError(f"--map: unknown field {name!r}" +
                               (f" (did you mean {near[0]!r}?)" if near else ""),
                               "fields: " + ", ".join(fields) + f", or {IGNORE}")
        if name in taken:
            raise PlannerError(f"--map: {name} is given twice",
                               f"columns {header[taken[name]]!r} and {header[hits[0]]!r}; "
                               "map one column to each field")
        k = hits[0]
        chosen[k] = ColumnUse(k, header[k], None if name == IGNORE else name,
                              "left out (--map)" if name == IGNORE else "--map", keys[k][1])
        if name != IGNORE:
            taken[name] = k
    for name, info in fields.items():
        if name in taken:
            continue
        for word in (header_key(name.replace("_", " "))[0], *info.words):
            hits = [k for k in range(len(header)) if k not in chosen and keys[k][0] == word]
            if len(hits) > 1:
                raise PlannerError(
                    f"columns {', '.join(repr(header[k]) for k in hits)} all look like {name}",
                    f"say which with --map, e.g. --map \"{header[hits[0]]}={name}\" "
                    f"--map \"{header[hits[1]]}={IGNORE}\"")
            if hits:
                k = hits[0]
                chosen[k] = ColumnUse(k, header[k], name, f"header word {word!r}", keys[k][1])
                taken[name] = k
                break
    uses = []
    for k, h in enumerate(header):
        if k in chosen:
            uses.append(chosen[k])
            continue
        near = [f for f in fields if keys[k][0] in fields[f].words]
        why = (f"not used: {near[0]} comes from {header[taken[near[0]]]!r}" if near else
               "not used: no field has this header")
        uses.append(ColumnUse(k, h, None, why, keys[k][1]))
    return uses


# -- values -----------------------------------------------------------------------------------

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
_UNIT_OF = {**{w: "km" for w in _KM_WORDS}, **{w: "mi" for w in _MI_WORDS}}


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


def _whole(x: float) -> int | float:
    return int(x) if float(x).is_integer() else x


def _fmt(x: float) -> str:
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
    words = _ENUM_WORDS[name]
    key = " ".join(re.findall(r"[a-z0-9]+", text.casefold()))
    if key in words:
        return words[key]
    allowed = sorted(set(words.values()))
    near = difflib.get_close_matches(key, list(words), n=1)
    raise CellError(f"not one of {', '.join(allowed)}",
                    f"did you mean {words[near[0]]!r}?" if near else "")


# -- a sheet: a table with its columns decided ------------------------------------------------

@dataclass
class _Sheet:
    """A CSV table with the column decisions made once: dates, decimal marks, unit."""

    source: str
    table: CsvTable
    fields: Mapping[str, FieldInfo]
    uses: list[ColumnUse]
    unit: str
    fixed_unit: bool = False  # the unit is the fleet file's, not an option
    date_orders: dict[str, str | None] = field(default_factory=dict)
    marks: dict[str, str | None] = field(default_factory=dict)
    decisions: list[str] = field(default_factory=list)
    column_notes: dict[tuple[str, str], list[str]] = field(default_factory=dict)
    words_read: Counter = field(default_factory=Counter)  # (field, column, text, value) -> n
    years: Counter = field(default_factory=Counter)  # column -> values given in years
    times_dropped: int = 0

    def column(self, name: str) -> ColumnUse | None:
        return next((u for u in self.uses if u.field == name), None)

    def cell(self, row: Row, name: str) -> str:
        use = self.column(name)
        return row.cells[use.index].strip() if use else ""

    def value(self, row: Row, name: str) -> Any:
        """The cell of `name` read as its kind; None when empty. Raises CellError."""
        text = self.cell(row, name)
        if not text:
            return None
        kind = self.fields[name].kind
        if kind in ("text", "id"):
            return text
        if kind == "enum":
            value = parse_enum(name, text)
            if text.casefold() != value:
                self.words_read[(name, self.column(name).header, text, value)] += 1
            return value
        if kind == "date":
            day = parse_date(text, self.date_orders.get(name))
            self.times_dropped += bool(re.search(r"\d:\d", text))
            return day
        if kind == "parts":
            return [p.strip() for p in re.split(r"[;,|\n]", text) if p.strip()]
        use = self.column(name)
        assert use is not None
        number, word = parse_number(text, self.marks.get(name))
        if kind == "distance":
            unit = _UNIT_OF.get(word) if word else use.unit or self.unit
            if word and unit is None:
                raise CellError(f"unknown unit {word!r}", "write km or mi, or no unit")
            if unit != self.unit:
                raise CellError(f"the value is in {unit}, but the fleet's distances are in "
                                f"{self.unit}", f"give it in {self.unit}" +
                                ("" if self.fixed_unit else
                                 f", or import the whole sheet with --unit {unit}") +
                                "; nothing is converted")
            return _whole(number)
        if kind == "months":
            in_years = (word in _YEAR_WORDS or word in ("y", "a")) if word else \
                bool(_YEAR_WORDS & set(header_key(use.header)[0].split()))
            if word and not in_years and word not in ("m", "mo", "mos", "month", "months"):
                raise CellError(f"unknown unit {word!r}", "write months (72) or years (6 years)")
            months = number * 12 if in_years else number
            if not float(months).is_integer():
                raise CellError("not a whole number of months",
                                "give the interval in whole months")
            if in_years:
                self.years[use.header] += 1
            return int(months)
        if word and word not in ("h", "hr", "hrs", "hour", "hours", "eur", "gbp", "usd"):
            raise CellError(f"unknown unit {word!r}")
        return _whole(number)


def _open_sheet(text: str, source: str, fields: Mapping[str, FieldInfo],
                column_map: Mapping[str, str] | None, date_order: str | None,
                unit: str | None, required: Sequence[str], fixed_unit: bool) -> _Sheet:
    table = read_table(text, source)
    uses = map_columns(table.header, column_map or {}, fields)
    mapped = {u.field for u in uses if u.field}
    missing = [f for f in required if f not in mapped]
    if missing:
        raise PlannerError(
            f"{source}: no column for {', '.join(missing)}",
            f"say which column holds it with --map \"COLUMN={missing[0]}\"; "
            "the columns are: " + ", ".join(repr(h) for h in table.header))
    for a, b in (("belt_date", "belt_odometer"), ("belt_odometer", "belt_date"),
                 ("reading_date", "reading_odometer"), ("reading_odometer", "reading_date")):
        if a in mapped and b not in mapped and b in fields:
            raise PlannerError(f"{source}: a column for {a} but none for {b}",
                               f"a {a.split('_')[0]} needs both a date and an odometer; map the "
                               f"other column with --map \"COLUMN={b}\", or leave this one out "
                               f"with --map \"COLUMN={IGNORE}\"")
    problems: list[Problem] = []
    sheet = _Sheet(source, table, fields, uses, unit or "km", fixed_unit)
    for use in uses:
        if use.field is None:
            continue
        kind = fields[use.field].kind
        values = [(r.number, r.cells[use.index]) for r in table.rows if r.cells[use.index].strip()]
        if kind == "date":
            order, how, found = decide_date_order(values, date_order, use.header)
            if found:
                problems.append(Problem(f"dates in column {use.header!r} can be read two ways",
                                        hint="say which with --day-first or --month-first"))
                problems.extend(found)
            sheet.date_orders[use.field] = order
            sheet.column_notes.setdefault(("dates", how), []).append(use.header)
        elif kind in ("distance", "number", "months"):
            mark, how, found = decide_decimal_mark(values, use.header)
            if found:
                problems.append(Problem(f"numbers in column {use.header!r} mix decimal marks",
                                        hint="use one style in the column, then import again"))
                problems.extend(found)
            sheet.marks[use.field] = mark
            if mark is not None or "thousands" in how:
                sheet.column_notes.setdefault(("numbers", how), []).append(use.header)
    if problems:
        raise PlannerError(f"{source}: some columns cannot be read without a guess",
                           "Nothing was imported.", problems)
    sheet.unit = _decide_unit(sheet, unit, fixed_unit)
    return sheet


def _decide_unit(sheet: _Sheet, unit: str | None, fixed: bool) -> str:
    """The fleet's unit: --unit (or the fleet file's), else the unit the headers name, else
    the one unit the values carry. A column whose header contradicts it is an error."""
    distance_uses = [u for u in sheet.uses
                     if u.field is not None and sheet.fields[u.field].kind == "distance"]
    in_header = {u.unit: u.header for u in distance_uses if u.unit}
    in_values: dict[str, str] = {}
    for use in distance_uses:
        for row in sheet.table.rows:
            hit = re.search(r"([A-Za-z]+)\.?\s*$", row.cells[use.index])
            found = _UNIT_OF.get(hit[1].casefold()) if hit else None
            if found:
                in_values.setdefault(found, f"row {row.number}, {row.cells[use.index].strip()!r}")
    if unit is None and len(in_header) == 1:
        unit, = in_header
        sheet.decisions.append(f"distances in {unit} (from the header {in_header[unit]!r})")
    elif unit is None and not in_header and len(in_values) == 1:
        (unit, where), = in_values.items()
        sheet.decisions.append(f"distances in {unit} (from {where})")
    elif unit is not None:
        sheet.decisions.append(f"distances in {unit}" + (" (the fleet file's unit)" if fixed
                                                          else " (--unit)"))
    for use in distance_uses:
        if unit is not None and use.unit and use.unit != unit:
            raise PlannerError(
                f"column {use.header!r} is in {use.unit}, but the fleet's distances are in "
                f"{unit}" + ("" if fixed else " (--unit)" if len(in_header) < 2 else ""),
                "nothing is converted: export that column in " + unit +
                ("" if fixed else f", or import with --unit {use.unit}"))
    if unit is not None:
        return unit
    if in_header or in_values:
        both = {**in_values, **{u: f"the header {h!r}" for u, h in in_header.items()}}
        raise PlannerError(f"{sheet.source}: distances are in both km and mi",
                           f"km from {both['km']}, mi from {both['mi']}. Say which the fleet "
                           "uses with --unit km or --unit mi; rows in the other unit are then "
                           "reported and left out. Nothing is converted.")
    if distance_uses:
        raise PlannerError(f"{sheet.source}: the distances carry no unit",
                           "say which with --unit km or --unit mi (or put the unit in the "
                           "header, e.g. 'Odometer (km)')")
    sheet.decisions.append("no distances imported: distance_unit = km, the default "
                           "(--unit mi for miles)")
    return "km"


def _read_row(sheet: _Sheet, row: Row, names: Iterable[str]
              ) -> tuple[dict[str, Any], list[RowProblem]]:
    values: dict[str, Any] = {}
    problems: list[RowProblem] = []
    for name in names:
        try:
            value = sheet.value(row, name)
        except CellError as err:
            use = sheet.column(name)
            problems.append(RowProblem(row.number, row.line, err.message,
                                       use.header if use else None, sheet.cell(row, name),
                                       err.hint))
            continue
        if value is not None:
            values[name] = value
    return values, problems


def _rows(n: int, what: str = "row") -> str:
    return f"{n} {what}{'s' * (n != 1)}"


def _column_report(sheet: _Sheet, decoded: Decoded | None) -> list[str]:
    t = sheet.table
    enc = decoded.encoding if decoded else "text"
    lines = [f"Read {sheet.source}: {enc}, {DELIMITER_NAMES.get(t.delimiter, t.delimiter)}"
             f"-separated, {_rows(len(t.rows) + len(t.problems))} after the header"
             + (f" ({_rows(t.blank_rows, 'blank row')} ignored)" if t.blank_rows else "")]
    if decoded and decoded.note:
        lines.append(f"  note: {decoded.note}")
    lines.extend(f"  note: {n}" for n in t.notes)
    lines.append("Columns:")
    width = min(max((len(u.header) for u in sheet.uses), default=0) + 2, 32)
    for u in sheet.uses:
        target = u.field or "-"
        extra = f"; unit {u.unit} from the header" if u.field and u.unit else ""
        lines.append(f"  {u.header!r:<{width}} -> {target:<20} ({u.how}{extra})")
    lines.append("Read as:")
    for (what, how), headers in sheet.column_notes.items():
        lines.append(f"  {what} in {', '.join(repr(h) for h in headers)}: {how}")
    lines.extend(f"  {d}" for d in sheet.decisions)
    words: dict[tuple[str, str], tuple[list[str], int]] = {}
    order = {u.header: u.index for u in sheet.uses}
    for (_, column, text, value), n in sorted(sheet.words_read.items(),
                                              key=lambda kv: order[kv[0][1]]):
        shown, count = words.get((column, value), ([], 0))
        words[(column, value)] = (shown + [text], count + n)
    for (column, value), (shown, n) in words.items():
        lines.append(f"  {column!r}: {' / '.join(repr(t) for t in shown)} read as {value!r} "
                     f"({n} row{'s' * (n != 1)})")
    for column, n in sorted(sheet.years.items()):
        lines.append(f"  {column!r}: years turned into months, x12 ({n} rows)")
    if sheet.times_dropped:
        lines.append(f"  times of day dropped from {sheet.times_dropped} dates (the file keeps "
                     "days)")
    return lines


# -- a fleet file from a spreadsheet ----------------------------------------------------------

PROFILE_KEY = ("drive", "interference", "interval_distance", "interval_months",
               "severe_interval_distance", "severe_interval_months")
_VEHICLE_ORDER = ("id", "label", "engine", "duty", "in_service", "first_registered",
                  "in_service_odometer",
                  "belt_history", *SPEC_FIELDS, "notes")


@dataclass(frozen=True)
class FleetImport:
    """The result of `import_fleet`: the fleet file's text, its data, and the report."""

    text: str
    fleet: Fleet
    report: tuple[str, ...]
    problems: tuple[RowProblem, ...]
    vehicle_ids: tuple[str, ...]
    profiles: dict[str, tuple[str, ...]]  # profile id -> vehicle ids


def import_fleet(text: str, *, source: str, when: dt.datetime | dt.date,
                 unit: str | None = None, column_map: Mapping[str, str] | None = None,
                 date_order: str | None = None, name: str = "", group_profiles: bool = True,
                 decoded: Decoded | None = None) -> FleetImport:
    """Turn a spreadsheet's CSV text into a fleet file (text and checked `Fleet`).

    `when` is only written in the header comment. Raises `PlannerError` for problems that
    concern the whole sheet (no id column, ambiguous dates, mixed units) or when no row is
    usable; row problems leave the row out and are listed in the result.
    """
    sheet = _open_sheet(text, source, FLEET_FIELDS, column_map, date_order, unit,
                        ("id", "in_service"), fixed_unit=False)
    problems = list(sheet.table.problems)
    vehicles: list[tuple[Row, dict[str, Any]]] = []
    first_row: dict[str, int] = {}
    for row in sheet.table.rows:
        values, found = _read_row(sheet, row, FLEET_FIELDS)
        if not found:
            found = _check_vehicle(sheet, row, values)
        vid = values.get("id")
        if not found and vid in first_row:
            found = [RowProblem(row.number, row.line, f"id already used by row {first_row[vid]}",
                                sheet.column("id").header, vid,  # type: ignore[union-attr]
                                "give every vehicle its own id")]
        if found:
            problems.extend(found)
            continue
        first_row[vid] = row.number
        vehicles.append((row, _vehicle(values)))
    problems.sort(key=lambda p: p.row)
    report = _column_report(sheet, decoded)
    if not vehicles:
        raise PlannerError(f"{source}: no row can be imported",
                           f"{len(problems)} row problem{'s' * (len(problems) != 1)}; nothing "
                           "was written.", [p.as_problem(source) for p in problems])
    vdicts = [v for _, v in vehicles]
    warnings = _warnings(sheet, vdicts)  # before grouping moves drive fields into profiles
    engine_column = sheet.column("engine")
    engines, groups, kept = _profiles(vdicts, sheet.unit, engine_column is not None,
                                      group_profiles)
    left_out = len({p.row for p in problems})
    document = {"schema": SCHEMA_VERSION,
                "fleet": {k: v for k, v in (("name", name), ("distance_unit", sheet.unit)) if v},
                **({"engines": engines} if engines else {}),
                "vehicles": vdicts}
    stamp = when.strftime("%Y-%m-%d %H:%M") if isinstance(when, dt.datetime) else str(when)
    header = [f"# Fleet file made by `beltplan import` from {_one_line(source)} on {stamp}.",
              f"# {len(vdicts)} vehicle{'s' * (len(vdicts) != 1)} from "
              f"{len(vdicts) + left_out} rows"
              + (f"; {left_out} left out (see the import report)." if left_out else "."),
              "# Check every interval against the maker's schedule before relying on the plan.",
              ""]
    out = "\n".join(header) + "\n" + tomli_w.dumps(document)
    try:
        fleet = build_fleet(tomllib.loads(out))
    except PlannerError as err:  # a bug: every row was checked on its own above
        raise PlannerError("the imported fleet does not validate (a bug in beltplan import)",
                           err.message, err.problems) from None
    report += _profile_report(groups, kept, engine_column, group_profiles)
    report += [f"  warning: {w}" for w in warnings]
    report.append(f"Vehicles: {len(vdicts)} imported, {left_out} row"
                  f"{'s' * (left_out != 1)} left out")
    report += [f"  {p.render()}" for p in problems]
    return FleetImport(out, fleet, tuple(report), tuple(problems),
                       tuple(v["id"] for v in vdicts), {k: tuple(ids) for k, ids in groups.items()})


def _one_line(text: str) -> str:
    return re.sub(r"[\x00-\x1f\x7f]", "?", text)


def _vehicle(values: dict[str, Any]) -> dict[str, Any]:
    """Field values of one row -> a [[vehicles]] table in file order."""
    out = {k: values[k] for k in _VEHICLE_ORDER if k in values}
    contact = {k[len("contact_"):]: values[k] for k in ("contact_name", "contact_phone",
                                                        "contact_email") if k in values}
    if contact:
        out["contact"] = contact
    if "reading_date" in values and "reading_odometer" in values:
        out["readings"] = [{"date": values["reading_date"], "odometer": values["reading_odometer"]}]
    if "belt_date" in values and "belt_odometer" in values:
        job = {"date": values["belt_date"], "odometer": values["belt_odometer"],
               "reason": values.get("belt_reason", "scheduled")}
        job.update({k: values[f"belt_{k}"] for k in ("work", "notes") if f"belt_{k}" in values})
        out["belt_jobs"] = [job]
    return out


_PATH_FIELD = {("readings", "date"): "reading_date", ("readings", "odometer"): "reading_odometer",
               ("belt_jobs", "date"): "belt_date", ("belt_jobs", "odometer"): "belt_odometer",
               ("belt_jobs", "reason"): "belt_reason", ("contact", "name"): "contact_name",
               ("contact", "phone"): "contact_phone", ("contact", "email"): "contact_email"}


def _check_vehicle(sheet: _Sheet, row: Row, values: dict[str, Any]) -> list[RowProblem]:
    """Run the fleet file's own rules on one row, as a one-vehicle fleet."""
    out: list[RowProblem] = []
    for a, b in (("belt_date", "belt_odometer"), ("reading_date", "reading_odometer")):
        for x, y in ((a, b), (b, a)):
            if x in values and y not in values:
                use = sheet.column(y)
                out.append(RowProblem(row.number, row.line, f"{x} is given but {y} is empty",
                                      use.header if use else None, "",
                                      "fill both cells, or neither"))
    if "belt_date" not in values:
        for x in ("belt_reason", "belt_work", "belt_notes"):
            if x in values:
                use = sheet.column(x)
                out.append(RowProblem(row.number, row.line, f"{x} is given but there is no "
                                      "belt job (belt_date and belt_odometer are empty)",
                                      use.header if use else None, values[x],
                                      "fill in the belt job, or clear this cell"))
    engine = values.get("engine")
    if engine is not None and len(engine) > 64:
        out.append(RowProblem(row.number, row.line, "engine profile id longer than 64 characters",
                              sheet.column("engine").header, engine))  # type: ignore[union-attr]
    if out:
        return out
    vehicle = _vehicle({k: v for k, v in values.items() if k != "engine"})
    try:
        build_fleet({"fleet": {"distance_unit": sheet.unit}, "vehicles": [vehicle]})
    except PlannerError as err:
        for p in err.problems:
            path = tuple(x for x in p.path[2:] if not isinstance(x, int))
            name = _PATH_FIELD.get(path[:2], str(path[0]) if path else "")
            use = sheet.column(name)
            message, hint = p.message, p.hint
            if message == "required key is missing":
                message, hint = f"empty: every vehicle needs {name}", ""
            out.append(RowProblem(row.number, row.line, message, use.header if use else None,
                                  sheet.cell(row, name) if use else None, hint))
    return out


def _profiles(vehicles: list[dict[str, Any]], unit: str, by_engine: bool, enabled: bool
              ) -> tuple[dict[str, dict], dict[str, list[str]], dict[str, list[str]]]:
    """Group vehicles into engine profiles; move the drive fields they share into the profile.

    With an engine column, its value names the profile; otherwise vehicles that share drive,
    interference and intervals form one (two vehicles at least). A field the members do not
    all share stays on each vehicle, so every vehicle plans exactly as it would alone.
    """
    members: dict[Any, list[dict[str, Any]]] = {}
    for v in vehicles:
        if by_engine:
            key = v.get("engine")
        elif enabled and "drive" in v:
            key = tuple(v.get(f) for f in PROFILE_KEY)
        else:
            key = None
        if key is not None:
            members.setdefault(key, []).append(v)
    engines: dict[str, dict] = {}
    groups: dict[str, list[str]] = {}
    kept: dict[str, list[str]] = {}
    for key, group in members.items():
        if not by_engine and len(group) < 2:
            continue
        pid = key if by_engine else _profile_id(key, unit, engines)
        shared = {f: group[0][f] for f in SPEC_FIELDS
                  if all(f in v and v[f] == group[0][f] for v in group)}
        profile = {"description": f"imported: {len(group)} vehicle{'s' * (len(group) != 1)}"
                   + ("" if by_engine else " sharing drive, interference and intervals")}
        engines[pid] = {**profile, **shared}
        groups[pid] = [v["id"] for v in group]
        kept[pid] = sorted({f for v in group for f in SPEC_FIELDS if f in v} - set(shared))
        for v in group:
            for f in shared:
                del v[f]
            v["engine"] = pid
            reordered = {k: v[k] for k in _VEHICLE_ORDER if k in v}
            rest = {k: x for k, x in v.items() if k not in reordered}
            v.clear()
            v.update(reordered | rest)
    return engines, groups, kept


def _profile_id(key: tuple, unit: str, taken: Mapping[str, Any]) -> str:
    drive, interference, distance, months, s_distance, s_months = key
    parts = [drive, interference or "unrecorded"]
    parts += [f"{_whole(distance)}{unit}"] if distance is not None else []
    parts += [f"{months}m"] if months is not None else []
    if s_distance is not None or s_months is not None:
        parts.append("severe")
        parts += [f"{_whole(s_distance)}{unit}"] if s_distance is not None else []
        parts += [f"{s_months}m"] if s_months is not None else []
    base = "-".join(str(p) for p in parts)
    pid, n = base, 2
    while pid in taken:
        pid, n = f"{base}-{n}", n + 1
    return pid


def _profile_report(groups: dict[str, list[str]], kept: dict[str, list[str]],
                    engine_column: ColumnUse | None, enabled: bool) -> list[str]:
    if not groups:
        why = ("no two vehicles share drive, interference and intervals" if enabled else
               "grouping turned off (--no-profiles)")
        return [f"Engine profiles: none ({why}); every vehicle carries its own drive fields"]
    basis = (f"from column {engine_column.header!r}" if engine_column else
             "vehicles sharing drive, interference and intervals")
    lines = [f"Engine profiles ({basis}):"]
    for pid, ids in groups.items():
        shown = ", ".join(ids[:6]) + (f" and {len(ids) - 6} more" if len(ids) > 6 else "")
        lines.append(f"  {pid}: {len(ids)} vehicle{'s' * (len(ids) != 1)} ({shown})")
        if kept[pid]:
            lines.append(f"    kept on each vehicle (they differ): {', '.join(kept[pid])}")
    return lines


def _warnings(sheet: _Sheet, vehicles: list[dict[str, Any]]) -> list[str]:
    """Defaults the file will rely on, said out loud (unknown data must never look safe)."""
    out = []
    factory = [v["id"] for v in vehicles if "belt_jobs" not in v and "belt_history" not in v
               and v.get("drive") not in ("chain", "gear")]
    if factory:
        shown = ", ".join(factory[:8]) + (f" and {len(factory) - 8} more" if len(factory) > 8
                                          else "")
        verb = "is" if len(factory) == 1 else "are"
        out.append(f"{len(factory)} vehicle{'s' * (len(factory) != 1)} with no belt job and no "
                   f"belt_history {verb} planned from the factory belt: {shown}; set "
                   "belt_history = \"unknown\" for any bought used without a belt record")
    if sheet.column("in_service_odometer") is None:
        out.append("no in_service_odometer column: every vehicle starts at odometer 0 (the "
                   "file's default); correct it for vehicles bought used")
    if sheet.column("belt_date") is not None and sheet.column("belt_reason") is None:
        n = sum("belt_jobs" in v for v in vehicles)
        if n:
            out.append(f"no belt_reason column: {n} belt job{'s' * (n != 1)} recorded as reason "
                       "= \"scheduled\"")
    return out


# -- odometer readings from a weekly export ---------------------------------------------------

@dataclass(frozen=True)
class NewReading:
    vehicle: str
    date: dt.date
    odometer: float
    row: int


@dataclass(frozen=True)
class ReadingsImport:
    """The result of `import_readings`: what to add, and what was skipped or rejected."""

    added: tuple[NewReading, ...]
    skipped: tuple[RowProblem, ...]
    rejected: tuple[RowProblem, ...]
    text: str  # the fleet file's new text (the old text when nothing is added)
    report: tuple[str, ...]


def import_readings(csv_text: str, fleet: Fleet, fleet_text: str, *, source: str,
                    column_map: Mapping[str, str] | None = None, date_order: str | None = None,
                    today: dt.date | None = None, decoded: Decoded | None = None
                    ) -> ReadingsImport:
    """Match a readings CSV to the fleet's vehicles and add the new readings to the text.

    A reading already in the file (same vehicle, day and odometer) is skipped; one that would
    make the odometer go backwards, is dated before the vehicle entered service or after
    `today`, or names no vehicle is rejected with the reason. Comments and layout survive.
    """
    sheet = _open_sheet(csv_text, source, READING_FIELDS, column_map, date_order, fleet.unit,
                        ("id", "reading_date", "reading_odometer"), fixed_unit=True)
    unit = fleet.unit
    exact = {v.id: v for v in fleet.vehicles}
    loose: dict[str, list[str]] = {}
    for v in fleet.vehicles:
        loose.setdefault(_loose_id(v.id), []).append(v.id)
    points: dict[str, list[tuple[dt.date, float, str]]] = {}
    for v in fleet.vehicles:
        pts = [(v.in_service, v.in_service_odometer, "the in-service odometer")]
        pts += [(r.date, r.odometer, "the reading") for r in v.readings]
        pts += [(j.date, j.odometer, "the belt job") for j in v.belt_jobs]
        points[v.id] = pts
    added: list[NewReading] = []
    skipped: list[RowProblem] = []
    rejected: list[RowProblem] = list(sheet.table.problems)
    matched: Counter = Counter()
    id_col = sheet.column("id").header  # type: ignore[union-attr]
    odo_col = sheet.column("reading_odometer").header  # type: ignore[union-attr]
    date_col = sheet.column("reading_date").header  # type: ignore[union-attr]
    for row in sheet.table.rows:
        values, found = _read_row(sheet, row, READING_FIELDS)
        for name, col in (("id", id_col), ("reading_date", date_col),
                          ("reading_odometer", odo_col)):
            if name not in values and not any(p.column == col for p in found):
                found.append(RowProblem(row.number, row.line, "empty", col, ""))
        if found:
            rejected.extend(found)
            continue
        raw_id, day, odo = values["id"], values["reading_date"], values["reading_odometer"]
        vid = raw_id if raw_id in exact else None
        if vid is None:
            near = loose.get(_loose_id(raw_id), [])
            if len(near) == 1:
                vid = near[0]
                matched[(raw_id, vid)] += 1
            else:
                hint = (f"it matches {', '.join(near)}: use the exact id" if near else
                        _did_you_mean(raw_id, list(exact)) or
                        "add the vehicle to the fleet file first, or map the column that "
                        "holds the fleet's ids with --map COLUMN=id")
                why = "matches more than one vehicle" if near else "no vehicle with this id"
                rejected.append(RowProblem(row.number, row.line, why, id_col, raw_id, hint))
                continue
        vehicle = exact[vid]

        def reject(message: str, name: str, hint: str = "", _row: Row = row,
                   _vid: str = vid) -> None:
            col = odo_col if name == "reading_odometer" else date_col
            rejected.append(RowProblem(_row.number, _row.line, f"{_vid}: {message}", col,
                                       sheet.cell(_row, name), hint))
        try:
            Reading(date=day, odometer=odo)
        except ValueError:
            reject(f"odometer {_fmt(odo)} is outside 0-{MAX_ODOMETER:,}", "reading_odometer",
                   "check the value")
            continue
        same = [k for d, o, k in points[vid] if d == day and o == odo and "reading" in k]
        if same:
            where = ("is already in the file" if same[0] == "the reading" else
                     f"repeats {same[0].replace('the reading of ', '')}")
            skipped.append(RowProblem(row.number, row.line,
                                      f"{vid}: {day} at {_fmt(odo)} {unit} {where}"))
            continue
        if day < vehicle.in_service:
            reject(f"dated {day}, before the vehicle entered service ({vehicle.in_service})",
                   "reading_date", "check the date")
            continue
        if today is not None and day > today:
            reject(f"dated {day}, after today ({today})", "reading_date", "check the date")
            continue
        before = [(o, d, k) for d, o, k in points[vid] if d < day]
        after = [(o, d, k) for d, o, k in points[vid] if d > day]
        if before and odo < max(before)[0]:
            o, d, k = max(before)
            reject(f"odometer goes backwards: {_fmt(odo)} {unit} on {day} is below {k} of {d} "
                   f"({_fmt(o)} {unit})", "reading_odometer",
                   "check the reading; odometers only go forward")
            continue
        if after and odo > min(after)[0]:
            o, d, k = min(after)
            reject(f"odometer goes backwards: {_fmt(odo)} {unit} on {day} is above {k} of the "
                   f"later day {d} ({_fmt(o)} {unit})", "reading_odometer",
                   "check the reading or its date")
            continue
        points[vid].append((day, odo, f"the reading of row {row.number}"))
        added.append(NewReading(vid, day, odo, row.number))
    rejected.sort(key=lambda p: p.row)
    text = edit.add_readings(fleet_text, [(r.vehicle, r.date, r.odometer) for r in added])
    report = _column_report(sheet, decoded)
    for (raw, vid), n in sorted(matched.items()):
        report.append(f"  id {raw!r} matched to vehicle {vid} (case, spaces and dashes ignored; "
                      f"{n} row{'s' * (n != 1)})")
    report.append(f"Readings: {len(added)} added, {len(skipped)} skipped (already in the file), "
                  f"{len(rejected)} rejected")
    report += [f"  added: {r.vehicle} {r.date} {_fmt(r.odometer)} {unit} (row {r.row})"
               for r in added]
    report += [f"  skipped: {p.render()}" for p in skipped]
    report += [f"  rejected: {p.render()}" for p in rejected]
    return ReadingsImport(tuple(added), tuple(skipped), tuple(rejected), text, tuple(report))


def _loose_id(text: str) -> str:
    return re.sub(r"[\s\-_./]", "", text).casefold()


def _did_you_mean(word: str, choices: list[str]) -> str:
    near = difflib.get_close_matches(word, choices, n=1)
    return f"did you mean {near[0]!r}?" if near else ""
