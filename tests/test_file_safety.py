"""Files: nothing lost, no permission widened, no planted link followed.

Real file-system operations in a temporary folder. Run as root, a test can hand a file or a
link to another user (`os.chown` to uid 65534, "nobody" on most systems); where the suite runs
as an ordinary user those tests are skipped. Extended attributes and ACLs are probed on the
temporary folder first and the test is skipped, with the reason, where it does not take them.
"""

from __future__ import annotations

import datetime as dt
import os
import stat
import struct
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from planner import edit, fileio, fleetcache
from planner.cli import main
from planner.cli.common import emit
from planner.errors import PlannerError
from planner.fileio import backup_path, load_fleet, save_fleet_text
from planner.tui.session import Session
from tests.conftest import COURIER, ROOT

AS_OF = dt.date(2026, 12, 7)
OLD = COURIER.read_bytes()
NEW_TEXT = edit.add_reading(COURIER.read_text(encoding="utf-8"), "KL-03", dt.date(2026, 12, 5),
                            70500)
OTHER_UID = OTHER_GID = 65534  # "nobody" / "nogroup" (Debian's numbers; any other id would do)
as_root = pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() != 0,
                             reason="needs root to hand files to another user")


@pytest.fixture
def fleet(tmp_path: Path) -> Path:
    path = tmp_path / "courier_fleet.toml"
    path.write_bytes(OLD)
    return path


@pytest.fixture
def umask_022():
    old = os.umask(0o022)  # the usual default: new files 0644 unless told otherwise
    yield
    os.umask(old)


def session_of(path: Path) -> Session:
    session = Session(path, AS_OF)
    assert session.load()
    return session


def xattr_support(folder: Path, name: str, value: bytes) -> None:
    """Skip the test, saying why, when `folder` does not take the attribute `name`."""
    probe = folder / "xattr-probe"
    probe.write_bytes(b"")
    try:
        os.setxattr(probe, name, value)
    except (OSError, AttributeError) as exc:
        pytest.skip(f"{folder} does not take the extended attribute {name}: {exc}")
    finally:
        probe.unlink()


def posix_acl(entries: list[tuple[int, int, int]]) -> bytes:
    """The value of `system.posix_acl_access`: version 2, then (tag u16, perm u16, id u32)
    entries, little-endian (Linux include/uapi/linux/posix_acl_xattr.h; tags from
    include/uapi/linux/posix_acl.h: USER_OBJ 1, USER 2, GROUP_OBJ 4, MASK 0x10, OTHER 0x20)."""
    return struct.pack("<I", 2) + b"".join(struct.pack("<HHI", *e) for e in entries)


UNDEFINED_ID = 0xFFFFFFFF  # ACL_UNDEFINED_ID, for the entries that name no one


# -- 1. "Keep a copy" -------------------------------------------------------------------------

def test_keep_a_copy_never_overwrites_an_earlier_copy(fleet):
    session = session_of(fleet)
    session.text = NEW_TEXT
    first = session.save_copy()
    session.text = NEW_TEXT + "# second\n"
    second = session.save_copy()
    session.text = NEW_TEXT + "# third\n"
    third = session.save_copy()
    assert first.name == "courier_fleet.mine.toml"
    assert second.name == "courier_fleet.mine-2.toml"
    assert third.name == "courier_fleet.mine-3.toml"
    assert first.read_text(encoding="utf-8") == NEW_TEXT
    assert second.read_text(encoding="utf-8") == NEW_TEXT + "# second\n"
    assert fleet.read_bytes() == OLD


def test_keep_a_copy_never_follows_a_planted_link(fleet, tmp_path):
    victim = tmp_path / "victim.txt"
    victim.write_bytes(b"keep me\n")
    planted = fleet.with_name("courier_fleet.mine.toml")
    planted.symlink_to(victim)
    session = session_of(fleet)
    session.text = NEW_TEXT
    copy = session.save_copy()
    assert victim.read_bytes() == b"keep me\n"
    assert planted.is_symlink()
    assert copy.name == "courier_fleet.mine-2.toml" and not copy.is_symlink()
    assert copy.read_text(encoding="utf-8") == NEW_TEXT


