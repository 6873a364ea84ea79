"""Reading fleet files and writing files safely. The only module here that touches the disk.

Reading: bytes -> text (UTF-8, a leading BOM allowed) -> `tomllib` -> `validate.build_fleet`, with
every problem located at its line. Writing: a temporary file in the same folder, flushed and
fsynced, then `os.replace`, so a reader sees the old file or the new one, whole; a save of the
fleet file also keeps the previous version beside it and refuses to overwrite a file that changed
on disk since it was read.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import errno
import glob
import hashlib
import os
import re
import socket
import stat
import tempfile
import time
import tomllib
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

try:
    import fcntl
except ImportError:  # Windows: saves still check and replace atomically, without the lock
    fcntl = None  # type: ignore[assignment]

from planner.errors import Path as DataPath
from planner.errors import PlannerError, Problem
from planner.fleet import Fleet
from planner.locate import MAX_KEY_NAMES, line_of, locate, too_deep_key
from planner.validate import build_fleet, fleet_warnings

if TYPE_CHECKING:
    from planner.importer import Decoded

BOM = "\ufeff"
MAX_FILE_BYTES = 512 * 1024 * 1024  # a 100,000-vehicle fleet with ten years of readings is ~100 MB
BACKUP_SUFFIX = ".bak"
TEMP_SUFFIX = ".tmp"
STALE_TEMP_SECONDS = 600  # a leftover temporary file this old belongs to no running save
LOCK_WAIT_SECONDS = 5.0


@dataclass(frozen=True)
class LoadedFleet:
    """A fleet with the text it came from, so edits can keep comments and saves can check."""

    path: Path
    fleet: Fleet
    text: str
    digest: str  # sha256 of the bytes read: the "has it changed on disk?" check
    bom: bool = False


def digest_of(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def read_text(path: Path) -> tuple[str, bytes, bool]:
    """Read a text file as UTF-8; return (text without BOM, raw bytes, had BOM)."""
    name = str(path)
    raw = read_capped(path, MAX_FILE_BYTES, "A fleet file is at most "
                      f"{MAX_FILE_BYTES // 2**20} MiB: check that this is the fleet file, or "
                      "split the fleet.", what="Give the path of a .toml file.")
    if raw.startswith(_UTF16_BOMS) or _looks_utf16(raw):
        raise PlannerError(f"{name} is saved as UTF-16, not UTF-8",
                           "Save the file as UTF-8 text (in most editors: Save as, then "
                           "Encoding: UTF-8).")
    if b"\x00" in raw:
        line = raw[: raw.index(b"\x00")].count(b"\n") + 1
        raise PlannerError(
            f"{name} is not a text file",
            "A fleet file is UTF-8 text (TOML): check that this is the right file.",
            [Problem("a NUL byte: binary data, not text", file=name, line=line)],
        )
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        column = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1) + 1
        raise PlannerError(
            f"{name} is not valid UTF-8",
            "Save the file as UTF-8 text (in most editors: Save as, then Encoding: UTF-8).",
            [Problem(f"byte 0x{raw[exc.start]:02x} cannot be decoded as UTF-8 (the file looks "
                     "like another encoding, e.g. Latin-1 or Windows-1252)",
                     file=name, line=line, column=column)],
        ) from None
    bom = text.startswith(BOM)
    return (text[1:] if bom else text), raw, bom


def read_capped(path: Path, limit: int, too_large: str, what: str,
                noun: str = "fleet file", missing: str = "Check the path, or create a fleet "
                "file (see the README).") -> bytes:
    """The bytes of the regular file at `path`, at most `limit` of them (counted as read, not
    taken from the size the system reports: a /proc file says 0, a growing file grows).

    Anything but a regular file is refused before a byte is read: a folder, a device such as
    /dev/zero (endless), a FIFO (opened without waiting for a writer), a socket.
    """
    name = str(path)
    try:
        fd = os.open(path, os.O_RDONLY | _NONBLOCK | _NOCTTY | _CLOEXEC)
    except FileNotFoundError:
        raise PlannerError(f"{name}: no such file", missing) from None
    except NotADirectoryError:
        raise PlannerError(f"{name}: no such file",
                           "A part of the path is a file, not a folder: check the path.") from None
    except IsADirectoryError:
        raise PlannerError(f"{name} is a folder, not a {noun}", what) from None
    except PermissionError:
        raise PlannerError(f"{name}: permission denied",
                           "Check the file's permissions, or ask for read access.") from None
    except OSError as exc:
        raise PlannerError(f"{name}: cannot be read",
                           f"{exc.strerror or exc}; check the disk or network share, then try "
                           "again.") from None
    try:
        info = os.fstat(fd)
        if stat.S_ISDIR(info.st_mode):
            raise PlannerError(f"{name} is a folder, not a {noun}", what)
        if not stat.S_ISREG(info.st_mode):
            raise PlannerError(f"{name} is not a regular file ({_kind(info.st_mode)})",
                               f"Only a file on disk is read, not a device or a pipe. {what}")
        if info.st_size > limit:  # known too large before a byte is read
            raise PlannerError(f"{name} is too large ({info.st_size:,} bytes)", too_large)
        if _NONBLOCK and fcntl is not None:
            fcntl.fcntl(fd, fcntl.F_SETFL, fcntl.fcntl(fd, fcntl.F_GETFL) & ~_NONBLOCK)
        chunks, total = [], 0
        while True:
            chunk = os.read(fd, min(1 << 20, limit + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
            if total > limit:  # it grew, or its size was not told (/proc)
                raise PlannerError(f"{name} is too large (over {limit:,} bytes)", too_large)
        return b"".join(chunks)
    except PlannerError:
        raise
    except OSError as exc:
        raise PlannerError(f"{name}: cannot be read",
                           f"{exc.strerror or exc}; check the disk or network share, then try "
                           "again.") from None
    finally:
        os.close(fd)


_NONBLOCK = getattr(os, "O_NONBLOCK", 0)
_NOCTTY = getattr(os, "O_NOCTTY", 0)
_CLOEXEC = getattr(os, "O_CLOEXEC", 0)
_NOFOLLOW = getattr(os, "O_NOFOLLOW", 0)


def _kind(mode: int) -> str:
    if stat.S_ISFIFO(mode):
        return "a FIFO"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a file"


_UTF16_BOMS = (b"\xff\xfe", b"\xfe\xff")


def _looks_utf16(raw: bytes) -> bool:
    """UTF-16 without a BOM: ASCII text with a NUL beside every character."""
    head = raw[:200]
    return len(head) >= 8 and (head[1::2].count(0) > len(head) * 0.4
                               or head[0::2].count(0) > len(head) * 0.4)


# A [[vehicles]] header line (as `edit_regions` finds them, without importing tomlkit here).
_VEHICLE_HEADER = re.compile(r"^[ \t]*\[\[[ \t]*vehicles[ \t]*\]\][ \t]*(#.*)?$", re.M)
_TOML_POS = re.compile(r"^(?P<msg>.*?)\s*\(at line (?P<line>\d+), column (?P<col>\d+)\)$")


def parse_fleet_text(text: str, name: str) -> Fleet:
    """Parse and validate fleet-file text; problems carry `name` and their line."""
    try:
        return _parse(text, name)
    except RecursionError:  # tomllib, pydantic and the locator all recurse per nesting level
        raise PlannerError(f"{name} is nested too deeply to read",
                           "A fleet file nests tables at most three deep: look for a run of "
                           "'[' or '{' that never closes, and flatten it.") from None


def _parse(text: str, name: str) -> Fleet:
    deep = too_deep_key(text)
    if deep is not None:
        raise PlannerError(
            f"{name} has a key nested too deeply to read",
            "Nothing was planned.",
            [Problem(f"a key or table header of more than {MAX_KEY_NAMES} dotted names",
                     file=name, line=text.count("\n", 0, deep) + 1,
                     hint="a fleet file's keys are at most three names deep, e.g. "
                     "[[vehicles.belt_jobs]]: look for a run of names joined by dots")])
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg, line, col = _syntax_error(exc, text)
        raise PlannerError(
            f"{name} is not valid TOML",
            "Fix the syntax at the place shown; nothing was planned.",
            [Problem(f"TOML syntax error: {msg}", file=name, line=line, column=col,
                     hint=_syntax_hint(text, line, msg))],
        ) from None
    if not data:
        raise PlannerError(
            f"{name} holds no fleet data",
            "It is empty (or only comments): a new fleet file starts with schema = 1 (see the "
            "README).",
        )
    try:
        return build_fleet(data)
    except PlannerError as err:
        positions = locate(text)
        located = []
        for p in err.problems:
            pos = line_of(positions, p.path)
            located.append(p.located(name, pos[0] if pos else None, None))
        located.sort(key=lambda p: (p.line or 0))
        raise PlannerError(err.title + f" ({name})", err.message, located) from None


def located_warnings(fleet: Fleet, text: str, name: str) -> list[Problem]:
    """The fleet's warnings (`validate.fleet_warnings`), each with the file and its line, in
    file order. The text is scanned for lines only when there is something to locate."""
    found = fleet_warnings(fleet)
    if not found:
        return []
    starts = [m.start() for m in _VEHICLE_HEADER.finditer(text)]
    if len(starts) != len(fleet.vehicles):  # vehicles written some other way: the whole text
        positions = locate(text)
        return _sorted([p.located(name, _line(positions, p.path), None) for p in found])
    # Each warning located in its own vehicle's table (the scan of a whole big file takes
    # seconds): the text from its [[vehicles]] header to the next, as vehicles[0].
    bounds = [*starts, len(text)]
    lines_before, count, previous = [], 0, 0  # newlines before each header, in one pass
    for start in starts:
        count += text.count("\n", previous, start)
        lines_before.append(count)
        previous = start
    head: dict[DataPath, tuple[int, int]] | None = None
    by_vehicle: dict[int, dict[DataPath, tuple[int, int]]] = {}
    located = []
    for p in found:
        if len(p.path) >= 2 and p.path[0] == "vehicles" and isinstance(p.path[1], int):
            k = p.path[1]
            if k not in by_vehicle:
                by_vehicle[k] = locate(text[bounds[k]:bounds[k + 1]])
            line = _line(by_vehicle[k], ("vehicles", 0, *p.path[2:]))
            located.append(p.located(name, None if line is None else line + lines_before[k],
                                     None))
        else:
            head = locate(text[:bounds[0]]) if head is None else head
            located.append(p.located(name, _line(head, p.path), None))
    return _sorted(located)


def _line(positions: dict[DataPath, tuple[int, int]], path: DataPath) -> int | None:
    pos = line_of(positions, path)
    return pos[0] if pos else None


def _sorted(problems: list[Problem]) -> list[Problem]:
    return sorted(problems, key=lambda p: p.line or 0)


def warnings_of(loaded: LoadedFleet) -> list[Problem]:
    """`located_warnings` of a loaded file."""
    return located_warnings(loaded.fleet, loaded.text, str(loaded.path))


def _syntax_error(exc: tomllib.TOMLDecodeError, text: str) -> tuple[str, int | None, int | None]:
    """(message, line, column) of a tomllib error; its message names keys as Python tuples."""
    line, col = getattr(exc, "lineno", None), getattr(exc, "colno", None)  # Python 3.14+
    msg = (getattr(exc, "msg", None) if line else None) or str(exc)
    hit = _TOML_POS.match(str(exc))
    if hit:
        msg, line, col = hit["msg"], int(hit["line"]), int(hit["col"])
    elif msg.endswith("(at end of document)"):
        # The statement that failed is the last one: name its line rather than none.
        msg = msg.removesuffix("(at end of document)").rstrip()
        lines = text.rstrip().split("\n")
        line, col = len(lines), None
    if msg == "Illegal character '\\n'":  # inside a one-line string
        msg = "the string is not closed before the end of the line"
    msg = _TUPLE_KEY.sub(lambda m: ".".join(re.findall(r"'((?:[^'\\]|\\.)*)'", m[0])), msg)
    return msg, line, col


_DATE_LIKE = re.compile(r"(?<![\w-])\d{4}-\d{2}-\d{2}(?![\w-])")
_TUPLE_KEY = re.compile(r"\((?:'(?:[^'\\]|\\.)*',? ?)+\)")

# Fixes for tomllib's messages (CPython Lib/tomllib/_parser.py), by their first words.
_SYNTAX_FIXES = (
    ("Cannot overwrite a value", "the same key is given twice in one table: keep one of them"),
    ("Cannot declare", "this table is declared twice: merge the two into one, or write "
     "[[…]] (two brackets) for every element of an array of tables such as [[vehicles]]"),
    ("Cannot mutate immutable namespace", "a key set inline ({ … } or [ … ]) cannot be "
     "extended by a later table or dotted key: write it in one place"),
    ("Cannot redefine namespace", "a table and an array of tables share a name: use "
     "[[…]] for every element"),
    ("Duplicate inline table key", "the same key is given twice inside { … }: keep one"),
    ("Unterminated string", "a string is not closed: add the closing quote on that line"),
    ("the string is not closed", "add the closing quote on that line (a string in \"…\" "
     "fits on one line; use \"\"\"…\"\"\" for text over several lines)"),
    ("Unclosed array", "an array is not closed: add the ']' (and a ',' between items)"),
    ("Unclosed inline table", "an inline table is not closed: add the '}' on the same line "
     "(an inline table fits on one line)"),
    ("Invalid date or datetime", "this is not a real date: check the month (01-12) and the day"),
    ("Expected '=' after a key", "a key needs '= value' after it: e.g. odometer = 98400"),
    ("Expected ']' at the end", "close the table header with ']'"),
    ("Expected ']]' at the end", "close the array-of-tables header with ']]'"),
    ("Unescaped '\\'", "write a backslash in text as \\\\ (or use 'single quotes')"),
)


# Characters that look like spaces or quotes but are not TOML's (TOML 1.0 spec: whitespace is
# space and tab; strings use straight quotes). They arrive by copy and paste.
_LOOKALIKES = {
    "\ufeff": "an invisible byte-order mark (U+FEFF)",
    "\u00a0": "a no-break space (U+00A0)",
    "\u200b": "a zero-width space (U+200B)",
    "\u3000": "an ideographic space (U+3000)",
    "\u201c": "a curly quote “ (U+201C)",
    "\u201d": "a curly quote ” (U+201D)",
    "\u2018": "a curly quote ‘ (U+2018)",
    "\u2019": "a curly quote ’ (U+2019)",
}


def _syntax_hint(text: str, line: int | None, msg: str) -> str:
    default = ("check quotes, brackets and '=' on that line (dates are written 2026-11-20, "
               "text in double quotes)")
    for start, fix in _SYNTAX_FIXES:
        if msg.startswith(start):
            default = fix
            break
    if not line:
        return default
    lines = text.split("\n")  # TOML's newline, not str.splitlines()'s wider set
    here = lines[line - 1] if line <= len(lines) else ""
    for token in _DATE_LIKE.findall(here):
        try:
            dt.date.fromisoformat(token)
        except ValueError:
            return f"{token} is not a real date: check the month (01-12) and the day"
    for ch, what in _LOOKALIKES.items():
        if ch in here:
            fix = "type straight double quotes \" instead" if "quote" in what else \
                "delete it and type a plain space (or nothing)"
            return f"line {line}, column {here.index(ch) + 1}, holds {what}: {fix}"
    return default


def load_fleet(path: str | os.PathLike[str],
               known: Callable[[str], Fleet | None] | None = None) -> LoadedFleet:
    """Read, parse and validate a fleet file.

    `known(digest)` may give the fleet these very bytes were validated to before (the UI's
    `fleetcache.get`); the text is then not parsed again.
    """
    p = Path(path)
    text, raw, bom = read_text(p)
    remove_stale_temps(p)
    digest = digest_of(raw)
    fleet = known(digest) if known is not None else None
    if fleet is not None:
        return LoadedFleet(path=p, fleet=fleet, text=text, digest=digest, bom=bom)
    try:
        fleet = parse_fleet_text(text, str(p))
    except PlannerError as err:
        backup = backup_path(p)
        if err.title.endswith("holds no fleet data") and backup.is_file():
            raise PlannerError(err.title, "It is empty (or only comments). The copy kept at "
                               f"the last save is {backup}: if the fleet should be here, copy "
                               "that back over it.") from None
        raise
    return LoadedFleet(path=p, fleet=fleet, text=text, digest=digest, bom=bom)


def write_atomic(path: str | os.PathLike[str], data: bytes, *, like: Path | None = None,
                 mode: int | None = None, backup: bool = False) -> None:
    """Replace `path` with `data` so that it is either the old file or the new one, whole.

    The data goes to a temporary file in the same folder (created with `O_EXCL`, never through
    a link), is flushed and fsynced, takes the owner, group, mode, ACLs and extended attributes
    of the file it replaces (or of `like`, or `mode` for a new file) and is renamed over the
    target (`os.replace` is atomic on POSIX and Windows); the folder is fsynced so the rename
    itself survives a power cut. On any failure the temporary file is removed and a
    `PlannerError` says what happened; the previous file is then untouched.

    A symbolic link at `path` is followed (its target replaced, the link kept) only when it
    belongs to the user or to the owner of its folder (the rule of Linux's protected_symlinks):
    a link planted by someone else is refused. A file with other hard links is refused (the
    rename would split it); so is a replacement that cannot keep the file's owner. With
    `backup=True` (a backup copy) a link or hard link at `path` is replaced as a name, never
    written through.
    """
    target = Path(path)
    if not backup:
        target = replaceable(target)
    folder = target.parent if str(target.parent) else Path(".")
    _check_writable(target, folder, backup)
    try:
        current = os.lstat(target)
    except OSError:
        current = None
    source = like if like is not None else (target if current is not None
                                            and stat.S_ISREG(current.st_mode) else None)
    fd = None
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=_temp_prefix(target), suffix=TEMP_SUFFIX, dir=folder)
        with os.fdopen(fd, "wb") as fh:
            fd = None
            fh.write(data)
            fh.flush()
            _take_metadata(fh.fileno(), source, mode, target)
            os.fsync(fh.fileno())
        os.replace(tmp, target)
        tmp = None
        _fsync_dir(folder)
    except OSError as exc:
        raise PlannerError(f"cannot write {target}", _why(exc, target, folder)) from None
    finally:
        if fd is not None:
            os.close(fd)
        if tmp is not None:
            try:
                os.unlink(tmp)
            except OSError:
                pass
    remove_stale_temps(target)


def replaceable(path: Path) -> Path:
    """The file that replacing `path` would replace, checked before anything is written: links
    followed only when they are the user's or the folder owner's (`_followed`), and a file with
    other hard links refused (the rename would split them)."""
    target = _followed(path)
    try:
        current = os.lstat(target)
    except OSError:
        return target
    if current.st_nlink > 1 and stat.S_ISREG(current.st_mode):
        raise PlannerError(f"cannot write {target}",
                           f"it has {current.st_nlink - 1} other hard link"
                           f"{'s' * (current.st_nlink > 2)} (the same file under another "
                           "name); replacing it would split them, so nothing was saved. Save "
                           "to another path, or make it a file of its own first (copy it, "
                           "then move the copy over it)")
    return target


def _followed(target: Path) -> Path:
    """The file a path names, through links that belong to the user or the folder's owner."""
    for _ in range(40):  # as the system's own limit on links in a row (ELOOP)
        try:
            info = os.lstat(target)
        except OSError:
            return target
        if not stat.S_ISLNK(info.st_mode):
            return target
        folder = target.parent if str(target.parent) else Path(".")
        if hasattr(os, "geteuid"):
            try:
                folder_owner = os.stat(folder).st_uid
            except OSError:
                folder_owner = -1
            if info.st_uid not in (os.geteuid(), folder_owner):
                raise PlannerError(f"cannot write {target}",
                                   f"it is a symbolic link that belongs to another user (uid "
                                   f"{info.st_uid}), not to you or the folder's owner; "
                                   "beltplan does not write through it: choose another path, "
                                   "or remove the link")
        target = folder / os.readlink(target)
    raise PlannerError(f"cannot write {target}", "too many symbolic links in a row")


class _OwnerLost(OSError):
    """The new file cannot take the owner of the file it would replace."""


def _take_metadata(fd: int, source: Path | None, mode: int | None, target: Path,
                   copy: bool = False) -> None:
    """Give the open temporary file the owner, group, mode, ACLs and extended attributes of
    `source` (the file it replaces, or the file it copies); a new file gets `mode`, or 0644
    less the umask. An owner that cannot be kept raises `_OwnerLost`; for a `copy` (the user's
    own file) it stays the user's, with the group's rights dropped unless the group was kept."""
    if source is None:
        if hasattr(os, "fchmod"):  # Windows before Python 3.13 has none: the default stays
            os.fchmod(fd, (0o644 & ~_umask()) if mode is None else mode)
        return
    info = os.stat(source)
    if hasattr(os, "fchown"):
        mine = os.fstat(fd)
        if (mine.st_uid, mine.st_gid) != (info.st_uid, info.st_gid):
            try:
                os.fchown(fd, info.st_uid, info.st_gid)
            except PermissionError:
                if not copy:
                    raise _OwnerLost(errno.EPERM, str(info.st_uid)) from None
                with contextlib.suppress(OSError):
                    os.fchown(fd, -1, info.st_gid)
                if os.fstat(fd).st_gid != info.st_gid:
                    mode = stat.S_IMODE(info.st_mode) & ~0o070 if mode is None else mode
    if hasattr(os, "fchmod"):
        os.fchmod(fd, stat.S_IMODE(info.st_mode) if mode is None else mode)
    _copy_xattrs(source, fd)


def _copy_xattrs(source: Path, fd: int) -> None:
    """Extended attributes (POSIX ACLs among them: `system.posix_acl_access`), where the
    system has them; one the system will not set (a `security.` or `trusted.` name without the
    privilege, a file system without them) is skipped."""
    if not hasattr(os, "listxattr"):
        return
    try:
        names = os.listxattr(source)
    except OSError:
        return
    for name in names:
        try:
            os.setxattr(fd, name, os.getxattr(source, name))
        except OSError:
            continue


NAME_MAX = 255  # bytes in one name: Linux's ext4, xfs, btrfs and tmpfs; macOS's APFS counts 255
TEMP_ROOM = 40  # ".", ".<host 6>-<pid up to 10>.", mkstemp's 8 random characters, ".tmp"


def _fits(name: str, extra: int) -> str:
    """`name`, or a shortened form of it ending in a hash of the whole, so that `extra` more
    bytes still make a legal name (a character cut in two is dropped)."""
    raw = os.fsencode(name)
    if len(raw) + extra <= NAME_MAX:
        return name
    tag = "~" + hashlib.sha256(raw).hexdigest()[:10]
    keep = raw[: max(1, NAME_MAX - extra - len(tag))]
    try:
        raw.decode("utf-8")
    except UnicodeDecodeError:
        return os.fsdecode(keep) + tag  # not UTF-8: the bytes as they are
    return keep.decode("utf-8", "ignore") + tag


_HOST = hashlib.sha256(socket.gethostname().encode()).hexdigest()[:6]


def _temp_prefix(target: Path) -> str:
    """`.<name>.<host>-<pid>.`: whose temporary file it is, so a leftover of a process that
    has ended can go at once."""
    return f".{_short_name(target)}.{_HOST}-{os.getpid()}."


def _short_name(target: Path) -> str:
    return _fits(target.name, TEMP_ROOM)


def _check_writable(target: Path, folder: Path, backup: bool = False) -> None:
    """Refuse early, with a clear reason, what would fail half-way."""
    if not folder.exists():
        raise PlannerError(f"cannot write {target}",
                           f"the folder {folder} does not exist: create it, or choose another "
                           "path")
    if not folder.is_dir():
        raise PlannerError(f"cannot write {target}",
                           f"{_first_file(folder)} is a file, not a folder: choose another path")
    if target.is_dir() and not (backup and target.is_symlink()):
        raise PlannerError(f"cannot write {target}",
                           "it is a folder: give the path of a file inside it, e.g. "
                           f"{target / 'plan.csv'}")
    if not backup and target.exists() and not os.access(target, os.W_OK):
        raise PlannerError(f"cannot write {target}",
                           "the file is read-only: make it writable (or save to another "
                           "path); it is unchanged")


def _first_file(folder: Path) -> Path:
    """The part of `folder` that exists but is not a folder (for 'x is a file')."""
    for part in [*reversed(folder.parents), folder]:
        if part.exists() and not part.is_dir():
            return part
    return folder


_ERRNO_WORDS = {
    errno.ENOSPC: "the disk is full: free some space, then try again",
    getattr(errno, "EDQUOT", -1): "your disk quota is used up: free some space, then try again",
    errno.EACCES: "no permission to write in {folder}: choose another folder, or ask for "
                  "write access",
    errno.EPERM: "the system does not allow writing in {folder}: choose another folder",
    errno.EROFS: "{folder} is on a read-only disk: choose another folder",
    errno.ENOENT: "the folder {folder} disappeared while writing (a removed drive or a lost "
                  "network share?): check it is there, then try again",
    errno.ENOTDIR: "the folder {folder} disappeared while writing: check it, then try again",
    errno.EISDIR: "{target} is a folder: give the path of a file",
    errno.EIO: "the disk reported an input/output error: check the disk or network share",
}


def _why(exc: OSError, target: Path, folder: Path) -> str:
    """What went wrong and what to do, for an `OSError` raised while writing `target`."""
    words = _ERRNO_WORDS.get(exc.errno or 0)
    if exc.errno in (errno.ENOENT, errno.ENOTDIR) and folder.is_dir():
        words = f"the system refused to create a file in {{folder}} ({exc.strerror}): choose " \
            "another folder"
    if isinstance(exc, _OwnerLost):
        return (f"{target} belongs to another user (uid {exc.strerror}) and a save would "
                "make it yours: nothing was saved. Save to another path (your copy), or ask "
                "its owner or an administrator to save it")
    detail = words.format(folder=folder, target=target) if words else \
        f"{exc.strerror or exc}: check the disk, then try again"
    return f"{detail}. The previous file, if any, is unchanged."


def remove_stale_temps(target: Path) -> None:
    """Remove temporary files that a killed or crashed save left beside `target`.

    Only this module's own names (`.<name>.<host>-<pid>.<random>.tmp`): at once when the
    process named in it, on this host, has ended; otherwise (another host, a live process,
    a name without a process) only once ten minutes old, as a save may still be running.
    """
    try:
        now = time.time()
        short = _short_name(target)
        me = os.geteuid() if hasattr(os, "geteuid") else None
        for leftover in target.parent.glob(f".{glob.escape(short)}.*{TEMP_SUFFIX}"):
            owner, _, rest = leftover.name[len(short) + 2:].partition(".")
            if not (_TEMP_OWNER.fullmatch(owner) and _TEMP_RANDOM.fullmatch(rest)):
                continue  # not a name this module makes: someone else's file
            info = leftover.lstat()
            if me is not None and info.st_uid != me or not stat.S_ISREG(info.st_mode):
                continue  # never another user's file, nor a link or a folder
            if _ended(owner) or now - info.st_mtime > STALE_TEMP_SECONDS:
                leftover.unlink()
    except OSError:
        pass


_TEMP_OWNER = re.compile(r"[^.\-]+-[0-9]+")  # <host>-<pid>, as `_temp_prefix` writes it
_TEMP_RANDOM = re.compile(r"[A-Za-z0-9_]{8}" + re.escape(TEMP_SUFFIX))  # mkstemp's random part


def _ended(owner: str) -> bool:
    """True when `<host>-<pid>` names a process of this host that is no longer running."""
    host, _, pid = owner.partition("-")
    if host != _HOST or not pid.isdigit() or int(pid) == os.getpid():
        return False
    try:
        os.kill(int(pid), 0)
    except ProcessLookupError:
        return True
    except (OSError, OverflowError):  # alive under another user, or not a process id
        return False
    return False


def save_fleet_text(loaded: LoadedFleet, text: str, fleet: Fleet | None = None) -> LoadedFleet:
    """Save new text for a loaded fleet file: checked, backed up, atomic.

    Refuses when the file on disk is no longer the one that was read. The new text must parse
    and validate, so a save can never leave a file the planner cannot read: it is parsed here,
    unless the caller passes `fleet`, what `parse_fleet_text` gave for this very text (the UI
    checked every edit so, and keeps the text with its fleet). The check and the write happen
    under an exclusive lock on the file (where the system has `flock`), so two processes saving
    at the same moment cannot both pass the check.
    """
    path = loaded.path
    if fleet is None:
        fleet = parse_fleet_text(text, str(path))
    data = ((BOM if loaded.bom else "") + text).encode("utf-8")
    with _locked(path):
        try:
            current: bytes | None = read_capped(path, MAX_FILE_BYTES, "", "")
        except PlannerError as err:
            if not err.title.endswith("no such file"):
                raise PlannerError(f"{path} was not saved",
                                   f"it could not be read back to check it: {err.title}"
                                   f"{': ' + err.message if err.message else ''}") from None
            current = None
        if current is None or digest_of(current) != loaded.digest:
            raise PlannerError(
                f"{path} changed on disk since it was read",
                "Nothing was saved. Reload the file to see the other change, then make yours "
                "again." if current is not None else
                "The file was moved or deleted; nothing was saved. Save your text elsewhere, "
                "then check where the file went.",
            )
        _check_owner(path)
        try:  # every check of the write before the backup: a refused save changes nothing
            replaceable(path)
        except PlannerError as err:
            raise PlannerError(f"{path} was not saved", err.message) from None
        try:
            write_atomic(backup_path(path), current, like=path, backup=True)
        except PlannerError as err:
            raise PlannerError(f"{path} was not saved",
                               f"the backup copy {backup_path(path)} could not be written: "
                               f"{err.message}") from None
        try:
            write_atomic(path, data)
        except PlannerError as err:
            raise PlannerError(f"{path} was not saved", err.message) from None
    return LoadedFleet(path=path, fleet=fleet, text=text, digest=digest_of(data), bom=loaded.bom)


def _check_owner(path: Path) -> None:
    """Refuse, before anything is written, a save that would hand the file to the saver."""
    if not hasattr(os, "geteuid") or os.geteuid() == 0:
        return
    try:
        info = os.stat(path)
    except OSError:
        return  # the write that follows says what is wrong
    if info.st_uid != os.geteuid() or info.st_gid not in {os.getegid(), *os.getgroups()}:
        raise PlannerError(f"{path} was not saved",
                           f"it belongs to another user or group (uid {info.st_uid}, gid "
                           f"{info.st_gid}) and saving it would hand it to you, with other "
                           "rights: nothing was saved. Keep your version as a copy (another "
                           "path), or ask its owner or an administrator to save it")


@contextlib.contextmanager
def _locked(path: Path) -> Iterator[None]:
    """Hold an exclusive `flock` on the file at `path` (best effort: none where unsupported).

    The lock is on the file's inode, and a save replaces the inode; so after the wait the
    lock is taken again when the path has meanwhile come to name another file.
    """
    if fcntl is None:
        yield
        return
    deadline = time.monotonic() + LOCK_WAIT_SECONDS
    while True:
        try:
            fd = os.open(path, os.O_RDONLY)
        except OSError:
            yield  # missing or unreadable: the check that follows says so
            return
        try:
            while True:
                try:
                    fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                    break
                except BlockingIOError:
                    if time.monotonic() > deadline:
                        raise PlannerError(f"{path} was not saved",
                                           "another program is saving it right now: wait a "
                                           "moment, then try again") from None
                    time.sleep(0.01)
                except OSError:  # no locks on this file system: go on without one
                    break
            try:
                same = os.fstat(fd).st_ino == os.stat(path).st_ino
            except OSError:
                same = True  # gone meanwhile: the check that follows says so
            if same:
                yield
                return
        finally:
            os.close(fd)


def backup_path(path: Path) -> Path:
    """`<name>.bak` beside the file; for a name near the length limit, a shortened name with
    a hash of the whole (`_fits`), so that a legal fleet file name can always be backed up."""
    return path.with_name(_fits(path.name, len(BACKUP_SUFFIX)) + BACKUP_SUFFIX)


def write_new(path: Path, data: bytes, like: Path | None = None) -> Path:
    """Write `data` to a new file at `path`, or, if that name is taken (by a file, a link,
    anything), at `<stem>-2<suffix>`, `-3`, …: an existing file is never replaced and a link
    never followed. The file takes `like`'s owner, group, mode and attributes (where the system
    allows). Returns the path written."""
    stem, suffix = path.stem, path.suffix
    if like is not None and not like.is_file():
        like = None  # gone meanwhile: a file of the user's own
    folder = path.parent if str(path.parent) else Path(".")
    first = folder / (_fits(stem, len(os.fsencode(suffix))) + suffix)
    _check_writable(first, folder)
    for n in range(1, 1000):
        name = _fits(stem + ("" if n == 1 else f"-{n}"), len(os.fsencode(suffix))) + suffix
        candidate = folder / name
        try:
            fd = os.open(candidate, os.O_WRONLY | os.O_CREAT | os.O_EXCL | _NOFOLLOW | _CLOEXEC,
                         0o600)
        except FileExistsError:
            continue
        except OSError as exc:
            raise PlannerError(f"cannot write {candidate}", _why(exc, candidate, folder)) \
                from None
        try:
            with os.fdopen(fd, "wb") as fh:
                _take_metadata(fh.fileno(), like, None if like is not None else
                               0o666 & ~_umask(), candidate, copy=True)
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
        except OSError as exc:
            with contextlib.suppress(OSError):
                os.unlink(candidate)
            raise PlannerError(f"cannot write {candidate}", _why(exc, candidate, folder)) \
                from None
        _fsync_dir(folder)
        return candidate
    raise PlannerError(f"cannot write {path}", "999 numbered copies exist beside it already: "
                       "move some away, then try again")


def write_output(path: str | os.PathLike[str], data: bytes) -> None:
    """Write an output the user named (`-o`, an export): a regular file or a new name is
    replaced atomically (`write_atomic`); a standard stream (`/dev/stdout`, `/dev/fd/N`) is
    written to as it is open; a FIFO, terminal or other device is written into in place,
    never replaced."""
    name = os.fspath(path)
    fd_number = _stream_number(name)
    if fd_number is not None:
        _write_all(fd_number, data, name)
        return
    target = Path(name)
    followed = _followed(target)
    try:
        info = os.stat(followed)
    except OSError:
        info = None
    if info is not None:
        _refuse_planted(followed, info)
    if info is None or stat.S_ISREG(info.st_mode) or stat.S_ISDIR(info.st_mode):
        write_atomic(target, data)
        return
    try:
        # No O_CREAT, no O_TRUNC: into what is there. Opened without waiting: a FIFO that no
        # program reads is refused at once, not waited on for ever.
        fd = os.open(target, os.O_WRONLY | _NOCTTY | _CLOEXEC | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        why = ("no program is reading from it" if exc.errno == errno.ENXIO
               else exc.strerror or str(exc))
        raise PlannerError(f"cannot write {target}", f"{why}; nothing was written") from None
    try:
        if hasattr(os, "set_blocking"):
            os.set_blocking(fd, True)  # a slow reader is waited for, as by any program
        _write_all(fd, data, name)
    finally:
        os.close(fd)


def _refuse_planted(target: Path, info: os.stat_result) -> None:
    """Refuse an output that another user placed in a shared (sticky) folder, such as /tmp: a
    FIFO or a file there would hand them what is written (the rule of Linux's
    protected_fifos and protected_regular)."""
    if not hasattr(os, "geteuid"):
        return
    folder = target.parent if str(target.parent) else Path(".")
    try:
        folder_info = os.stat(folder)
    except OSError:
        return
    if folder_info.st_mode & stat.S_ISVTX and info.st_uid not in (os.geteuid(),
                                                                   folder_info.st_uid):
        raise PlannerError(f"cannot write {target}",
                           f"it belongs to another user (uid {info.st_uid}) in a shared "
                           "folder, who would receive what is written: choose another path, "
                           "or remove it first")


_STREAMS = {"/dev/stdout": 1, "/dev/stderr": 2}


def _stream_number(name: str) -> int | None:
    """The descriptor a path names when it means one of this process's own streams."""
    if name in _STREAMS:
        return _STREAMS[name]
    for head in ("/dev/fd/", "/proc/self/fd/"):
        if name.startswith(head) and name[len(head):].isdigit():
            return int(name[len(head):])
    return None


def _write_all(fd: int, data: bytes, name: str) -> None:
    view = memoryview(data)
    try:
        while view:
            view = view[os.write(fd, view):]
    except BrokenPipeError:
        raise PlannerError(f"cannot write {name}",
                           "the program reading it stopped reading") from None
    except OSError as exc:
        raise PlannerError(f"cannot write {name}", exc.strerror or str(exc)) from None


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _fsync_dir(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


MAX_CSV_BYTES = 64 * 1024 * 1024
SPREADSHEET_SUFFIXES = (".xlsx", ".xlsm", ".xls", ".ods", ".numbers")


def read_csv(path: str) -> Decoded:
    """A CSV file's bytes, decoded (`importer.decode_bytes`: BOM, UTF-8 or Windows-1252); a
    missing, unreadable or wrong kind of file is a PlannerError."""
    p = Path(path)
    if p.suffix.lower() in SPREADSHEET_SUFFIXES:
        raise PlannerError(f"{path} is a spreadsheet workbook, not CSV",
                           "In the spreadsheet use 'Save as' / 'Download as' CSV (UTF-8 if "
                           "offered), then import the .csv file.")
    if p.suffix.lower() == ".toml":
        raise PlannerError(f"{path} is a fleet file (TOML), not CSV",
                           "It needs no import: use it with beltplan check or beltplan list.")
    raw = read_capped(p, MAX_CSV_BYTES, f"Import at most {MAX_CSV_BYTES // 2**20} MiB at a "
                      "time.", "Give the path of a .csv file.", noun="CSV file",
                      missing="Check the path of the CSV file.")
    from planner.importer import decode_bytes  # the importer loads only when a CSV is read

    return decode_bytes(raw, path)
