"""The in-use marker (planner/inuse.py): created beside the file, seen by a second claim, stale
ones taken over, foreign ones kept, only our own released, no marker where none can be written,
and exactly one winner when two processes claim at once."""

from __future__ import annotations

import datetime as dt
import errno
import importlib.metadata
import json
import multiprocessing
import os
import subprocess
import sys
from pathlib import Path

import pytest

from planner import inuse
from planner.cli import main as cli_main
from planner.inuse import Claim, Holder, Unmarked
from tests.conftest import COURIER

NOW = dt.datetime(2026, 12, 7, 9, 15, tzinfo=dt.UTC)
HERE = "workshop-pc"


def fleet(tmp_path: Path, name: str = "fleet.toml") -> Path:
    path = tmp_path / name
    path.write_text('schema = 1\n[fleet]\nname = "Test"\n')
    return path


def record(pid: int, host: str = HERE, user: str = "ana", token: str = "a1",
           now: dt.datetime = NOW) -> inuse.Record:
    return inuse.new_record(now, pid=pid, host=host, user=user, token=token)


def dead_pid() -> int:
    """The id of a process that has ended (reused this soon only by a very busy system)."""
    child = subprocess.Popen([sys.executable, "-c", "pass"])
    child.wait()
    return child.pid


def alive_pid() -> int:
    return os.getppid()  # the process that started the tests runs as long as they do


def marker_of(path: Path) -> Path:
    return path.with_name(f".{path.name}.in-use")


def test_a_claim_creates_the_marker_beside_the_file_with_who_and_since(tmp_path):
    path = fleet(tmp_path)
    got = inuse.claim(path, record(pid=4242))
    assert isinstance(got, Claim)
    marker = tmp_path / ".fleet.toml.in-use"  # the name the README gives
    assert got.marker == marker
    data = json.loads(marker.read_bytes())  # read by the standard library, not our parser
    assert data["user"] == "ana" and data["host"] == HERE and data["pid"] == 4242
    assert data["opened_at"] == "2026-12-07T09:15:00Z"  # ISO 8601, UTC
    assert data["version"] == importlib.metadata.version("beltplan")  # pyproject's version
    mode = marker.stat().st_mode & 0o777
    umask = os.umask(0)
    os.umask(umask)
    assert mode == 0o644 & ~umask
    assert path.read_text() == 'schema = 1\n[fleet]\nname = "Test"\n'  # the file untouched


def test_the_marker_goes_beside_the_real_file_when_opened_by_a_link(tmp_path):
    (tmp_path / "data").mkdir()
    real = fleet(tmp_path / "data")
    link = tmp_path / "link.toml"
    link.symlink_to(real)
    got = inuse.claim(link, record(pid=os.getpid()))
    assert isinstance(got, Claim) and got.marker == tmp_path / "data" / ".fleet.toml.in-use"
    assert isinstance(inuse.claim(real, record(pid=alive_pid(), token="b2")), Holder)


def test_a_second_claim_sees_who_holds_it_and_leaves_the_marker_alone(tmp_path):
    path = fleet(tmp_path)
    theirs = record(pid=alive_pid(), user="ben", token="b2")
    assert isinstance(inuse.claim(path, theirs), Claim)
    before = marker_of(path).read_bytes()
    got = inuse.claim(path, record(pid=os.getpid()))
    assert isinstance(got, Holder)
    assert (got.record.user, got.record.host, got.record.pid) == ("ben", HERE, alive_pid())
    assert got.same_host
    assert got.who() == f"ben@{HERE} (process {alive_pid()})"
    assert marker_of(path).read_bytes() == before
    assert inuse.holder(path, host=HERE) == got  # what the command line asks


def test_the_same_window_claiming_again_keeps_its_claim(tmp_path):
    path = fleet(tmp_path)
    first = inuse.claim(path, record(pid=os.getpid(), token="w1"))
    later = record(pid=os.getpid(), token="w1", now=NOW + dt.timedelta(minutes=5))
    again = inuse.claim(path, later)
    assert isinstance(again, Claim) and isinstance(first, Claim)
    assert again.record.opened_at == NOW  # the marker on disk, not rewritten
    # Another window of the same process (another token) is someone else.
    assert isinstance(inuse.claim(path, record(pid=os.getpid(), token="w2")), Holder)


def test_a_marker_of_an_ended_process_on_this_host_is_taken_over(tmp_path):
    path = fleet(tmp_path)
    marker_of(path).write_bytes(record(pid=dead_pid(), user="ben", token="old").to_bytes())
    got = inuse.claim(path, record(pid=4242))
    assert isinstance(got, Claim)
    assert json.loads(marker_of(path).read_bytes())["pid"] == 4242
    assert sorted(p.name for p in tmp_path.iterdir()) == [".fleet.toml.in-use", "fleet.toml"]
    assert inuse.holder(path, host=HERE, alive=lambda pid: pid != 4242) is None  # stale: none