def test_keep_a_copy_takes_the_fleet_files_mode(fleet, umask_022):
    fleet.chmod(0o600)
    session = session_of(fleet)
    session.text = NEW_TEXT
    assert stat.S_IMODE(session.save_copy().stat().st_mode) == 0o600


# -- 2. owner, group, mode, ACLs, extended attributes, hard links ------------------------------

@as_root
def test_a_save_keeps_owner_group_and_mode(fleet):
    os.chown(fleet, OTHER_UID, OTHER_GID)
    fleet.chmod(0o660)
    save_fleet_text(load_fleet(fleet), NEW_TEXT)
    info = fleet.stat()
    assert (info.st_uid, info.st_gid, stat.S_IMODE(info.st_mode)) == (OTHER_UID, OTHER_GID,
                                                                      0o660)
    assert fleet.read_text(encoding="utf-8") == NEW_TEXT
    kept = backup_path(fleet).stat()  # the backup holds the same contacts: the same hands
    assert (kept.st_uid, kept.st_gid, stat.S_IMODE(kept.st_mode)) == (OTHER_UID, OTHER_GID,
                                                                      0o660)


def test_a_save_keeps_extended_attributes(fleet):
    xattr_support(fleet.parent, "user.beltplan.note", b"x")
    os.setxattr(fleet, "user.beltplan.note", b"depot copy")
    save_fleet_text(load_fleet(fleet), NEW_TEXT)
    assert os.getxattr(fleet, "user.beltplan.note") == b"depot copy"


def test_a_save_keeps_a_posix_acl(fleet):
    fleet.chmod(0o640)
    acl = posix_acl([(1, 6, UNDEFINED_ID),      # owner rw-
                     (2, 4, OTHER_UID),         # user 65534 r--
                     (4, 4, UNDEFINED_ID),      # group r--
                     (0x10, 4, UNDEFINED_ID),   # mask r--
                     (0x20, 0, UNDEFINED_ID)])  # other ---
    xattr_support(fleet.parent, "system.posix_acl_access", acl)
    os.setxattr(fleet, "system.posix_acl_access", acl)
    save_fleet_text(load_fleet(fleet), NEW_TEXT)
    assert os.getxattr(fleet, "system.posix_acl_access") == acl
    assert stat.S_IMODE(fleet.stat().st_mode) == 0o640  # group bits = the mask r--


def test_a_save_refuses_to_split_a_hard_link(fleet, tmp_path):
    other = tmp_path / "second-name.toml"
    os.link(fleet, other)
    backup_path(fleet).write_bytes(b"an earlier backup")
    loaded = load_fleet(fleet)
    with pytest.raises(PlannerError) as caught:
        save_fleet_text(loaded, NEW_TEXT)
    assert "hard link" in caught.value.render()
    assert "nothing was saved" in caught.value.render().lower()
    assert fleet.stat().st_ino == other.stat().st_ino and fleet.stat().st_nlink == 2
    assert fleet.read_bytes() == OLD
    # Refused before anything is written: the earlier backup is still there.
    assert backup_path(fleet).read_bytes() == b"an earlier backup"


# -- 3. the backup's mode ---------------------------------------------------------------------

def test_the_backup_is_never_wider_than_the_fleet_file(fleet, umask_022):
    fleet.chmod(0o600)
    save_fleet_text(load_fleet(fleet), NEW_TEXT)
    assert stat.S_IMODE(backup_path(fleet).stat().st_mode) == 0o600


def test_an_earlier_wider_backup_does_not_lend_its_mode(fleet, umask_022):
    backup_path(fleet).write_bytes(b"older\n")
    backup_path(fleet).chmod(0o644)
    fleet.chmod(0o600)
    save_fleet_text(load_fleet(fleet), NEW_TEXT)
    assert stat.S_IMODE(backup_path(fleet).stat().st_mode) == 0o600


# -- 4. planted links -------------------------------------------------------------------------

