"""Reading fleet files and writing files safely. The only module here that touches the disk.

Reading: bytes -> text (UTF-8, a leading BOM allowed) -> `tomllib` -> `validate.build_fleet`, with
every problem located at its line. Writing: a temporary file in the same folder, flushed and
fsynced, then `os.replace`, so a reader sees the old file or the new one, whole; a save of the
fleet file also keeps the previous version beside it and refuses to overwrite a file that changed
on disk since it was read.
"""

from __future__ import annotations

import hashlib
import os
import re
import tempfile
import tomllib
from dataclasses import dataclass
from pathlib import Path

from planner.errors import PlannerError, Problem
from planner.fleet import Fleet
from planner.locate import line_of, locate
from planner.validate import build_fleet

BOM = "\ufeff"
MAX_FILE_BYTES = 64 * 1024 * 1024
BACKUP_SUFFIX = ".bak"


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
    try:
        if path.is_dir():
            raise PlannerError(f"{name} is a folder, not a fleet file",
                               "Give the path of a .toml file.")
        size = path.stat().st_size
        if size > MAX_FILE_BYTES:
            raise PlannerError(f"{name} is too large ({size:,} bytes)",
                               f"A fleet file is at most {MAX_FILE_BYTES // 2**20} MiB.")
        raw = path.read_bytes()
    except FileNotFoundError:
        raise PlannerError(f"{name}: no such file",
                           "Check the path, or create a fleet file (see the README).") from None
    except PermissionError:
        raise PlannerError(f"{name}: permission denied", "Check the file's permissions.") from None
    except OSError as exc:
        raise PlannerError(f"{name}: cannot be read", exc.strerror or str(exc)) from None
    if b"\x00" in raw:
        raise PlannerError(f"{name} is not a text file",
                           "It contains NUL bytes; a fleet file is UTF-8 text (TOML).")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise PlannerError(
            f"{name} is not valid UTF-8",
            "Save the file as UTF-8 text.",
            [Problem(f"byte 0x{raw[exc.start]:02x} cannot be decoded", file=name, line=line)],
        ) from None
    bom = text.startswith(BOM)
    return (text[1:] if bom else text), raw, bom


_TOML_POS = re.compile(r"^(?P<msg>.*?)\s*\(at line (?P<line>\d+), column (?P<col>\d+)\)$")


def parse_fleet_text(text: str, name: str) -> Fleet:
    """Parse and validate fleet-file text; problems carry `name` and their line."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg, line, col = str(exc), None, None
        hit = _TOML_POS.match(msg)
        if hit:
            msg, line, col = hit["msg"], int(hit["line"]), int(hit["col"])
        raise PlannerError(
            f"{name} is not valid TOML",
            "Fix the syntax at the place shown; nothing was planned.",
            [Problem(f"TOML syntax error: {msg}", file=name, line=line, column=col,
                     hint="check quotes, brackets and '=' on that line (dates are written "
                     "2026-11-20, text in double quotes)")],
        ) from None
    except RecursionError:
        raise PlannerError(f"{name} is nested too deeply to read",
                           "Flatten the nested tables or arrays.") from None
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


def load_fleet(path: str | os.PathLike[str]) -> LoadedFleet:
    """Read, parse and validate a fleet file."""
    p = Path(path)
    text, raw, bom = read_text(p)
    fleet = parse_fleet_text(text, str(p))
    return LoadedFleet(path=p, fleet=fleet, text=text, digest=digest_of(raw), bom=bom)


def write_atomic(path: str | os.PathLike[str], data: bytes) -> None:
    """Replace `path` with `data` so that it is either the old file or the new one, whole."""
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise PlannerError(f"cannot write {target}", f"the folder {folder} does not exist")
    fd = None
    tmp = None
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
        with os.fdopen(fd, "wb") as fh:
            fd = None
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        if target.exists():
            os.chmod(tmp, target.stat().st_mode & 0o7777)
        else:
            os.chmod(tmp, 0o644 & ~_umask())
        os.replace(tmp, target)
        tmp = None
        _fsync_dir(folder)
    except PlannerError:
        raise
    except OSError as exc:
        detail = f"{exc.strerror or exc}; the previous file, if any, is unchanged"
        raise PlannerError(f"cannot write {target}", detail) from None
    finally:
        if fd is not None:
            os.close(fd)
        if tmp is not None:
            try:
                os.unlink(tmp)
            except OSError:
                pass


def save_fleet_text(loaded: LoadedFleet, text: str) -> LoadedFleet:
    """Save new text for a loaded fleet file: checked, backed up, atomic.

    Refuses when the file on disk is no longer the one that was read. The new text must parse
    and validate, so a save can never leave a file the planner cannot read.
    """
    path = loaded.path
    fleet = parse_fleet_text(text, str(path))
    try:
        current = path.read_bytes()
    except FileNotFoundError:
        current = None
    except OSError as exc:
        raise PlannerError(f"cannot check {path} before saving", exc.strerror or str(exc)) from None
    if current is None or digest_of(current) != loaded.digest:
        raise PlannerError(
            f"{path} changed on disk since it was read",
            "Nothing was saved. Reload the file to see the other change, then make yours again"
            if current is not None else "The file was moved or deleted; nothing was saved.",
        )
    write_atomic(backup_path(path), current)
    data = ((BOM if loaded.bom else "") + text).encode("utf-8")
    write_atomic(path, data)
    return LoadedFleet(path=path, fleet=fleet, text=text, digest=digest_of(data), bom=loaded.bom)


def backup_path(path: Path) -> Path:
    return path.with_name(path.name + BACKUP_SUFFIX)


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
