"""Saves that survive faults: afterwards the file is the old one or the new one, whole.

Faults are injected at each step of `fileio.write_atomic` (create the temporary file, write,
flush, fsync, give the mode, rename) and of `fileio.save_fleet_text` (read back, back up, write):
the error must be a `PlannerError` that says what happened, the fleet file must be byte for byte
the old one, no temporary file may be left, and saving again once the fault is gone must work.
Real faults too where the system gives them to us (a path under a file, a vanished folder, sysfs
as a folder even root cannot write). A saving process is killed with SIGKILL at random points,
hundreds of times; and two instances saving the same file cannot lose each other's work.
"""

from __future__ import annotations

import datetime as dt
import errno
import os
import random
import shutil
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from planner import edit, fileio
from planner.errors import PlannerError
from planner.fileio import backup_path, load_fleet, save_fleet_text, write_atomic
from tests.conftest import COURIER, ROOT

OLD = COURIER.read_bytes()
NEW_TEXT = edit.add_reading(COURIER.read_text(encoding="utf-8"), "KL-03", dt.date(2026, 12, 5),
                            70500)


def temps(folder: Path) -> list[str]:
    """Temporary files of a save (`.<name>.<random>.tmp`) left in `folder`."""
    return sorted(p.name for p in folder.iterdir() if p.name.endswith(fileio.TEMP_SUFFIX))


@pytest.fixture
def fleet(tmp_path: Path) -> Path:
    path = tmp_path / "courier_fleet.toml"
    path.write_bytes(OLD)
    return path


def oserror(code: int) -> OSError:
    return OSError(code, os.strerror(code))


def fail_call(monkeypatch, owner, name: str, code: int, nth: int = 1) -> list[int]:
    """Make the `nth` call of `owner.name` raise OSError(code); returns the call counter."""
    real = getattr(owner, name)
    calls = [0]

    def faulty(*args, **kwargs):
        calls[0] += 1
        if calls[0] == nth:
            raise oserror(code)
        return real(*args, **kwargs)

    monkeypatch.setattr(owner, name, faulty)
    return calls


