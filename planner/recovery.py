"""The unsaved text of a UI that stops on a bug, written beside the fleet file (file layer).

`.<name>.recovered-<UTC time>.toml` in the fleet file's folder, with the fleet file's mode (its
contents are the same kind of data), created with O_EXCL so an earlier recovery is never
overwritten: a second one in the same second takes `-2`, `-3`, …. When the folder takes no file
the user's own folder for temporary files is tried, so the text is not lost.
"""

from __future__ import annotations

import datetime as dt
import os
import stat
import tempfile
from pathlib import Path

MAX_TRIES = 100


def recovery_name(fleet_path: Path, now: dt.datetime, n: int = 1) -> str:
    """The recovery file's name for the `n`th try at `now` (UTC)."""
    stamp = now.astimezone(dt.UTC).strftime("%Y%m%dT%H%M%SZ")
    return f".{fleet_path.stem}.recovered-{stamp}{'' if n == 1 else f'-{n}'}.toml"


def _mode_of(fleet_path: Path) -> int:
    try:
        return stat.S_IMODE(fleet_path.stat().st_mode) & 0o666
    except OSError:
        return 0o600  # the file is gone: private to the user


def write_recovery(fleet_path: str | os.PathLike[str], text: str, now: dt.datetime) -> Path:
    """Write `text` to a new recovery file beside `fleet_path`; its path. OSError if nowhere."""
    path = Path(fleet_path)
    mode = _mode_of(path)
    data = text.encode("utf-8")
    error: OSError | None = None
    for folder in (path.parent, Path(tempfile.gettempdir())):
        for n in range(1, MAX_TRIES + 1):
            target = folder / recovery_name(path, now, n)
            try:
                fd = os.open(target, os.O_WRONLY | os.O_CREAT | os.O_EXCL, mode)
            except FileExistsError:
                continue
            except OSError as exc:
                error = exc
                break
            try:
                with os.fdopen(fd, "wb") as fh:
                    fh.write(data)
                    fh.flush()
                    os.fsync(fh.fileno())
                os.chmod(target, mode)  # the umask may have taken bits the fleet file has
            except OSError as exc:
                error = exc
                break
            return target
    raise error or FileExistsError(f"no free recovery name beside {path}")
