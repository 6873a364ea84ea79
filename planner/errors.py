"""The one error type for everything a user can cause.

A `PlannerError` has a title, a message and a list of `Problem`s, each pointing at a place in a
fleet file. The command line prints it and exits with status 2; the terminal UI shows it in its
error view. A traceback means a bug, never bad input.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

from planner.safetext import shown

Path = tuple[str | int, ...]


_BARE = frozenset("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789_-")


def format_path(path: Path) -> str:
    """`('vehicles', 2, 'readings', 0, 'odometer')` -> `vehicles[2].readings[0].odometer`.

    A key that is not a TOML bare key (empty, spaces, dots…) is quoted the way the file
    would have to write it: `engines."my van"`.
    """
    out = ""
    for part in path:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            if not part or not _BARE.issuperset(part):
                part = '"' + part.replace("\\", "\\\\").replace('"', '\\"') + '"'
            out += f".{part}" if out else part
    return out


ERROR = "error"
WARNING = "warning"


@dataclass(frozen=True)
class Problem:
    """One thing wrong with the input, and where.

    An error (`severity` "error") stops the plan; a warning names a fact that is missing or
    doubtful: the file loads, the vehicle concerned is planned as needing attention now, and
    `check` lists it after the "valid" line.
    """

    message: str
    path: Path = ()
    hint: str = ""
    vehicle: str | None = None
    file: str | None = None
    line: int | None = None
    column: int | None = None
    severity: str = ERROR

    @property
    def is_warning(self) -> bool:
        return self.severity == WARNING

    @property
    def field(self) -> str:
        """The field in the vehicle's own terms (`readings[0].odometer`), else the full path."""
        path = self.path
        if self.vehicle is not None and len(path) >= 2 and path[0] == "vehicles":
            path = path[2:]
        return format_path(path)

    def located(self, file: str | None, line: int | None, column: int | None = None) -> Problem:
        return replace(self, file=file, line=line, column=column)

    def render(self) -> str:
        """`fleet.toml:42: vehicle VAN-07, field readings[2].odometer: message. Fix: hint`.

        Every piece is file text or holds some (an id, a key, a value), so each is `shown`:
        a control character or a line end reads as an escape, never reaches the terminal.
        """
        where = ""
        if self.file:
            where = shown(self.file)
            if self.line:
                where += f":{self.line}"
                if self.column:
                    where += f":{self.column}"
            where += ": "
        subject = []
        if self.vehicle is not None:
            subject.append(f"vehicle {shown(self.vehicle)}")
        if self.field:
            subject.append(f"field {shown(self.field)}")
        head = "warning: " if self.is_warning else ""
        text = where + head + (", ".join(subject) + ": " if subject else "") + shown(self.message)
        if self.hint:
            text += f"\n    fix: {shown(self.hint)}"
        return text


@dataclass
class PlannerError(Exception):
    """A user-caused failure: a bad file, a bad option, a refused save."""

    title: str
    message: str = ""
    problems: list[Problem] = field(default_factory=list)

    def __post_init__(self) -> None:
        super().__init__(self.title)

    def __str__(self) -> str:
        return self.render()

    def render(self) -> str:
        """Title, message and problems, one per line; file text in them `shown` (a message
        may hold several lines of its own, each shown on its own)."""
        lines = [_lines_shown(self.title)]
        if self.message:
            lines.append(_lines_shown(self.message))
        lines.extend(p.render() for p in self.problems)
        return "\n".join(lines)


def _lines_shown(text: str) -> str:
    """`shown` line by line: the line ends of a message written by the planner are kept."""
    return "\n".join(shown(line) for line in text.split("\n"))
