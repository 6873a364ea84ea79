"""Where each key and value of a TOML document stands, so errors can name a line.

`tomllib` parses but forgets positions; this scanner walks the same text once more and maps every
data path (`('vehicles', 3, 'readings', 1, 'odometer')`) to its 1-based line and column. It runs
only on text that `tomllib` has already accepted, and is best effort: a construct it does not
follow ends the scan, and `line_of` then falls back to the nearest located ancestor.
"""

from __future__ import annotations

import bisect
import re
import tomllib

from planner.errors import Path

_BARE = set("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789_-")
# Runs of text the scanner passes over in one step (C speed), never character by character: a
# 50 MB string or comment costs one regular-expression match.
_BARE_RUN = re.compile(r"[A-Za-z0-9_-]+")
_BASIC_BODY = re.compile(r'[^"\\\n]*')  # up to a closing quote, an escape or a line end
_LITERAL_BODY = re.compile(r"[^'\n]*")
_SCALAR = re.compile(r"[^,\]}#\n]*")
_SPACE = re.compile(r"[ \t\r]*")
_SPACE_LINES = re.compile(r"[ \t\r\n]*")
# Paths are kept this many names deep at most: the fleet file's deepest is 5
# (vehicles, 3, readings, 1, date). Deeper keys are errors whatever they hold, and located by
# their first names; keeping every prefix of a key n names deep would cost n^2 time and memory.
MAX_DEPTH = 32


class _Stop(Exception):
    pass


class _Scanner:
    def __init__(self, text: str) -> None:
        self.s = text
        self.i = 0
        self.n = len(text)
        self.found: dict[Path, tuple[int, int]] = {}
        self.tables_seen: dict[Path, int] = {}  # array-of-tables path -> element count
        self.line_starts = [0] + [m.end() for m in re.finditer("\n", text)]

    # -- positions --------------------------------------------------------------------------
    def pos(self, i: int) -> tuple[int, int]:
        lo = bisect.bisect_right(self.line_starts, i) - 1
        return lo + 1, i - self.line_starts[lo] + 1

    def mark(self, path: Path, i: int) -> None:
        self.found.setdefault(path, self.pos(i))

    # -- lexing -----------------------------------------------------------------------------
    def peek(self, k: int = 0) -> str:
        j = self.i + k
        return self.s[j] if j < self.n else ""

    def skip_space(self, newlines: bool) -> None:
        space = _SPACE_LINES if newlines else _SPACE
        while self.i < self.n:
            self.i = space.match(self.s, self.i).end()
            if self.i < self.n and self.s[self.i] == "#":
                end = self.s.find("\n", self.i)
                self.i = self.n if end < 0 else end
            else:
                return

    def string(self) -> str:
        s, i = self.s, self.i
        for quote in ('"""', "'''"):
            if s.startswith(quote, i):
                end = s.find(quote, i + 3)
                while quote == '"""' and end > 0 and _escaped(s, end):
                    end = s.find(quote, end + 1)
                if end < 0:
                    raise _Stop
                while s.startswith(quote[0], end + 3):  # up to two quotes may close the string
                    end += 1
                self.i = end + 3
                return s[i + 3 : end]
        quote = s[i]
        body = _BASIC_BODY if quote == '"' else _LITERAL_BODY
        j = body.match(s, i + 1).end()
        while quote == '"' and j < self.n and s[j] == "\\":  # an escape: past it, go on
            j = body.match(s, j + 2).end()
        if j >= self.n or s[j] != quote:
            raise _Stop  # a line end inside the string
        self.i = j + 1
        body = s[i + 1 : j]
        if quote == '"' and "\\" in body:  # a key like "a\"b": the data path holds it unescaped
            try:
                return tomllib.loads(f"x = {s[i : j + 1]}")["x"]
            except tomllib.TOMLDecodeError:
                raise _Stop from None
        return body

    def key(self) -> list[str]:
        parts = []
        while True:
            self.skip_space(newlines=False)
            ch = self.peek()
            if ch in ('"', "'"):
                parts.append(self.string())
            elif ch in _BARE:
                j = self.i
                self.i = _BARE_RUN.match(self.s, j).end()
                parts.append(self.s[j : self.i])
            else:
                raise _Stop
            self.skip_space(newlines=False)
            if self.peek() != ".":
                return parts
            self.i += 1

    def value(self, path: Path) -> None:
        ch = self.peek()
        if ch == "[":
            self.i += 1
            index = 0
            while True:
                self.skip_space(newlines=True)
                if self.peek() == "]":
                    self.i += 1
                    return
                self.mark(path + (index,), self.i)
                self.value(path + (index,))
                index += 1
                self.skip_space(newlines=True)
                if self.peek() == ",":
                    self.i += 1
        elif ch == "{":
            self.i += 1
            while True:
                self.skip_space(newlines=True)
                if self.peek() == "}":
                    self.i += 1
                    return
                self.pair(path)
                self.skip_space(newlines=True)
                if self.peek() == ",":
                    self.i += 1
        elif ch in ('"', "'"):
            self.string()
        elif ch:
            self.i = _SCALAR.match(self.s, self.i).end()
        else:
            raise _Stop

    def pair(self, base: Path) -> None:
        start = self.i
        keys = self.key()
        if self.peek() != "=":
            raise _Stop
        self.i += 1
        path = base
        for k in keys[: max(MAX_DEPTH - len(base), 0)]:
            path = path + (k,)
            self.mark(path, start)
        self.skip_space(newlines=False)
        self.value(path)

    def header(self) -> Path:
        start = self.i
        array = self.s.startswith("[[", self.i)
        self.i += 2 if array else 1
        names = self.key()[:MAX_DEPTH]
        self.i += 2 if array else 1
        path: Path = ()
        for k, name in enumerate(names):
            path = path + (name,)
            last = k == len(names) - 1
            if last and array:
                self.mark(path, start)  # the array itself: where its first element starts
                count = self.tables_seen.get(path, 0)
                self.tables_seen[path] = count + 1
                path = path + (count,)
            elif path in self.tables_seen:
                path = path + (self.tables_seen[path] - 1,)
            self.mark(path, start)
        return path

    def document(self) -> None:
        table: Path = ()
        while True:
            self.skip_space(newlines=True)
            if self.i >= self.n:
                return
            if self.peek() == "[":
                table = self.header()
            else:
                self.pair(table)