def test_a_planted_backup_link_is_never_followed(fleet, tmp_path):
    victim = tmp_path / "elsewhere" / "victim.txt"
    victim.parent.mkdir()
    victim.write_bytes(b"keep me\n")
    backup_path(fleet).symlink_to(victim)
    save_fleet_text(load_fleet(fleet), NEW_TEXT)
    assert victim.read_bytes() == b"keep me\n"
    assert not backup_path(fleet).is_symlink()
    assert backup_path(fleet).read_bytes() == OLD


@as_root
def test_an_output_link_planted_by_another_user_is_refused(tmp_path):
    victim = tmp_path / "victim.txt"
    victim.write_bytes(b"keep me\n")
    shared = tmp_path / "shared"
    shared.mkdir()
    shared.chmod(0o1777)  # a shared folder like /tmp: anyone may put a name in it
    planted = shared / "plan.csv"
    planted.symlink_to(victim)
    os.lchown(planted, OTHER_UID, OTHER_GID)
    with pytest.raises(PlannerError) as caught:
        emit("a,b\n", str(planted))
    assert "link" in caught.value.render()
    assert victim.read_bytes() == b"keep me\n" and planted.is_symlink()


def test_an_output_link_of_ones_own_is_written_through(tmp_path):
    real = tmp_path / "reports" / "plan.csv"
    real.parent.mkdir()
    real.write_bytes(b"old\n")
    link = tmp_path / "plan.csv"
    link.symlink_to(real)
    emit("a,b\n", str(link))
    assert link.is_symlink() and real.read_bytes() == b"a,b\n"


# -- 5. outputs that are not regular files ----------------------------------------------------

def test_output_into_a_fifo_writes_into_it(tmp_path):
    fifo = tmp_path / "plan.fifo"
    os.mkfifo(fifo)
    reader = os.open(fifo, os.O_RDONLY | os.O_NONBLOCK)  # a reader is there before the write
    try:
        emit("a,b\n1,2\n", str(fifo))
        assert os.read(reader, 1000) == b"a,b\n1,2\n"
    finally:
        os.close(reader)
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)


def test_output_into_a_fifo_nobody_reads_is_refused_at_once(tmp_path):
    fifo = tmp_path / "plan.fifo"
    os.mkfifo(fifo)
    with pytest.raises(PlannerError) as caught:
        emit("a,b\n", str(fifo))
    assert "no program is reading" in caught.value.render()


@pytest.mark.skipif(os.geteuid() != 0, reason="needs root to plant files as another user")
@pytest.mark.parametrize("kind", ["fifo", "file"])
def test_an_output_planted_by_another_user_in_a_shared_folder_is_refused(tmp_path, kind):
    # A sticky, world-writable folder as /tmp (mode 1777): a FIFO or a 0666 file another user
    # put there would hand them the export (Linux's protected_fifos / protected_regular rule).
    shared = tmp_path / "shared"
    shared.mkdir()
    os.chmod(shared, 0o1777)
    planted = shared / "plan.csv"
    if kind == "fifo":
        os.mkfifo(planted)
    else:
        planted.write_bytes(b"")
    os.chmod(planted, 0o666)
    os.chown(planted, 65534, 65534)
    reader = os.open(planted, os.O_RDONLY | os.O_NONBLOCK) if kind == "fifo" else None
    try:
        with pytest.raises(PlannerError) as caught:
            emit("customer,phone\n", str(planted))
        assert "another user" in caught.value.render()
        if reader is not None:
            assert os.read(reader, 100) == b""  # no writer ever came: nothing was written
    finally:
        if reader is not None:
            os.close(reader)
    if kind == "file":
        assert planted.read_bytes() == b""


def beltplan(*args: str, stdin=None, stdout=subprocess.PIPE, shell_tail: str = ""):
    """Run the command line in a fresh interpreter, through a shell when piping."""
    cmd = " ".join([sys.executable, "-m", "planner", *args]) + shell_tail
    return subprocess.run(cmd, shell=True, cwd=ROOT, stdout=stdout, stderr=subprocess.PIPE,
                          timeout=120)


