"""The in-use marker: a small file beside a fleet file saying that a beltplan window has it open.

Two windows on one file never lose an edit: a save refuses a file that changed on disk since it
was read (`fileio.save_fleet_text`). But the second window learns it only when it saves. The
marker warns before anyone edits: the window that opens `fleet.toml` creates `.fleet.toml.in-use`
beside it (`O_CREAT | O_EXCL`, so of two windows opening at once exactly one gets it), holding
who has it open (user, host, process id, since when, beltplan version) as JSON.

A marker outlives a crash, so one is *stale*, and quietly taken over, when it names a process on
this computer that no longer runs, or when it cannot be read as a record (cut short by a crash).
A marker from another computer cannot be checked: it counts as live, and its age is shown.

No Textual and no clock here: `new_record` takes the time to record (the caller's clock), and the
process id, host and the liveness check can be passed in, for tests. No function raises for a
marker it cannot write or read: a folder that takes no marker opens without one (`Unmarked`).
"""

from __future__ import annotations

import datetime as dt
import errno
import getpass
import json
import os
import secrets
import socket
import stat
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from planner import __version__
from planner.safetext import shown

SUFFIX = ".in-use"
MAX_MARKER_BYTES = 4096  # a record is ~200 bytes; anything much longer is not one
TRIES = 5  # claim attempts when markers keep appearing and going (other windows at work)
# Between O_EXCL creating the marker and the record being written, the file is briefly empty:
# an unreadable marker is read again for this long before it counts as cut short by a crash.
SETTLE_READS = 10
SETTLE_PAUSE = 0.01  # seconds


@dataclass(frozen=True)
class Record:
    """Who has the file open: what the marker holds."""

    user: str
    host: str
    pid: int
    opened_at: dt.datetime  # aware, UTC
    version: str
    token: str  # tells apart two claims by one process (tests run several apps in one)

    def to_bytes(self) -> bytes:
        stamp = self.opened_at.astimezone(dt.UTC).isoformat().replace("+00:00", "Z")
        return json.dumps({"user": self.user, "host": self.host, "pid": self.pid,
                           "opened_at": stamp, "version": self.version,
                           "token": self.token}, indent=1).encode("utf-8") + b"\n"


@dataclass(frozen=True)
class Claim:
    """The marker is ours: we created it (or took it over) with `record`."""

    marker: Path
    record: Record


@dataclass(frozen=True)
class Holder:
    """Another live window has the file open (or one on another computer, which may be live)."""

    marker: Path
    record: Record
    same_host: bool  # False: its process could not be checked

    def who(self) -> str:
        """`ana@workshop-2 (process 4242)`: user and host as `safetext.shown` (a marker is a
        file anyone with write access to the folder can plant)."""
        return f"{self.user}@{self.host} (process {self.record.pid})"

    @property
    def user(self) -> str:
        """The marker's user, made inert for display."""
        return shown(self.record.user)

    @property
    def host(self) -> str:
        """The marker's host, made inert for display."""
        return shown(self.record.host)

    def since(self, now: dt.datetime, tz: dt.tzinfo | None = None) -> str:
        """`09:15, 12 minutes ago` in local time (`tz`: for tests), the date when not today."""
        opened = self.record.opened_at.astimezone(tz)
        today = now.astimezone(tz).date()
        clock = opened.strftime("%H:%M") if opened.date() == today else \
            opened.strftime("%Y-%m-%d %H:%M")
        return f"{clock}, {ago((now - self.record.opened_at).total_seconds())}"


@dataclass(frozen=True)
class Unmarked:
    """No marker could be written or read (a read-only share, no permission): not an error."""

    marker: Path
    reason: str


