"""The launch benchmark's harness reads the screen a user would see (not timed: speed is the
benchmark's job, `tests/benchmarks/bench_launch.py`).

A broken harness could report a figure for a screen that never showed: these runs check that it
reads the real pty screen, that the app laid itself out for the pty's size, that no screen means
no figure, and that no child process outlives a launch.
"""

from __future__ import annotations

import os
import sys
import tomllib

import pytest

pytest.importorskip("termios", reason="no POSIX terminals on this system")
pytest.importorskip("pyte", reason="pyte (in the test extra) is not installed")

from tests.benchmarks import bench_launch as bl  # noqa: E402
from tests.conftest import ROOT  # noqa: E402

pytestmark = pytest.mark.skipif(not bl.pty_available(),
                                reason="no pseudo-terminal available (os.openpty failed)")


def assert_gone(pid: int) -> None:
    """Neither the child nor anything in its process group (its own session) is left."""
    with pytest.raises(ProcessLookupError):
        os.kill(pid, 0)
    with pytest.raises(ProcessLookupError):
        os.killpg(pid, 0)


def test_launch_shows_the_courier_fleet_table_and_leaves_no_process(tmp_path):
    # A copy: the UI killed here leaves its in-use marker beside the file it opened.
    courier = tmp_path / "courier_fleet.toml"
    courier.write_bytes((ROOT / bl.COURIER).read_bytes())
    check, first, n = bl.small_check(courier)
    # The example holds 16 vehicles: counted with tomllib (the standard library), not the engine.
    toml = tomllib.loads(courier.read_text(encoding="utf-8"))
    assert len(toml["vehicles"]) == n == 16

    run = bl.launch(bl.planner_argv(courier), check, {"paint": bl.painted}, timeout=30)

    lines = run.text.splitlines()
    summary = next(line for line in lines if " vehicles: " in line)
    assert "16 vehicles: " in summary
    header = next(i for i, line in enumerate(lines) if line.split()[:1] == ["Vehicle"])
    assert lines[header + 1].split()[0] == first  # the engine's first in triage order, row one
    # The app laid itself out for 160x48, not a default 80x24: the title bar's right end is past
    # column 80 and the key bar is the 48th line.
    assert len(lines) == 48 and len(lines[0].rstrip()) > 80
    assert "quit" in lines[47]
    assert 0 < run.times["paint"] <= run.times["until"] < 30
    assert_gone(run.pid)


def test_no_figure_when_the_process_ends_before_its_screen_shows():
    with pytest.raises(bl.LaunchError, match="process ended") as err:
        bl.launch([sys.executable, "-c", "print('16 vehicles')"], lambda text: "KL-01" in text,
                  timeout=10)
    assert "16 vehicles" in str(err.value)  # what it did show, for the reader of the failure
    assert_gone(err.value.pid)


def test_no_figure_when_the_screen_never_shows_and_the_child_is_killed():
    sleeper = "import time; print('waiting', flush=True); time.sleep(60)"
    with pytest.raises(bl.LaunchError, match="not on screen after 1 s") as err:
        bl.launch([sys.executable, "-c", sleeper], lambda text: "KL-01" in text, timeout=1)
    assert "waiting" in str(err.value)
    assert_gone(err.value.pid)