def test_a_marker_from_another_host_is_kept_and_its_process_never_probed(tmp_path):
    path = fleet(tmp_path)
    theirs = record(pid=dead_pid(), host="office-laptop", user="ben", token="b2",
                    now=NOW - dt.timedelta(hours=3))
    marker_of(path).write_bytes(theirs.to_bytes())
    before = marker_of(path).read_bytes()

    def alive(pid: int) -> bool:
        raise AssertionError("a pid of another computer means nothing here")

    got = inuse.claim(path, record(pid=4242), alive=alive)
    assert isinstance(got, Holder) and not got.same_host
    assert got.record.host == "office-laptop"
    assert got.since(NOW, tz=dt.UTC) == "06:15, 3 hours ago"  # 09:15 − 3 h
    assert marker_of(path).read_bytes() == before
    assert inuse.holder(path, host=HERE, alive=alive) is not None


def test_host_names_match_whatever_their_case(tmp_path):
    path = fleet(tmp_path)
    marker_of(path).write_bytes(record(pid=dead_pid(), host="WORKSHOP-PC").to_bytes())
    assert isinstance(inuse.claim(path, record(pid=4242, host="workshop-pc", token="x")), Claim)


@pytest.mark.parametrize("content", [
    b"",  # created, then the process died before writing
    b'{\n "user": "ben",\n "host": "workshop-pc",\n "pid": 12',  # cut short
    b"\x00\x00\x00\x00",  # a crash's zero-filled block
    b'{"user": "ben", "host": "workshop-pc", "pid": true, "opened_at": "2026-12-07T09:00:00Z",'
    b' "version": "0.1.0", "token": "x"}',  # a pid that is no number
    b'{"user": "ben", "host": "workshop-pc", "pid": 77, "opened_at": "2026-12-07T09:00:00",'
    b' "version": "0.1.0", "token": "x"}',  # a time with no zone
    b"[1, 2, 3]",
], ids=["empty", "truncated", "zeros", "bool-pid", "naive-time", "not-an-object"])
def test_a_marker_that_is_no_record_is_stale(tmp_path, content):
    path = fleet(tmp_path)
    marker_of(path).write_bytes(content)
    assert inuse.holder(path, host=HERE, alive=lambda pid: True) is None
    got = inuse.claim(path, record(pid=4242), alive=lambda pid: True)
    assert isinstance(got, Claim)
    assert json.loads(marker_of(path).read_bytes())["pid"] == 4242


def test_release_removes_only_our_own_marker(tmp_path):
    path = fleet(tmp_path)
    ours = inuse.claim(path, record(pid=os.getpid(), token="ours"))
    assert isinstance(ours, Claim)
    theirs = inuse.take_over(path, record(pid=alive_pid(), user="ben", token="theirs"))
    assert isinstance(theirs, Claim)
    before = marker_of(path).read_bytes()
    assert inuse.release(ours) is False
    assert marker_of(path).read_bytes() == before  # theirs, still there
    assert sorted(p.name for p in tmp_path.iterdir()) == [".fleet.toml.in-use", "fleet.toml"]
    assert inuse.release(theirs) is True
    assert not marker_of(path).exists()
    assert inuse.release(theirs) is False  # gone already: no error either


def test_releasing_a_marker_taken_over_leaves_it_in_place(tmp_path):
    """Found in review: moving another window's marker aside, even briefly, let a third
    window's claim slip in. Released, it is not moved at all (the same file, not a copy)."""
    path = fleet(tmp_path)
    ours = inuse.claim(path, record(pid=os.getpid(), token="ours"))
    inuse.take_over(path, record(pid=alive_pid(), user="ben", token="theirs"))
    before = os.stat(marker_of(path))
    assert inuse.release(ours) is False
    after = os.stat(marker_of(path))
    assert (after.st_ino, after.st_ctime_ns) == (before.st_ino, before.st_ctime_ns)


def test_release_compares_the_whole_record_not_only_the_process(tmp_path):
    path = fleet(tmp_path)
    ours = inuse.claim(path, record(pid=os.getpid(), token="one"))
    assert isinstance(ours, Claim)
    other = Claim(ours.marker, record(pid=os.getpid(), token="two"))
    assert inuse.release(other) is False and marker_of(path).exists()