@pytest.mark.skipif(not os.path.exists("/dev/full"), reason="no /dev/full on this system")
@pytest.mark.parametrize("tail", [" > /dev/full", " >&-"], ids=["disk full", "closed"])
def test_standard_output_that_cannot_be_written_is_one_line_and_exit_2(tail):
    # /dev/full answers every write with ENOSPC (Linux null(4)/full(4) manual page).
    done = beltplan("list", str(COURIER), "--as-of", "2026-12-04", shell_tail=tail)
    err = done.stderr.decode()
    assert done.returncode == 2, err
    assert "Traceback" not in err and "standard output" in err and len(err.splitlines()) == 1


def test_output_to_dev_stdout_into_a_pipe(tmp_path):
    done = beltplan("schema", "-o", "/dev/stdout", shell_tail=" | cat")
    assert done.returncode == 0, done.stderr.decode()
    assert done.stdout.decode().lstrip().startswith("{")


def test_output_to_dev_stdout_appended_to_a_log_keeps_the_log(tmp_path):
    log = tmp_path / "run.log"
    log.write_bytes(b"earlier line\n")
    done = beltplan("schema", "-o", "/dev/stdout", shell_tail=f" >> {log}")
    assert done.returncode == 0, done.stderr.decode()
    text = log.read_text(encoding="utf-8")
    assert text.startswith("earlier line\n{")
    assert stat.S_ISREG(os.lstat(log).st_mode)


# -- 6. reading -------------------------------------------------------------------------------

def test_check_dev_zero_is_refused_at_once(capsys):
    assert main(["check", "/dev/zero"]) == 2
    assert "not a regular file" in capsys.readouterr().err


def test_a_fifo_with_no_writer_is_refused_not_waited_on(tmp_path):
    fifo = tmp_path / "fleet.toml"
    os.mkfifo(fifo)
    # In a fresh interpreter so that a hang fails the test instead of stopping the suite.
    done = subprocess.run([sys.executable, "-m", "planner", "check", str(fifo)], cwd=ROOT,
                          capture_output=True, timeout=60)
    assert done.returncode == 2
    assert b"not a regular file" in done.stderr


def test_the_size_cap_counts_the_bytes_read(monkeypatch):
    """/proc files report a size of 0 (proc(5)) yet hold text: the cap must still hold."""
    status = Path("/proc/self/status")
    if not status.is_file() or status.stat().st_size != 0:
        pytest.skip("no /proc with zero-size files here")
    monkeypatch.setattr(fileio, "MAX_FILE_BYTES", 64)  # /proc/self/status is over 64 bytes
    with pytest.raises(PlannerError, match="too large"):
        fileio.read_text(status)


def test_a_csv_that_is_not_a_regular_file_is_refused():
    with pytest.raises(PlannerError, match="not a regular file"):
        fileio.read_csv("/dev/zero")


# -- 7. the cache folder ----------------------------------------------------------------------

@pytest.fixture
def cache_env(monkeypatch, tmp_path):
    home = tmp_path / "home"
    home.mkdir()
    monkeypatch.delenv(fleetcache.ENV, raising=False)
    monkeypatch.delenv("XDG_CACHE_HOME", raising=False)
    monkeypatch.setenv("HOME", str(home))
    return home


def test_a_shared_cache_folder_keeps_its_mode(cache_env, monkeypatch, tmp_path):
    shared = tmp_path / "shared"
    shared.mkdir()
    shared.chmod(0o1777)
    monkeypatch.setenv(fleetcache.ENV, str(shared))
    base = fleetcache.folder()
    assert stat.S_IMODE(shared.stat().st_mode) == 0o1777
    assert base is not None and base.parent == shared  # a private folder inside it
    assert stat.S_IMODE(base.stat().st_mode) == 0o700


@as_root
def test_a_cache_folder_of_another_user_is_not_touched(cache_env, monkeypatch, tmp_path):
    theirs = tmp_path / "theirs"
    theirs.mkdir(mode=0o755)
    theirs.chmod(0o755)
    os.chown(theirs, OTHER_UID, OTHER_GID)
    monkeypatch.setenv(fleetcache.ENV, str(theirs))
    assert fleetcache.folder() is None  # not writable for the user... and not the user's
    assert list(theirs.iterdir()) == [] and stat.S_IMODE(theirs.stat().st_mode) == 0o755


