"""Where each key and value of a TOML document stands, so errors can name a line.

`tomllib` parses but forgets positions; this scanner walks the same text once more and maps every
data path (`('vehicles', 3, 'readings', 1, 'odometer')`) to its 1-based line and column. It runs
only on text that `tomllib` has already accepted, and is best effort: a construct it does not
follow ends the scan, and `line_of` then falls back to the nearest located ancestor.
"""

from __future__ import annotations

import tomllib

from planner.errors import Path

_BARE = set("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789_-")


class _Stop(Exception):
    pass


class _Scanner:
    def __init__(self, text: str) -> None:
        self.s = text
        self.i = 0
        self.n = len(text)
        self.found: dict[Path, tuple[int, int]] = {}
        self.tables_seen: dict[Path, int] = {}  # array-of-tables path -> element count
        self.line_starts = [0]
        for k, ch in enumerate(text):
            if ch == "\n":
                self.line_starts.append(k + 1)

    # -- positions --------------------------------------------------------------------------
    def pos(self, i: int) -> tuple[int, int]:
        lo, hi = 0, len(self.line_starts) - 1
        while lo < hi:
            mid = (lo + hi + 1) // 2
            if self.line_starts[mid] <= i:
                lo = mid
            else:
                hi = mid - 1
        return lo + 1, i - self.line_starts[lo] + 1

    def mark(self, path: Path, i: int) -> None:
        self.found.setdefault(path, self.pos(i))

    # -- lexing -----------------------------------------------------------------------------
    def peek(self, k: int = 0) -> str:
        j = self.i + k
        return self.s[j] if j < self.n else ""

    def skip_space(self, newlines: bool) -> None:
        while self.i < self.n:
            ch = self.s[self.i]
            if ch in " \t\r" or (newlines and ch == "\n"):
                self.i += 1
            elif ch == "#":
                while self.i < self.n and self.s[self.i] != "\n":
                    self.i += 1
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
        j = i + 1
        while j < self.n and s[j] != quote:
            if s[j] == "\n":
                raise _Stop
            j += 2 if quote == '"' and s[j] == "\\" else 1
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
                while self.i < self.n and self.s[self.i] in _BARE:
                    self.i += 1
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
            while self.i < self.n and self.s[self.i] not in ",]}#\n":
                self.i += 1
        else:
            raise _Stop

    def pair(self, base: Path) -> None:
        start = self.i
        keys = self.key()
        if self.peek() != "=":
            raise _Stop
        self.i += 1
        path = base
        for k in keys:
            path = path + (k,)
            self.mark(path, start)
        self.skip_space(newlines=False)
        self.value(path)

    def header(self) -> Path:
        start = self.i
        array = self.s.startswith("[[", self.i)
        self.i += 2 if array else 1
        names = self.key()
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
    for k in range(len(path), 0, -1):
        hit = found.get(tuple(path[:k]))
        if hit:
            return hit
    return None