def test_take_over_makes_a_live_holders_marker_ours(tmp_path):
    path = fleet(tmp_path)
    inuse.claim(path, record(pid=alive_pid(), user="ben", token="theirs"))
    got = inuse.take_over(path, record(pid=4242, token="ours"))
    assert isinstance(got, Claim)
    data = json.loads(marker_of(path).read_bytes())
    assert (data["pid"], data["token"]) == (4242, "ours")


def _refuse_markers(monkeypatch, code: int) -> None:
    real_open = os.open

    def fake_open(path, flags, *args, **kwargs):
        if str(path).endswith(".in-use") and flags & os.O_CREAT:
            raise OSError(code, os.strerror(code), str(path))
        return real_open(path, flags, *args, **kwargs)

    monkeypatch.setattr(os, "open", fake_open)


@pytest.mark.parametrize("code, words", [(errno.EROFS, "read-only disk"),
                                         (errno.EACCES, "no permission to write"),
                                         (errno.ENOSPC, "disk is full")])
def test_a_folder_that_takes_no_marker_gives_none_and_no_error(tmp_path, monkeypatch, code,
                                                               words):
    path = fleet(tmp_path)
    _refuse_markers(monkeypatch, code)
    got = inuse.claim(path, record(pid=4242))
    assert isinstance(got, Unmarked) and words in got.reason
    assert isinstance(inuse.take_over(path, record(pid=4242)), Unmarked)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["fleet.toml"]
    assert inuse.holder(path) is None


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() == 0,
                    reason="permissions do not bind root")
def test_a_read_only_folder_gives_no_marker_and_no_error(tmp_path):
    folder = tmp_path / "share"
    folder.mkdir()
    path = fleet(folder)
    folder.chmod(0o555)
    try:
        got = inuse.claim(path, record(pid=4242))
        assert isinstance(got, Unmarked) and "no permission to write" in got.reason
        assert [p.name for p in folder.iterdir()] == ["fleet.toml"]
    finally:
        folder.chmod(0o755)


def test_a_marker_that_is_a_folder_gives_no_marker_and_no_error(tmp_path):
    path = fleet(tmp_path)
    marker_of(path).mkdir()
    assert isinstance(inuse.claim(path, record(pid=4242)), Unmarked)
    assert marker_of(path).is_dir()  # not removed: it is not a marker we understand
    assert inuse.holder(path) is None


def test_since_is_local_clock_time_then_how_long_ago():
    held = Holder(Path("m"), record(pid=1), True)
    assert held.since(NOW + dt.timedelta(minutes=12), tz=dt.UTC) == "09:15, 12 minutes ago"
    assert held.since(NOW + dt.timedelta(seconds=59), tz=dt.UTC) == \
        "09:15, less than a minute ago"
    # 09:15 UTC is 10:15 at UTC+1; the next day, the date is shown too (25 h = 1 day 1 hour).
    plus_one = dt.timezone(dt.timedelta(hours=1))
    assert held.since(NOW + dt.timedelta(hours=25), tz=plus_one) == \
        "2026-12-07 10:15, 25 hours ago"
    assert held.since(NOW + dt.timedelta(days=3, hours=2), tz=dt.UTC).endswith(", 3 days ago")


@pytest.mark.parametrize("seconds, words", [
    (0, "less than a minute ago"), (60, "1 minute ago"), (119 * 60, "119 minutes ago"),
    (120 * 60, "2 hours ago"), (47 * 3600 + 3599, "47 hours ago"), (48 * 3600, "2 days ago"),
    (-30, "less than a minute ago"), (-3600, "by a clock ahead of this computer's"),
])
def test_ago_words(seconds, words):
    assert inuse.ago(seconds) == words