def test_a_relative_xdg_cache_home_is_ignored(cache_env, monkeypatch, tmp_path):
    work = tmp_path / "work"
    work.mkdir()
    monkeypatch.chdir(work)
    monkeypatch.setenv("XDG_CACHE_HOME", "relative-cache")
    base = fleetcache.folder()
    assert base == cache_env / ".cache" / "beltplan"  # the XDG spec's fallback
    assert list(work.iterdir()) == []


def test_no_cache_when_home_is_empty(cache_env, monkeypatch, tmp_path):
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("HOME", "")
    before = sorted(p.name for p in tmp_path.iterdir())
    assert fleetcache.folder() is None
    assert sorted(p.name for p in tmp_path.iterdir()) == before


@as_root
def test_a_planted_link_at_the_default_place_is_not_followed(cache_env, tmp_path):
    target = tmp_path / "planted-target"
    target.mkdir()
    target.chmod(0o755)
    (cache_env / ".cache").mkdir()
    link = cache_env / ".cache" / "beltplan"
    link.symlink_to(target)
    os.lchown(link, OTHER_UID, OTHER_GID)
    base = fleetcache.folder()
    assert base is None or target not in [base, *base.parents]
    assert list(target.iterdir()) == [] and stat.S_IMODE(target.stat().st_mode) == 0o755


# -- 8. leftovers of a killed save ------------------------------------------------------------

KILLED_SAVE = """\
import os, sys
from planner import fileio
def die(*args):
    os._exit(9)  # killed between the write and the rename
os.replace = die
fileio.write_atomic(sys.argv[1], b"half a save")
"""


def test_the_leftover_of_a_dead_save_goes_at_the_next_read(fleet):
    done = subprocess.run([sys.executable, "-c", KILLED_SAVE, str(fleet)], cwd=ROOT,
                          timeout=60)
    assert done.returncode == 9
    left = [p for p in fleet.parent.iterdir() if p.name.endswith(fileio.TEMP_SUFFIX)]
    assert len(left) == 1  # the process is gone: its temporary file is not in use
    load_fleet(fleet)
    assert [p for p in fleet.parent.iterdir() if p.name.endswith(fileio.TEMP_SUFFIX)] == []
    assert fleet.read_bytes() == OLD


def test_a_read_leaves_other_users_and_other_programs_files_alone(fleet):
    # Old files beside the fleet file that match `.NAME.*.tmp` but are not a leftover of ours:
    # another program's name, and a name of our form that belongs to another user.
    theirs = fleet.parent / f".{fleet.name}.notes.tmp"
    other_user = fleet.parent / f".{fleet.name}.abc123-1.abcd1234.tmp"
    for path in (theirs, other_user):
        path.write_bytes(b"not ours")
        os.utime(path, (0, 0))  # far older than ten minutes
    if os.geteuid() == 0:
        os.chown(other_user, 65534, 65534)
    load_fleet(fleet)
    assert theirs.read_bytes() == b"not ours"
    if os.geteuid() == 0:
        assert other_user.read_bytes() == b"not ours"


# -- 9. names near the file system's limit ----------------------------------------------------

def test_a_fleet_file_with_a_name_of_255_bytes_can_be_saved(tmp_path):
    # NAME_MAX is 255 bytes on Linux's common file systems (ext4, tmpfs, xfs: from memory);
    # "é" is two bytes in UTF-8, so the name is 125 * 2 + 5 = 255 bytes.
    name = "é" * 125 + ".toml"
    assert len(name.encode("utf-8")) == 255
    path = tmp_path / name
    path.write_bytes(OLD)
    save_fleet_text(load_fleet(path), NEW_TEXT)
    assert path.read_text(encoding="utf-8") == NEW_TEXT
    assert backup_path(path).read_bytes() == OLD
    assert len(os.fsencode(backup_path(path).name)) <= 255
    session = session_of(path)
    session.text = NEW_TEXT + "# mine\n"
    copy = session.save_copy()
    assert copy.read_text(encoding="utf-8") == NEW_TEXT + "# mine\n"


# -- 10. the losing run of two concurrent `readings` ------------------------------------------

