"""CSV bytes to a table: the text encoding, the separator, RFC 4180 quoting, row numbers.

Row numbers are the spreadsheet's (the header is row 1), so a problem names the row the user
sees; a row's file line is kept too, since quoted line breaks make the two differ.
"""

from __future__ import annotations

import codecs
import csv
import io
import re
from dataclasses import dataclass

from planner.errors import PlannerError, Problem

MAX_ROWS = 100_000


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