def test_the_marker_module_loads_no_ui_and_no_engine():
    code = ("import sys, planner.inuse; print(','.join(m for m in ('textual', 'planner.tui', "
            "'planner.cli', 'planner.fleet', 'pydantic') if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.strip()
    assert out == ""


def test_a_pid_probe_tells_a_running_process_from_an_ended_one():
    assert inuse.pid_alive(os.getpid()) is True
    assert inuse.pid_alive(dead_pid()) is False


# -- two processes at once -----------------------------------------------------------------------
ROUNDS = 20


def _race(folder: str, barrier, results, who: int) -> None:
    for n in range(ROUNDS):
        me = inuse.new_record(NOW, host=HERE, token=f"p{who}")
        barrier.wait()
        got = inuse.claim(Path(folder) / f"fleet{n}.toml", me)
        results.put((n, who, type(got).__name__))
    barrier.wait()  # neither ends (making its markers stale) before the other has claimed


def _run_race(folder: Path) -> dict[int, list[str]]:
    ctx = multiprocessing.get_context("spawn")  # no fork of a process that may hold threads
    barrier, results = ctx.Barrier(2), ctx.Queue()
    workers = [ctx.Process(target=_race, args=(str(folder), barrier, results, k))
               for k in (0, 1)]
    for w in workers:
        w.start()
    outcome: dict[int, list[str]] = {}
    for _ in range(2 * ROUNDS):
        n, _who, kind = results.get(timeout=60)
        outcome.setdefault(n, []).append(kind)
    for w in workers:
        w.join(timeout=60)
        assert w.exitcode == 0
    return outcome


def test_two_processes_claiming_at_once_give_exactly_one_winner(tmp_path):
    for n in range(ROUNDS):
        fleet(tmp_path, f"fleet{n}.toml")
    outcome = _run_race(tmp_path)
    assert {n: sorted(kinds) for n, kinds in outcome.items()} == \
        {n: ["Claim", "Holder"] for n in range(ROUNDS)}
    for n in range(ROUNDS):  # the marker holds the winner's whole record
        assert inuse.parse_record(marker_of(tmp_path / f"fleet{n}.toml").read_bytes())


def test_two_processes_taking_over_one_stale_marker_give_exactly_one_winner(tmp_path):
    stale = record(pid=dead_pid(), token="crashed").to_bytes()
    for n in range(ROUNDS):
        marker_of(fleet(tmp_path, f"fleet{n}.toml")).write_bytes(stale)
    outcome = _run_race(tmp_path)
    assert {n: sorted(kinds) for n, kinds in outcome.items()} == \
        {n: ["Claim", "Holder"] for n in range(ROUNDS)}
    leftovers = [p.name for p in tmp_path.iterdir() if p.name.endswith(".gone")]
    assert leftovers == []


# -- `beltplan readings` and a window that has the file open --------------------------------------
READING = "Vehicle,Date,Odometer\nKL-01,2026-11-28,224450\n"  # after 224,300 on 2026-11-27


def readings(tmp_path: Path, capsys, *extra: str) -> tuple[int, str, str, Path]:
    path = tmp_path / "courier_fleet.toml"
    path.write_bytes(COURIER.read_bytes())
    export = tmp_path / "week.csv"
    export.write_text(READING, encoding="utf-8")
    return (*_run(capsys, "readings", str(path), "--from", str(export), *extra), path)


def _run(capsys, *argv: str) -> tuple[int, str, str]:
    code = cli_main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _window(path: Path, pid: int, host: str | None = None) -> bytes:
    me = inuse.new_record(dt.datetime.now(dt.UTC) - dt.timedelta(minutes=12), pid=pid,
                          host=host, user="ben", token="ui")
    marker_of(path).write_bytes(me.to_bytes())
    return marker_of(path).read_bytes()


def test_readings_notes_a_window_that_has_the_file_open(tmp_path, capsys):
    path = tmp_path / "courier_fleet.toml"
    path.write_bytes(COURIER.read_bytes())
    before = _window(path, alive_pid())
    export = tmp_path / "week.csv"
    export.write_text(READING, encoding="utf-8")
    code, out, err = _run(capsys, "readings", str(path), "--from", str(export))
    assert code == 0 and "Saved" in out and "odometer = 224450" in path.read_text()
    lines = err.splitlines()
    assert len(lines) == 1  # one line
    assert lines[0].startswith(f"beltplan: note: {path} is open in a beltplan window of ben@")
    assert f"(process {alive_pid()}) since " in lines[0]
    assert "12 minutes ago" in lines[0] and "will have to reload" in lines[0]
    assert marker_of(path).read_bytes() == before  # the command leaves the marker alone


def test_readings_says_nothing_without_a_live_window(tmp_path, capsys):
    code, out, err, path = readings(tmp_path, capsys)
    assert code == 0 and "Saved" in out and err == ""
    # A marker a crashed window left behind is no window.
    path.write_bytes(COURIER.read_bytes())
    _window(path, dead_pid())
    code, out, err = _run(capsys, "readings", str(path), "--from", str(tmp_path / "week.csv"))
    assert code == 0 and "Saved" in out and err == ""


def test_readings_dry_run_writes_nothing_and_notes_nothing(tmp_path, capsys):
    path = tmp_path / "courier_fleet.toml"
    path.write_bytes(COURIER.read_bytes())
    _window(path, alive_pid())
    export = tmp_path / "week.csv"
    export.write_text(READING, encoding="utf-8")
    code, out, err = _run(capsys, "readings", str(path), "--from", str(export), "--dry-run")
    assert code == 0 and "Dry run" in out and err == ""
    assert path.read_bytes() == COURIER.read_bytes()