def test_readings_that_were_not_saved_are_not_said_added_on_stdout(fleet, monkeypatch,
                                                                   capsys):
    from planner.cli import cmd_readings

    real_save = cmd_readings.save_fleet_text

    def other_run_saved_first(loaded, text, *args):
        fleet.write_bytes(OLD + b"\n# another run's save\n")
        return real_save(loaded, text, *args)

    monkeypatch.setattr(cmd_readings, "save_fleet_text", other_run_saved_first)
    code = main(["readings", str(fleet), "--from",
                 str(ROOT / "fleet_examples" / "weekly_readings.csv")])
    out = capsys.readouterr().out
    assert code == 2
    assert " added," not in out and "  added:" not in out
    assert "nothing was saved" in out.lower()


SAVE_AS_ANOTHER_USER = """\
import sys
from pathlib import Path
from planner.errors import PlannerError
from planner.fileio import load_fleet, save_fleet_text, write_new
path = Path(sys.argv[1])
loaded = load_fleet(path)
try:
    save_fleet_text(loaded, loaded.text + "# theirs\\n")
except PlannerError as err:
    print(err.render())
print(write_new(path.with_name("fleet.mine.toml"), b"# theirs\\n", like=path))
"""


@as_root
def test_a_save_that_would_hand_the_file_to_the_saver_is_refused():
    """As uid 65534, a member of group 65534 only, on a root-owned 0660 file of that group."""
    if not Path("/usr/bin/setpriv").exists():
        pytest.skip("no setpriv (util-linux) to run as another user")
    # pytest's own temporary folders are private to root: a folder the other user can reach.
    with tempfile.TemporaryDirectory() as name:
        folder = Path(name)
        folder.chmod(0o777)
        refused_save_and_own_copy(folder)


def refused_save_and_own_copy(tmp_path: Path) -> None:
    path = tmp_path / "fleet.toml"
    path.write_bytes(OLD)
    os.chown(path, 0, OTHER_GID)
    path.chmod(0o660)
    done = subprocess.run(["/usr/bin/setpriv", f"--reuid={OTHER_UID}", f"--regid={OTHER_GID}",
                           "--clear-groups", sys.executable, "-c", SAVE_AS_ANOTHER_USER,
                           str(path)], cwd=ROOT, capture_output=True, text=True, timeout=60,
                          env={**os.environ, "BELTPLAN_CACHE": "off"})
    assert done.returncode == 0, done.stderr
    assert "belongs to another user" in done.stdout and "nothing was saved" in done.stdout
    assert path.read_bytes() == OLD and not backup_path(path).exists()
    info = path.stat()
    assert (info.st_uid, info.st_gid, stat.S_IMODE(info.st_mode)) == (0, OTHER_GID, 0o660)
    copy = tmp_path / "fleet.mine.toml"  # the saver's own, in the group it could keep
    mine = copy.stat()
    assert (mine.st_uid, mine.st_gid, stat.S_IMODE(mine.st_mode)) == (OTHER_UID, OTHER_GID,
                                                                      0o660)


@given(st.text(st.characters(blacklist_categories=("Cs",), blacklist_characters="/\x00"),
               min_size=1, max_size=255))
@settings(max_examples=300, deadline=None)
def test_backup_and_temporary_names_always_fit(name):
    raw = os.fsencode(name)
    assume(len(raw) <= fileio.NAME_MAX and name not in (".", ".."))
    path = Path("/x") / name
    backup = os.fsencode(backup_path(path).name)
    assert len(backup) <= fileio.NAME_MAX
    assert backup.endswith(b".bak")
    if len(raw) + 4 <= fileio.NAME_MAX:
        assert backup == raw + b".bak"  # a name with room keeps its plain backup name
    # mkstemp adds 8 random characters (CPython Lib/tempfile.py, _RandomNameSequence).
    temp = os.fsencode(fileio._temp_prefix(path)) + b"x" * 8 + fileio.TEMP_SUFFIX.encode()
    assert len(temp) <= fileio.NAME_MAX


@given(st.text("ab", min_size=252, max_size=255), st.text("ab", min_size=252, max_size=255))
def test_two_long_names_never_share_a_backup(one, other):
    assume(one != other)
    assert backup_path(Path(one)) != backup_path(Path(other))
