"""Broken files get their messages in time (and memory) linear in their size.

No timings: the work is counted. `sys.settrace` counts the Python lines run (deterministic, the
same on any machine) and `tracemalloc` the peak memory, for a case at n and at 4n; linear
growth gives a ratio near 4, quadratic near 16. The cases are the benchmark's
(`tests/benchmarks/bench_hostile.py`, which prints the seconds).
"""

from __future__ import annotations

import sys
import tracemalloc

import pytest

from planner.errors import PlannerError
from planner.locate import locate
from tests.benchmarks.bench_hostile import (
    deep_dotted_key,
    deep_header,
    long_string,
    messages,
    quoted_dates,
    quoted_odometers,
    unknown_keys,
)


def lines_run(text: str, read=messages) -> int:
    """Python lines executed while `read` (by default: to its messages) takes `text`."""
    count = 0

    def tracer(frame, event, arg):
        nonlocal count
        count += 1
        return tracer

    sys.settrace(tracer)
    try:
        read(text)
    finally:
        sys.settrace(None)
    return count


def peak_memory(text: str) -> int:
    tracemalloc.start()
    try:
        messages(text)
        return tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()


# Sizes where a quadratic step costs clearly more than the linear rest (at n, 4n).
CASES = [
    pytest.param(quoted_dates, 1000, id="quoted dates"),
    pytest.param(quoted_odometers, 100, id="quoted odometers"),
    pytest.param(deep_header, 1500, id="deep header"),
    pytest.param(deep_dotted_key, 1500, id="deep dotted key"),
    pytest.param(unknown_keys, 300, id="unknown keys"),
]


@pytest.mark.parametrize(("make", "n"), CASES)
def test_the_work_grows_linearly(make, n):
    small, large = make(n), make(4 * n)
    ratio = lines_run(large) / lines_run(small)
    assert ratio < 6, f"{ratio:.1f} times the lines for 4 times the input"


@pytest.mark.parametrize(("make", "n"), CASES)
def test_the_memory_grows_linearly(make, n):
    small, large = make(n), make(4 * n)
    ratio = peak_memory(large) / peak_memory(small)
    assert ratio < 6, f"{ratio:.1f} times the memory for 4 times the input"


def test_the_locator_passes_over_a_long_string_not_character_by_character():
    # 100 times the characters, the same Python lines in the locator. (tomllib itself walks a
    # string in Python, character by character: that part of the cost is the standard
    # library's, the floor the benchmark prints beside each case.)
    short, long = long_string(1), long_string(100)  # notes of 1,000 and 100,000 characters
    assert lines_run(long, locate) < 1.2 * lines_run(short, locate)


def test_the_locator_passes_over_long_comments_and_values_too():
    base = "schema = 1\n[fleet]\nname = 'x'\n"
    short = base + "# " + "c" * 1000 + "\nnear_limit_days = " + "1" * 1000 + "\n"
    long = base + "# " + "c" * 100_000 + "\nnear_limit_days = " + "1" * 100_000 + "\n"
    assert lines_run(long, locate) < 1.2 * lines_run(short, locate)
    # and it still finds the key after them: line 5 (schema, [fleet], name, the comment)
    assert locate(long)[("fleet", "near_limit_days")] == (5, 1)


def test_every_case_ends_in_messages_that_name_a_line():
    for make in (quoted_dates, quoted_odometers, deep_header, deep_dotted_key, long_string,
                 unknown_keys):
        err = messages(make(50))
        assert isinstance(err, PlannerError) and err.problems
        assert all(p.line is not None for p in err.problems), make.__name__


def test_a_key_too_deep_is_refused_before_it_is_parsed_naming_its_line():
    from tests.conftest import fleet_text
    # A fleet file's deepest key has four names (vehicles.belt_jobs, a job, its key): 33 is
    # past the limit of 32, which keeps tomllib's time (quadratic in a key's depth) low.
    text = fleet_text('[[vehicles]]\nid = "V1"\n' + ".".join(["a"] * 33) + " = 1\n")
    err = messages(text)
    [problem] = err.problems
    assert "more than 32 dotted names" in problem.message
    deep_line = next(k for k, line in enumerate(text.splitlines(), 1) if line.startswith("a.a"))
    assert problem.line == deep_line


def test_a_note_of_dotted_words_is_no_deep_key():
    from tests.conftest import make_fleet
    note = " ".join(["a.b"] * 300) + " " + ".".join(["w"] * 300)  # text, not a key
    fleet = make_fleet(f'[[vehicles]]\nid = "V1"\nin_service = 2024-01-01\nnotes = "{note}"\n')
    assert fleet.vehicles[0].notes == note