def ago(seconds: float) -> str:
    """`less than a minute ago`, `1 minute ago`, `95 minutes ago`, `3 hours ago`, `2 days ago`."""
    if seconds < -60:
        return "by a clock ahead of this computer's"
    minutes = int(seconds // 60)
    if minutes < 1:
        return "less than a minute ago"
    n, unit = (minutes, "minute") if minutes < 120 else \
        (minutes // 60, "hour") if minutes < 48 * 60 else (minutes // 1440, "day")
    return f"{n} {unit}{'s' if n != 1 else ''} ago"


def marker_path(path: str | os.PathLike[str]) -> Path:
    """`.<name>.in-use` beside the file (the real file, when `path` is a symbolic link)."""
    real = Path(os.path.realpath(path))
    return real.with_name(f".{real.name}{SUFFIX}")


def new_record(now: dt.datetime, pid: int | None = None, host: str | None = None,
               user: str | None = None, token: str | None = None) -> Record:
    """A record for this process, opened at `now` (aware); the rest defaults to this process."""
    return Record(user=user if user is not None else this_user(),
                  host=host if host is not None else this_host(),
                  pid=pid if pid is not None else os.getpid(),
                  opened_at=now.astimezone(dt.UTC), version=__version__,
                  token=token if token is not None else secrets.token_hex(8))


def this_user() -> str:
    try:
        return getpass.getuser()
    except Exception:  # no login name and no password entry (some containers)
        return f"uid-{os.getuid()}" if hasattr(os, "getuid") else "someone"


def this_host() -> str:
    try:
        return socket.gethostname() or "this-computer"
    except OSError:
        return "this-computer"


def parse_record(data: bytes) -> Record | None:
    """The record a marker holds, or None when it is not one (empty, cut short, garbage)."""
    try:
        raw = json.loads(data.decode("utf-8"))
        opened = dt.datetime.fromisoformat(raw["opened_at"])
        fields = (raw["user"], raw["host"], raw["version"], raw["token"])
        pid = raw["pid"]
    except (ValueError, TypeError, KeyError, UnicodeDecodeError, RecursionError):
        return None
    if not all(isinstance(f, str) for f in fields) or opened.tzinfo is None:
        return None
    if type(pid) is not int or not 0 < pid < 2**31:
        return None
    user, host, version, token = fields
    return Record(user, host, pid, opened.astimezone(dt.UTC), version, token)


def pid_alive(pid: int) -> bool:
    """Is process `pid` running on this computer? When it cannot be told: yes."""
    if os.name != "posix":
        return True  # os.kill(pid, 0) is no probe there: it would stop the process
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (OSError, OverflowError):
        return True  # PermissionError: it runs, as another user; anything else: cannot tell
    return True


def is_stale(record: Record | None, host: str, alive: Callable[[int], bool] = pid_alive) -> bool:
    """A marker nobody holds: unreadable, or left by a process of this host that has ended."""
    if record is None:
        return True
    return record.host.casefold() == host.casefold() and not alive(record.pid)


# -- the marker on disk --------------------------------------------------------------------------
@dataclass(frozen=True)
class _Seen:
    """A marker as read: its bytes, its record if it is one, and which file it was."""

    data: bytes
    record: Record | None
    identity: tuple[int, int, int, int]  # device, inode, size, mtime in ns

    def same_file(self, other: _Seen) -> bool:
        return self.identity == other.identity and self.data == other.data


def _create(marker: Path, record: Record) -> bool:
    """Create the marker holding `record`; False when there is one already."""
    try:
        fd = os.open(marker, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
    except FileExistsError:
        return False
    try:
        data = record.to_bytes()
        while data:
            data = data[os.write(fd, data):]
    except OSError:
        os.close(fd)
        _unlink(marker)  # a half-written marker would read as a crash's
        raise
    os.close(fd)
    return True


def _read(marker: Path) -> _Seen | None:
    """The marker as it is now; None when there is none. OSError when it cannot be read."""
    flags = os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0)
    try:
        fd = os.open(marker, flags)
    except FileNotFoundError:
        return None
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):
            raise OSError(errno.EINVAL, "not a regular file", str(marker))
        data = os.read(fd, MAX_MARKER_BYTES + 1)
    finally:
        os.close(fd)
    record = parse_record(data) if len(data) <= MAX_MARKER_BYTES else None
    return _Seen(data, record, (st.st_dev, st.st_ino, st.st_size, st.st_mtime_ns))


def _settled(marker: Path) -> _Seen | None:
    """`_read`, but a marker that is no record is read again a few times (being written?)."""
    seen = _read(marker)
    for _ in range(SETTLE_READS):
        if seen is None or seen.record is not None:
            return seen
        time.sleep(SETTLE_PAUSE)
        seen = _read(marker)
    return seen


def _remove_if(marker: Path, wanted: Callable[[_Seen], bool]) -> bool:
    """Remove the marker when it is the one `wanted` accepts; never anyone else's.

    The marker is first renamed to a name of our own (so nobody can swap it meanwhile), then
    read there: the one we wanted is deleted; any other (it came in between) is put back.
    """
    grave = marker.with_name(f"{marker.name}.{secrets.token_hex(6)}.gone")
    try:
        os.rename(marker, grave)
    except FileNotFoundError:
        return False
    try:
        seen = _read(grave)
    except OSError:
        seen = None
    if seen is not None and wanted(seen):
        _unlink(grave)
        return True
    _put_back(grave, marker)
    return False


def _put_back(grave: Path, marker: Path) -> None:
    try:
        os.link(grave, marker)  # fails when yet another marker came meanwhile: that one stays
    except FileExistsError:
        pass
    except OSError:  # no hard links on this file system
        if not os.path.lexists(marker):
            os.rename(grave, marker)
            return
    _unlink(grave)


def _unlink(path: Path) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def _holder(marker: Path, record: Record, host: str) -> Holder:
    return Holder(marker, record, record.host.casefold() == host.casefold())


_UNWRITABLE = {
    errno.EACCES: "no permission to write in {folder}",
    errno.EPERM: "the system does not allow writing in {folder}",
    errno.EROFS: "{folder} is on a read-only disk",
    errno.ENOSPC: "the disk is full",
    getattr(errno, "EDQUOT", -1): "the disk quota is used up",
    errno.ENAMETOOLONG: "the file name is too long to add a marker's name to it",
}


def _reason(exc: OSError, marker: Path) -> str:
    words = _UNWRITABLE.get(exc.errno or 0)
    if words is None:
        return f"the marker {marker.name} could not be used ({exc.strerror or exc})"
    return words.format(folder=marker.parent)


# -- the API ------------------------------------------------------------------------------------
def claim(path: str | os.PathLike[str], me: Record,
          alive: Callable[[int], bool] = pid_alive) -> Claim | Holder | Unmarked:
    """Mark the file as open by `me`: our claim, or who holds it, or why there is no marker.

    A stale marker is taken over silently. A marker with `me`'s token is ours already (a claim
    made earlier by the same window) and is claimed again as it is.
    """
    marker = marker_path(path)
    try:
        for _ in range(TRIES):
            if _create(marker, me):
                return Claim(marker, me)
            seen = _settled(marker)
            if seen is None:
                continue  # it went meanwhile: try again
            record = seen.record
            if record is not None and record.token == me.token and record.pid == me.pid:
                return Claim(marker, record)
            if record is not None and not is_stale(record, me.host, alive):
                return _holder(marker, record, me.host)
            _remove_if(marker, seen.same_file)
    except OSError as exc:
        return Unmarked(marker, _reason(exc, marker))
    return Unmarked(marker, "other windows kept creating and removing the marker")


def take_over(path: str | os.PathLike[str], me: Record) -> Claim | Unmarked:
    """Make the marker ours whoever holds it (the user chose to open the file anyway)."""
    marker = marker_path(path)
    try:
        for _ in range(TRIES):
            if _create(marker, me):
                return Claim(marker, me)
            seen = _read(marker)
            if seen is not None:
                _remove_if(marker, seen.same_file)
    except OSError as exc:
        return Unmarked(marker, _reason(exc, marker))
    return Unmarked(marker, "other windows kept creating and removing the marker")


def release(claim: Claim) -> bool:
    """Remove the marker if it is still ours (never another window's); True when removed."""
    try:
        seen = _read(claim.marker)
        if seen is None or seen.record != claim.record:
            return False  # another window's now: not even moved aside (a third could slip in)
        return _remove_if(claim.marker, lambda seen: seen.record == claim.record)
    except OSError:
        return False


def holder(path: str | os.PathLike[str], host: str | None = None,
           alive: Callable[[int], bool] = pid_alive) -> Holder | None:
    """Who has the file open, if a live window does (None: no marker, a stale one, unreadable)."""
    marker = marker_path(path)
    try:
        seen = _settled(marker)
    except OSError:
        return None
    here = host if host is not None else this_host()
    if seen is None or seen.record is None or is_stale(seen.record, here, alive):
        return None
    return _holder(marker, seen.record, here)
