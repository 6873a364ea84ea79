"""Odometer readings from a CSV export, in the UI: the same import as `beltplan readings`.

No Textual here. The form reads the file the way the command line does (`fileio.read_csv`, as
`beltplan import`: size limit, workbook and TOML refused, encodings) and runs
`planner.importer.import_readings` on the session's current text, so duplicates are skipped and
backwards, future or unknown-vehicle readings are rejected by the importer's own rules. Nothing
is applied here: the report is shown first, and applying it is an ordinary undoable edit.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from rich.text import Text

from planner import importer
from planner.fileio import read_csv
from planner.tui import clock
from planner.tui.forms import FormField, FormSpec
from planner.tui.look import DIM
from planner.tui.session import Session

F = FormField
HINT_WORDS = ("reading", "odometer", "mileage", "fuel", "telematics")


@dataclass(frozen=True)
class StagedImport:
    """What an import would do, before it is applied."""

    path: Path
    result: importer.ReadingsImport
    base: str  # the fleet text it was matched against (applied only onto that text)

    @property
    def what(self) -> str:
        """The undo entry: `19 readings from weekly_readings.csv`."""
        n = len(self.result.added)
        return f"{n} reading{'s' if n != 1 else ''} imported from {self.path.name}"


def default_csv(fleet_path: Path) -> Path:
    """The CSV to offer, beside the fleet file: the newest whose name says it holds readings,
    else the newest CSV there, else `readings.csv` (the form shows the name only: relative
    names are taken beside the fleet file)."""
    try:
        found = [p for p in fleet_path.parent.glob("*.csv") if p.is_file()]
        newest = sorted(found, key=lambda p: (p.stat().st_mtime, p.name), reverse=True)
    except OSError:
        newest = []
    named = [p for p in newest if any(w in p.name.casefold() for w in HINT_WORDS)]
    if named or newest:
        return (named or newest)[0]
    return fleet_path.with_name("readings.csv")


def resolve(session: Session, typed: str) -> Path:
    """A typed path; relative ones are taken beside the fleet file (like the exports)."""
    path = Path(typed.strip()).expanduser()
    return path if path.is_absolute() else session.path.parent / path


def stage(session: Session, typed: str, column_map: list[str] | None,
          date_order: str | None) -> StagedImport:
    """Read the CSV and match it to the fleet as it is now; PlannerError says what is wrong."""
    assert session.fleet is not None
    path = resolve(session, typed)
    decoded = read_csv(str(path))
    # "today" is read at the edge, as the command line does: a reading dated after it is a slip.
    result = importer.import_readings(
        decoded.text, session.fleet, session.text, source=str(path),
        column_map=importer.parse_map(column_map or []), date_order=date_order,
        today=clock.today(), decoded=decoded)
    return StagedImport(path, result, session.text)


def readings_form(session: Session) -> FormSpec:
    """Which file, and how to read it; applying shows the report, nothing is changed yet."""
    def submit(v: dict[str, Any]) -> StagedImport:
        return stage(session, v["file"], v["map"], v["date_order"])

    intro = Text("A fuel-card, telematics or driver's-log export. Rows are matched to vehicles "
                 "by id; you see what would be added, skipped and rejected before anything "
                 "changes.", style=DIM)
    return FormSpec("Import odometer readings", [
        F("file", "CSV file", "text", default_csv(session.path).name, required=True,
          help="relative names are taken beside the fleet file"),
        F("date_order", "numeric dates", "choice", None, placeholder="as the file shows",
          choices=((importer.DAY_FIRST, "day first: 28/11/2026"),
                   (importer.MONTH_FIRST, "month first: 11/28/2026")),
          help="a column that could be read both ways is refused, never guessed"),
        F("map", "columns", "list", placeholder="e.g. Registration=id, Km=reading_odometer",
          help="only when the headers are not recognised: COLUMN=field, comma separated"),
    ], submit, intro=intro, apply_words="Read")
