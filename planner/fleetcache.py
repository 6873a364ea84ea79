"""A cache of validated fleets, so that opening an unchanged big file again is quick.

Reading a fleet file is mostly the TOML parse (pure Python): over a second at 5,000
vehicles. The UI opens the same file again and again (and a save writes a file whose fleet it
already holds), so it keeps each validated fleet in the user's cache folder, under the SHA-256
of the file's exact bytes. An entry is used only when all of these hold, else the file is
read as usual:
- the file's bytes hash to the entry's name (a changed file is a new name: never stale);
- the entry was written by this very planner: its code (the source of every module of the
  `planner` package), Python and pydantic versions hash to the fingerprint in the entry;
- the entry carries a valid HMAC-SHA256 under a random key kept in the cache folder, readable
  by the user only, so a file put there by anyone else is never unpickled;
- the folder belongs to the user and nobody else can write to it.
A fleet depends on nothing but the text and the code (validation reads no clock), so an entry
gives exactly what reading the file gives; `tests/test_fleetcache.py` checks it.

The planning date is not in an entry: the plan is always made afresh. Entries are small next
to the file system (about 0.7 bytes per byte of TOML); the oldest beyond `KEEP_BYTES` are
removed. `BELTPLAN_CACHE` names another folder, or `off` turns the cache off. Every failure
here (full disk, no permission, a damaged entry) only means the file is read as usual.
"""

from __future__ import annotations

import hashlib
import hmac
import os
import pickle
import secrets
import stat
import sys
import tempfile
import time
from importlib.metadata import PackageNotFoundError, version
from pathlib import Path

from planner.fileio import write_atomic
from planner.fleet import Fleet

MAGIC = b"beltplan fleet cache 1\n"
KEEP_BYTES = 512 * 1024 * 1024  # the entries kept in all (oldest used removed first)
SUFFIX = ".fleet"
ENV = "BELTPLAN_CACHE"
STALE_SECONDS = 600  # a temporary file this old belongs to no write still running

_fingerprint: bytes | None = None


def folder() -> Path | None:
    """The cache folder (private to the user), or None when the cache is off or unusable.

    `BELTPLAN_CACHE`, else `$XDG_CACHE_HOME/beltplan` (an absolute XDG_CACHE_HOME only, as the
    XDG Base Directory specification says), else `$HOME/.cache/beltplan`; with no usable home
    (HOME empty or relative) there is no cache. A folder is used only when it is the user's
    and nobody else can enter it; a shared one (the user's, or a sticky one like /tmp) gets
    a private folder of the user's inside it, `beltplan-<uid>`. A symbolic link
    is followed only when it belongs to the user. No existing folder's mode is ever changed;
    only a folder created here is made private.
    """
    setting = os.environ.get(ENV, "")
    if setting.strip().lower() == "off":
        return None
    try:
        if setting:
            base = Path(setting).expanduser()
            if not base.is_absolute():
                base = Path.cwd() / base
        else:
            xdg = os.environ.get("XDG_CACHE_HOME", "")
            if xdg and os.path.isabs(xdg):
                parent = Path(xdg)
            else:
                if os.environ.get("HOME", None) == "":
                    return None  # an empty HOME would put the cache in the current folder
                home = str(Path.home())
                if not os.path.isabs(home):
                    return None
                parent = Path(home) / ".cache"
            if not _own_folder(parent, create=True, private=False):
                return None
            base = parent / "beltplan"
        if _own_folder(base, create=True, private=True):
            return base
        inner = base / f"beltplan-{os.getuid()}" if hasattr(os, "getuid") else None
        if inner is not None and _own_folder(base, create=False, private=False,
                                            anyone=True) \
                and _own_folder(inner, create=True, private=True):
            return inner
    except (OSError, RuntimeError):  # RuntimeError: no home folder to be found
        return None
    return None


def _own_folder(path: Path, create: bool, private: bool, anyone: bool = False) -> bool:
    """True when `path` is a folder fit for use: created here (mode 0700), or existing and the
    user's (and, if `private`, entered by nobody else). With `anyone`, an existing folder of
    the user's own, or a sticky one of any owner such as /tmp, passes (a private folder of the
    user's is then made inside it). A link at `path`
    counts only when it belongs to the user."""
    if create:
        try:
            os.mkdir(path, 0o700)
        except FileExistsError:
            pass
        else:
            os.chmod(path, 0o700)  # made here, so ours to set (mkdir's mode passes the umask)
            return True
    try:
        link = os.lstat(path)
        info = os.stat(path)
    except OSError:
        return False
    if not stat.S_ISDIR(info.st_mode):
        return False
    if not hasattr(os, "getuid"):
        return True
    uid = os.getuid()
    if stat.S_ISLNK(link.st_mode) and link.st_uid != uid:
        return False  # planted by someone else: never followed
    if anyone:  # the user's own shared folder, or one like /tmp (sticky: names stay theirs)
        return info.st_uid == uid or bool(info.st_mode & stat.S_ISVTX)
    return info.st_uid == uid and not (private and info.st_mode & 0o077)