def _escaped(s: str, i: int) -> bool:
    backslashes = 0
    while i - 1 - backslashes >= 0 and s[i - 1 - backslashes] == "\\":
        backslashes += 1
    return backslashes % 2 == 1


# A key or table header of more names than this is refused before `tomllib` reads the text:
# tomllib's time and memory grow with the square of a key's depth (a header 40,000 names deep,
# 80 KB, would take minutes and gigabytes). A name and its dot take at least two characters, so
# only lines at least that long are searched, and only where a key can start.
MAX_KEY_NAMES = 32
_KEY_NAME = r"""(?:[A-Za-z0-9_-]++|"(?:[^"\\\n]|\\.)*+"|'[^'\n]*+')"""
_LONG_LINE = re.compile(r"^[^\n]{" + str(2 * MAX_KEY_NAMES - 1) + ",}", re.MULTILINE)
_DEEP_KEY = re.compile(r"(?:^[ \t]*+\[{0,2}|[{,])[ \t]*+(?:" + _KEY_NAME
                       + r"[ \t]*+\.[ \t]*+){" + str(MAX_KEY_NAMES) + "}", re.MULTILINE)


def too_deep_key(text: str) -> int | None:
    """Where a key of more than MAX_KEY_NAMES dotted names starts, or None; linear time."""
    for line in _LONG_LINE.finditer(text):
        hit = _DEEP_KEY.search(text, line.start(), line.end())
        if hit:
            return hit.start()
    return None


def locate(text: str) -> dict[Path, tuple[int, int]]:
    """Map every data path of a TOML document to its (line, column), 1-based."""
    scanner = _Scanner(text)
    try:
        scanner.document()
    except (_Stop, IndexError):
        pass
    return scanner.found


def line_of(found: dict[Path, tuple[int, int]], path: Path) -> tuple[int, int] | None:
    """The position of `path`, or of its nearest located ancestor."""
    for k in range(min(len(path), MAX_DEPTH), 0, -1):
        hit = found.get(tuple(path[:k]))
        if hit:
            return hit
    return None