class FaultyFile:
    """A file object whose write (half the data first), flush or close fails."""

    def __init__(self, fh, step: str, code: int) -> None:
        self.fh, self.step, self.code = fh, step, code

    def write(self, data: bytes) -> int:
        if self.step == "write":
            self.fh.write(data[: len(data) // 2])  # a short write, then the disk is full
            self.fh.flush()
            raise oserror(self.code)
        return self.fh.write(data)

    def flush(self) -> None:
        if self.step == "flush":
            raise oserror(self.code)
        self.fh.flush()

    def fileno(self) -> int:
        return self.fh.fileno()

    def __enter__(self):
        return self

    def __exit__(self, *exc) -> None:
        self.fh.close()
        if self.step == "close" and exc[0] is None:
            raise oserror(self.code)


def fail_file_step(monkeypatch, step: str, code: int, nth: int = 1) -> None:
    real = os.fdopen
    calls = [0]

    def fdopen(fd, *args, **kwargs):
        calls[0] += 1
        fh = real(fd, *args, **kwargs)
        return FaultyFile(fh, step, code) if calls[0] == nth else fh

    monkeypatch.setattr(os, "fdopen", fdopen)


# What each fault must be called in the message (fileio's own words).
WORDS = {
    errno.ENOSPC: "the disk is full",
    errno.EIO: "input/output error",
    errno.EACCES: "no permission to write in",
    errno.EROFS: "read-only disk",
    errno.EXDEV: "check the disk",
}

STEPS = [  # (step, how to inject it)
    ("create", lambda mp, code, nth: fail_call(mp, fileio.tempfile, "mkstemp", code, nth)),
    ("write", lambda mp, code, nth: fail_file_step(mp, "write", code, nth)),
    ("flush", lambda mp, code, nth: fail_file_step(mp, "flush", code, nth)),
    ("close", lambda mp, code, nth: fail_file_step(mp, "close", code, nth)),
    ("fsync", lambda mp, code, nth: fail_call(mp, os, "fsync", code, nth)),
    ("chmod", lambda mp, code, nth: fail_call(mp, os, "fchmod", code, nth)),
    ("replace", lambda mp, code, nth: fail_call(mp, os, "replace", code, nth)),
]
CODES = [errno.ENOSPC, errno.EIO, errno.EACCES, errno.EROFS, errno.EXDEV]


# -- write_atomic, step by step ---------------------------------------------------------------

@pytest.mark.parametrize("code", CODES, ids=[errno.errorcode[c] for c in CODES])
@pytest.mark.parametrize(("step", "inject"), STEPS, ids=[s for s, _ in STEPS])
def test_write_atomic_fault_leaves_the_old_file(step, inject, code, fleet, monkeypatch):
    inject(monkeypatch, code, 1)
    with pytest.raises(PlannerError) as caught:
        write_atomic(fleet, b"new content\n")
    monkeypatch.undo()
    assert fleet.read_bytes() == OLD
    assert temps(fleet.parent) == []
    message = caught.value.render()
    assert f"cannot write {fleet}" in message
    assert WORDS[code] in message
    assert "The previous file, if any, is unchanged." in message


@pytest.mark.parametrize(("step", "inject"), STEPS, ids=[s for s, _ in STEPS])
def test_write_atomic_fault_on_a_new_file_leaves_nothing(step, inject, tmp_path, monkeypatch):
    target = tmp_path / "plan.csv"
    inject(monkeypatch, errno.ENOSPC, 1)
    with pytest.raises(PlannerError, match="cannot write"):
        write_atomic(target, b"a,b\n")
    assert not target.exists() and list(tmp_path.iterdir()) == []


def test_a_failing_folder_fsync_does_not_fail_a_complete_write(fleet, monkeypatch):
    """The rename is done once os.replace returns; the folder's fsync is best effort."""
    fail_call(monkeypatch, os, "fsync", errno.EINVAL, nth=2)  # 1: the file, 2: the folder
    write_atomic(fleet, b"new\n")
    assert fleet.read_bytes() == b"new\n"


def test_a_failing_cleanup_does_not_hide_the_fault(fleet, monkeypatch):
    fail_call(monkeypatch, os, "replace", errno.ENOSPC)
    fail_call(monkeypatch, os, "unlink", errno.EIO)
    with pytest.raises(PlannerError, match="the disk is full"):
        write_atomic(fleet, b"new\n")
    monkeypatch.undo()
    assert fleet.read_bytes() == OLD
    # The temporary file that could not be removed is removed by a later save once stale.
    (left,) = temps(fleet.parent)
    old = time.time() - fileio.STALE_TEMP_SECONDS - 5
    os.utime(fleet.parent / left, (old, old))
    write_atomic(fleet, OLD)
    assert temps(fleet.parent) == []


def test_a_fresh_temporary_file_of_another_save_is_left_alone(fleet):
    other = fleet.parent / f".{fleet.name}.inflight{fileio.TEMP_SUFFIX}"
    other.write_bytes(b"half")
    write_atomic(fleet, OLD)
    assert other.exists()


# -- save_fleet_text, step by step ------------------------------------------------------------

@pytest.mark.parametrize("code", [errno.ENOSPC, errno.EIO], ids=["ENOSPC", "EIO"])
@pytest.mark.parametrize("which", ["backup", "fleet file"])
@pytest.mark.parametrize(("step", "inject"), STEPS, ids=[s for s, _ in STEPS])
def test_save_fault_keeps_the_old_file_and_can_be_retried(step, inject, which, code, fleet,
                                                          monkeypatch):
    loaded = load_fleet(fleet)
    # write_atomic runs twice in a save: first the backup, then the fleet file.
    nth = 1 if which == "backup" else 2
    if step == "fsync":
        nth = 1 if which == "backup" else 3  # each write_atomic fsyncs the file, then the folder
    inject(monkeypatch, code, nth)
    with pytest.raises(PlannerError) as caught:
        save_fleet_text(loaded, NEW_TEXT)
    monkeypatch.undo()
    err = caught.value
    assert err.title == f"{fleet} was not saved"
    assert WORDS[code] in err.message
    if which == "backup":
        assert "the backup copy" in err.message
        assert not backup_path(fleet).exists()
    else:
        assert backup_path(fleet).read_bytes() == OLD
    assert fleet.read_bytes() == OLD
    assert temps(fleet.parent) == []
    # Nothing is lost: the same loaded state saves once the fault is gone.
    saved = save_fleet_text(loaded, NEW_TEXT)
    assert fleet.read_text(encoding="utf-8") == NEW_TEXT
    assert load_fleet(fleet).fleet == saved.fleet


def test_a_failed_backup_keeps_the_previous_backup(fleet, monkeypatch):
    backup_path(fleet).write_bytes(b"# the backup of the save before\n")
    loaded = load_fleet(fleet)
    fail_file_step(monkeypatch, "write", errno.ENOSPC, nth=1)
    with pytest.raises(PlannerError, match="the disk is full"):
        save_fleet_text(loaded, NEW_TEXT)
    assert backup_path(fleet).read_bytes() == b"# the backup of the save before\n"
    assert fleet.read_bytes() == OLD


def test_reading_back_before_the_save_fails(fleet, monkeypatch):
    loaded = load_fleet(fleet)
    fail_call(monkeypatch, os, "read", errno.EIO)  # the first read is the read-back
    with pytest.raises(PlannerError) as caught:
        save_fleet_text(loaded, NEW_TEXT)
    monkeypatch.undo()
    assert caught.value.title == f"{fleet} was not saved"
    assert "could not be read back" in caught.value.message
    assert fleet.read_bytes() == OLD and not backup_path(fleet).exists()


def test_invalid_text_is_never_saved(fleet):
    loaded = load_fleet(fleet)
    with pytest.raises(PlannerError, match="not valid TOML"):
        save_fleet_text(loaded, NEW_TEXT.replace('id = "KL-03"', 'id = "KL-03'))
    with pytest.raises(PlannerError, match="odometer goes backwards"):
        save_fleet_text(loaded, edit.add_reading(loaded.text, "KL-03", dt.date(2026, 12, 6), 10))
    assert fleet.read_bytes() == OLD and not backup_path(fleet).exists()


def test_a_byte_order_mark_is_kept(tmp_path):
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + OLD)
    loaded = load_fleet(path)
    save_fleet_text(loaded, NEW_TEXT)
    assert path.read_bytes() == b"\xef\xbb\xbf" + NEW_TEXT.encode("utf-8")
    assert backup_path(path).read_bytes() == b"\xef\xbb\xbf" + OLD


def test_saving_through_a_symbolic_link_keeps_the_link(tmp_path):
    real = tmp_path / "shared" / "fleet.toml"
    real.parent.mkdir()
    real.write_bytes(OLD)
    link = tmp_path / "fleet.toml"
    link.symlink_to(real)
    save_fleet_text(load_fleet(link), NEW_TEXT)
    assert link.is_symlink() and link.resolve() == real.resolve()
    assert real.read_text(encoding="utf-8") == NEW_TEXT


def test_the_file_mode_is_kept(fleet):
    fleet.chmod(0o640)
    save_fleet_text(load_fleet(fleet), NEW_TEXT)
    assert fleet.stat().st_mode & 0o777 == 0o640


# -- real faults ------------------------------------------------------------------------------

def test_a_vanished_folder_before_the_save(fleet):
    loaded = load_fleet(fleet)
    shutil.rmtree(fleet.parent)
    with pytest.raises(PlannerError) as caught:
        save_fleet_text(loaded, NEW_TEXT)
    assert "moved or deleted; nothing was saved" in caught.value.message
    assert not fleet.parent.exists()  # nothing was created in its place


def test_a_folder_that_vanishes_during_the_save(fleet, monkeypatch):
    """The share goes away after the temporary file is written: a real ENOENT follows."""
    loaded = load_fleet(fleet)
    real = os.fsync
    calls = [0]

    def fsync(fd):
        real(fd)
        calls[0] += 1
        if calls[0] == 3:  # the fleet file's temporary copy, after the backup's two fsyncs
            shutil.rmtree(fleet.parent)

    monkeypatch.setattr(os, "fsync", fsync)
    with pytest.raises(PlannerError) as caught:
        save_fleet_text(loaded, NEW_TEXT)
    assert caught.value.title == f"{fleet} was not saved"
    assert "disappeared while writing" in caught.value.message


def test_a_path_under_a_file(tmp_path):
    blocker = tmp_path / "fleet.toml"
    blocker.write_bytes(OLD)
    with pytest.raises(PlannerError) as caught:
        write_atomic(blocker / "copy.toml", b"x")
    assert f"{blocker} is a file, not a folder" in caught.value.message
    assert blocker.read_bytes() == OLD


def test_a_read_only_folder(tmp_path, monkeypatch):
    if os.geteuid() != 0:
        folder = tmp_path / "ro"
        folder.mkdir()
        (folder / "fleet.toml").write_bytes(OLD)
        loaded = load_fleet(folder / "fleet.toml")
        folder.chmod(0o555)
        try:
            with pytest.raises(PlannerError, match="no permission to write in"):
                save_fleet_text(loaded, NEW_TEXT)
        finally:
            folder.chmod(0o755)
        assert (folder / "fleet.toml").read_bytes() == OLD
        return
    # As root the permission bits stop nothing: the refusal the kernel would give is injected,
    # and a real read-only place (sysfs) is tried where there is one.
    fleet = tmp_path / "fleet.toml"
    fleet.write_bytes(OLD)
    loaded = load_fleet(fleet)
    fail_call(monkeypatch, fileio.tempfile, "mkstemp", errno.EACCES)
    with pytest.raises(PlannerError, match="no permission to write in"):
        save_fleet_text(loaded, NEW_TEXT)
    monkeypatch.undo()
    assert fleet.read_bytes() == OLD
    if os.path.isdir("/sys/kernel"):
        with pytest.raises(PlannerError, match="cannot write /sys/beltplan.toml"):
            write_atomic("/sys/beltplan.toml", b"x")
        assert not os.path.exists("/sys/beltplan.toml")


def test_a_read_only_fleet_file(fleet):
    fleet.chmod(0o444)
    if os.access(fleet, os.W_OK):
        pytest.skip("running as root: a read-only file is writable to root")
    with pytest.raises(PlannerError, match="the file is read-only"):
        save_fleet_text(load_fleet(fleet), NEW_TEXT)
    assert fleet.read_bytes() == OLD


# -- two instances ----------------------------------------------------------------------------

def test_the_second_instance_is_refused_and_nothing_is_lost(fleet):
    first, second = load_fleet(fleet), load_fleet(fleet)
    mine = edit.edit_vehicle(first.text, "KL-01", {"label": "Van 1, first instance"})
    theirs = edit.edit_vehicle(second.text, "KL-02", {"label": "Van 2, second instance"})
    save_fleet_text(first, mine)
    with pytest.raises(PlannerError) as caught:
        save_fleet_text(second, theirs)
    assert caught.value.title == f"{fleet} changed on disk since it was read"
    assert "Nothing was saved. Reload the file" in caught.value.message
    assert fleet.read_text(encoding="utf-8") == mine           # the first save stands
    assert backup_path(fleet).read_bytes() == OLD              # and the original is kept
    # The second instance reloads, makes its change again, and both changes are in the file.
    again = load_fleet(fleet)
    save_fleet_text(again, edit.edit_vehicle(again.text, "KL-02",
                                             {"label": "Van 2, second instance"}))
    labels = {v.id: v.label for v in load_fleet(fleet).fleet.vehicles}
    assert labels["KL-01"] == "Van 1, first instance"
    assert labels["KL-02"] == "Van 2, second instance"


def test_a_file_deleted_under_an_instance_is_not_recreated(fleet):
    loaded = load_fleet(fleet)
    fleet.unlink()
    with pytest.raises(PlannerError, match="changed on disk"):
        save_fleet_text(loaded, NEW_TEXT)
    assert not fleet.exists()


needs_fork = pytest.mark.skipif(not hasattr(os, "fork"), reason="needs os.fork (POSIX)")


@needs_fork
@pytest.mark.skipif(fileio.fcntl is None, reason="no flock on this system")
def test_two_processes_saving_at_the_same_moment(fleet):
    """Released together, two savers of the same loaded file: exactly one wins, every time.

    Without the lock both can pass the "changed on disk?" check before either renames, and one
    change is silently lost; with it the second sees the first's file and refuses.
    """
    rounds = 25
    for r in range(rounds):
        loaded = load_fleet(fleet)
        texts = [edit.edit_vehicle(loaded.text, "KL-01", {"label": f"round {r} by {who}"})
                 for who in ("A", "B")]
        go_r, go_w = os.pipe()
        results = []
        pids = []
        for text in texts:
            out_r, out_w = os.pipe()
            pid = os.fork()
            if pid == 0:  # the child: wait for the start, save, report
                code = 3
                try:
                    os.close(go_w)
                    os.read(go_r, 1)
                    try:
                        save_fleet_text(loaded, text)
                        code = 0
                    except PlannerError as err:
                        code = 1 if "changed on disk" in err.title else 2
                    os.write(out_w, bytes([code]))
                finally:
                    os._exit(code)
            os.close(out_w)
            pids.append(pid)
            results.append(out_r)
        os.close(go_r)
        os.write(go_w, b"gg")  # one byte for each child: both start at once
        os.close(go_w)
        codes = []
        for pid, out_r in zip(pids, results, strict=True):
            codes.append(os.read(out_r, 1)[0])
            os.close(out_r)
            os.waitpid(pid, 0)
        assert sorted(codes) == [0, 1], (r, codes)
        winner = texts[codes.index(0)]
        assert fleet.read_text(encoding="utf-8") == winner


# -- SIGKILL at random points -----------------------------------------------------------------

def _saver_loop(path: Path, a: str, b: str) -> None:
    """Save a, b, a, b, … for ever (until killed); each save from a fresh load."""
    while True:
        loaded = load_fleet(path)
        save_fleet_text(loaded, b if loaded.text == a else a)


def _check_after_kill(path: Path, allowed: set[bytes]) -> None:
    data = path.read_bytes()
    assert data in allowed, f"torn file: {len(data)} bytes"
    load_fleet(path)  # and it loads
    if backup_path(path).exists():
        assert backup_path(path).read_bytes() in allowed


@pytest.mark.slow
@needs_fork
def test_sigkill_at_random_points_never_tears_the_file(tmp_path):
    path = tmp_path / "courier_fleet.toml"
    path.write_bytes(OLD)
    a, b = OLD.decode("utf-8"), NEW_TEXT
    allowed = {OLD, NEW_TEXT.encode("utf-8")}
    start = time.perf_counter()
    for _ in range(5):  # how long a load and a save take here, to spread the kills over them
        loaded = load_fleet(path)
        save_fleet_text(loaded, b if loaded.text == a else a)
    per_save = (time.perf_counter() - start) / 5
    rng = random.Random(20261207)
    rounds, mid_write, seen = 300, 0, set()
    began = time.perf_counter()
    for _ in range(rounds):
        ready_r, ready_w = os.pipe()
        pid = os.fork()
        if pid == 0:
            try:
                os.close(ready_r)
                os.write(ready_w, b"!")
                _saver_loop(path, a, b)
            finally:
                os._exit(1)
        os.close(ready_w)
        os.read(ready_r, 1)
        os.close(ready_r)
        time.sleep(rng.uniform(0, 3 * per_save))
        os.kill(pid, signal.SIGKILL)
        os.waitpid(pid, 0)
        _check_after_kill(path, allowed)
        seen.add(path.read_bytes())
        left = temps(tmp_path)
        if left:  # killed between creating the temporary file and the rename
            mid_write += 1
            for name in left:
                (tmp_path / name).unlink()
    elapsed = time.perf_counter() - began
    assert seen == allowed  # both versions were seen: the saves did happen
    assert mid_write > 0, "no kill landed inside a write: the test did not test"
    print(f"\n{rounds} SIGKILL rounds in {elapsed:.1f} s; {mid_write} killed mid-write")


SAVER = textwrap.dedent("""
    import sys
    from pathlib import Path
    from tests.test_save_faults import _saver_loop
    path = Path(sys.argv[1])
    a, b = (Path(name).read_text(encoding="utf-8") for name in sys.argv[2:4])
    print("ready", flush=True)
    _saver_loop(path, a, b)
""")


def test_sigkill_of_a_separate_interpreter(tmp_path):
    """The same with a fresh `python` process (no fork): fewer rounds, each pays start-up."""
    path = tmp_path / "courier_fleet.toml"
    path.write_bytes(OLD)
    (tmp_path / "a.txt").write_bytes(OLD)
    (tmp_path / "b.txt").write_text(NEW_TEXT, encoding="utf-8")
    allowed = {OLD, NEW_TEXT.encode("utf-8")}
    rng = random.Random(7)
    for _ in range(12):
        proc = subprocess.Popen([sys.executable, "-c", SAVER, str(path), str(tmp_path / "a.txt"),
                                 str(tmp_path / "b.txt")], cwd=ROOT, stdout=subprocess.PIPE)
        assert proc.stdout is not None and proc.stdout.readline() == b"ready\n"
        time.sleep(rng.uniform(0, 0.1))
        proc.send_signal(signal.SIGKILL)
        proc.wait()
        proc.stdout.close()
        _check_after_kill(path, allowed)