def fingerprint() -> bytes:
    """What an entry must have been written by: this code, this Python, this pydantic.

    Worked out once, at the first read (`Session.read` asks before reading the file), so code
    changed on disk while the UI runs cannot label the running code's entries as its own.
    """
    global _fingerprint
    if _fingerprint is None:
        _fingerprint = fingerprint_of(Path(__file__).resolve().parent)
    return _fingerprint


def fingerprint_of(package: Path) -> bytes:
    """SHA-256 over Python's and pydantic's versions and every module's path and source."""
    h = hashlib.sha256()
    h.update(sys.version.encode())
    try:
        h.update(version("pydantic").encode())
    except PackageNotFoundError:  # pragma: no cover - pydantic is a dependency
        pass
    for source in sorted(package.rglob("*.py")):
        h.update(source.relative_to(package).as_posix().encode() + b"\0")
        h.update(source.read_bytes() + b"\0")
    return h.digest()


def get(digest: str) -> Fleet | None:
    """The validated fleet of the file whose bytes have this SHA-256, if cached and sound."""
    try:
        return _get(digest)
    except Exception:  # noqa: BLE001 - whatever goes wrong here, the file is read as usual
        return None


def put(digest: str, fleet: Fleet) -> bool:
    """Keep `fleet` as the fleet of the file whose bytes have this SHA-256; False if not kept.

    `fleet` must be what `fileio.parse_fleet_text` gives for those bytes' text.
    """
    try:
        return _put(digest, fleet)
    except Exception:  # noqa: BLE001 - a cache that cannot be written is no cache, not an error
        return False


def entry_path(base: Path, digest: str) -> Path:
    """Where the entry for a file's digest lives: also named by the code that wrote it, so two
    versions of beltplan on one machine do not overwrite each other's entries."""
    return base / f"{digest}-{fingerprint().hex()[:16]}{SUFFIX}"


def _get(digest: str) -> Fleet | None:
    base = folder()
    if base is None or not _is_digest(digest):
        return None
    entry = entry_path(base, digest)
    try:
        data = entry.read_bytes()
        key = _key(base, create=False)
    except OSError:
        return None
    if key is None:
        return None
    head = len(MAGIC) + 32 + 32
    if len(data) < head or not data.startswith(MAGIC):
        return None
    mark, sign = data[len(MAGIC):len(MAGIC) + 32], data[len(MAGIC) + 32:head]
    payload = data[head:]
    if mark != fingerprint() or not hmac.compare_digest(sign, _sign(key, digest, payload)):
        return None
    fleet = pickle.loads(payload)  # signed with our key: written by this code, for this file
    if not isinstance(fleet, Fleet):
        return None
    try:
        os.utime(entry)  # recently used: kept longest
    except OSError:
        pass
    return fleet


def _put(digest: str, fleet: Fleet) -> bool:
    base = folder()
    if base is None or not _is_digest(digest):
        return False
    key = _key(base, create=True)
    if key is None:
        return False
    payload = pickle.dumps(fleet, protocol=pickle.HIGHEST_PROTOCOL)
    entry = entry_path(base, digest)
    write_atomic(entry, MAGIC + fingerprint() + _sign(key, digest, payload) + payload,
                 mode=0o600)
    _prune(base)
    return True


def _sign(key: bytes, digest: str, payload: bytes) -> bytes:
    return hmac.new(key, digest.encode() + b"\0" + fingerprint() + payload,
                    hashlib.sha256).digest()


def _key(base: Path, create: bool) -> bytes | None:
    """The folder's secret key (32 random bytes, readable by the user only)."""
    path = base / "key"
    try:
        info = path.stat()
    except FileNotFoundError:
        if not create:
            return None
        # Written whole under a private name, then linked into place: never half a key, and
        # of two processes making one at once, the first link wins and both use it.
        fd, tmp = tempfile.mkstemp(prefix=".key.", dir=base)
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(secrets.token_bytes(32))
                fh.flush()
                os.fsync(fh.fileno())
            try:
                os.link(tmp, path)
            except FileExistsError:
                pass
        finally:
            os.unlink(tmp)
        return _key(base, create=False)
    if hasattr(os, "getuid") and (info.st_uid != os.getuid() or info.st_mode & 0o077):
        return None
    key = path.read_bytes()
    return key if len(key) == 32 else None


def _prune(base: Path) -> None:
    """Remove the least recently used entries beyond KEEP_BYTES in all (never the newest),
    and temporary files a killed write left (old ones only: a younger one may be in use)."""
    now = time.time()
    for leftover in [*base.glob(".*" + SUFFIX + ".*.tmp"), *base.glob(".key.*")]:
        try:
            if now - leftover.stat().st_mtime > STALE_SECONDS:
                leftover.unlink()
        except OSError:
            pass
    entries = []
    for entry in base.glob("*" + SUFFIX):
        try:
            info = entry.stat()
        except OSError:
            continue
        entries.append((info.st_mtime, info.st_size, entry))
    entries.sort(reverse=True)
    total = 0
    for k, (_, size, entry) in enumerate(entries):
        total += size
        if total > KEEP_BYTES and k > 0:  # the newest stays, whatever its size
            try:
                entry.unlink()
            except OSError:
                pass


def _is_digest(digest: str) -> bool:
    return len(digest) == 64 and all(c in "0123456789abcdef" for c in digest)
