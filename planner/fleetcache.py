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
    """The cache folder (created, private), or None when the cache is off or unusable."""
    setting = os.environ.get(ENV, "")
    if setting.strip().lower() == "off":
        return None
    try:
        if setting:
            base = Path(setting).expanduser()
        else:
            xdg = os.environ.get("XDG_CACHE_HOME", "")
            base = (Path(xdg) if xdg else Path.home() / ".cache") / "beltplan"
        base.mkdir(mode=0o700, parents=True, exist_ok=True)
        info = base.stat()
        if hasattr(os, "getuid"):
            if info.st_uid != os.getuid():
                return None  # someone else's folder
            if info.st_mode & 0o077:  # the entries hold the fleet: for the user's eyes only
                base.chmod(0o700)
    except (OSError, RuntimeError):  # RuntimeError: no home folder to be found
        return None
    return base


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
    write_atomic(entry, MAGIC + fingerprint() + _sign(key, digest, payload) + payload)
    entry.chmod(0o600)
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
