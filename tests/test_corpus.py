"""Bad input, systematically: a corpus of broken fleet files and the message each must give.

`tests/corpus/broken/` holds one file per problem, all made from the same invented two-van
fleet; `tests/corpus/expected.toml` says, per file, a fragment of the message, the line it must
name, and the vehicle, field and fix where there are some. The expected lines were read off the
files by hand (`cat -n`), not from the locator. `tests/corpus/accepted/` holds files that look
odd but are valid (a UTF-8 byte-order mark, Windows line ends, a label full of markup, …).

Also: bad command-line values (dates, words, formats) and output paths that cannot be written.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

from planner.cli import main
from planner.errors import PlannerError
from planner.fileio import load_fleet
from tests.conftest import COURIER, ROOT

CORPUS = Path(__file__).resolve().parent / "corpus"
BROKEN = CORPUS / "broken"
ACCEPTED = CORPUS / "accepted"
EXPECTED = tomllib.loads((CORPUS / "expected.toml").read_text(encoding="utf-8"))["broken"]
BASE = CORPUS / "base.toml"  # the valid fleet every corpus file is made from


def corpus_file(name: str) -> Path:
    return BROKEN / EXPECTED[name].get("file", f"{name}.toml")


def run_cli(capsys, *argv: str) -> tuple[int, str, str]:
    """`beltplan …` in this process; argparse's own errors exit through SystemExit."""
    try:
        code = main(list(argv))
    except SystemExit as stop:
        code = stop.code if isinstance(stop.code, int) else 1
    out, err = capsys.readouterr()
    return code, out, err


def problem_line(err: str, fragment: str) -> tuple[str, str]:
    """The rendered problem holding `fragment`, and its 'fix:' line ('' when none)."""
    lines = err.splitlines()
    for k, line in enumerate(lines):
        if fragment in line:
            fix = lines[k + 1] if k + 1 < len(lines) and lines[k + 1].startswith("    fix:") \
                else ""
            return line, fix
    raise AssertionError(f"{fragment!r} not in:\n{err}")


# -- the corpus -------------------------------------------------------------------------------

def test_the_corpus_and_its_manifest_match():
    on_disk = {p.name for p in BROKEN.iterdir()}
    listed = {corpus_file(name).name for name in EXPECTED}
    assert on_disk == listed
    assert len(EXPECTED) >= 30


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_check_gives_the_expected_message(name, capsys):
    case = EXPECTED[name]
    path = corpus_file(name)
    code, out, err = run_cli(capsys, "check", str(path))
    assert code == 2, err
    assert out == ""
    assert "Traceback" not in err
    assert case.get("title", "") in err.splitlines()[0]
    line, fix = problem_line(err, case["fragment"])
    if "line" in case:
        # `file:line:` or `file:line:column:` opens the problem.
        assert line.startswith((f"beltplan: {path}:{case['line']}:", f"{path}:{case['line']}:")), \
            line
    if "vehicle" in case:
        assert f"vehicle {case['vehicle']}" in line, line
    if "field" in case:
        assert f"field {case['field']}" in line, line
    if "hint" in case:
        assert case["hint"] in (fix or err), err


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_every_problem_says_where_and_how_to_fix_it(name):
    with pytest.raises(PlannerError) as caught:
        load_fleet(corpus_file(name))
    err = caught.value
    assert err.title and (err.message or err.problems)
    for p in err.problems:
        assert p.hint or err.message, p.render()  # what to do, on the problem or the error
        assert p.file == str(corpus_file(name))
        if "line" in EXPECTED[name]:
            assert p.line is not None, p.render()


@pytest.mark.parametrize("name", ["syntax_unclosed_string", "binary", "utf16", "latin1",
                                  "deep_nesting", "huge_line", "duplicate_ids", "empty"])
def test_check_in_a_fresh_process(name):
    """The real entry point: exit status 2, the message on stderr, no traceback."""
    case = EXPECTED[name]
    run = subprocess.run([sys.executable, "-m", "planner", "check", str(corpus_file(name))],
                         capture_output=True, text=True, cwd=ROOT, timeout=60)
    assert run.returncode == 2, run.stderr
    assert "Traceback" not in run.stderr
    assert case["fragment"] in run.stderr
    assert run.stdout == ""


def test_an_emptied_file_points_to_its_backup(tmp_path, capsys):
    """A file emptied by accident (a failed copy, a zero-byte sync) names the last save's copy."""
    fleet = tmp_path / "fleet.toml"
    fleet.write_text("")
    (tmp_path / "fleet.toml.bak").write_bytes(COURIER.read_bytes())
    code, _, err = run_cli(capsys, "check", str(fleet))
    assert code == 2
    assert f"The copy kept at the last save is {fleet}.bak" in err


def test_deep_nesting_is_refused_however_deep_the_stack_already_is():
    """The nesting limit comes from the recursion limit: near it, the error must still be ours."""
    path = corpus_file("deep_nesting")

    def nested(depth: int) -> PlannerError:
        if depth:
            return nested(depth - 1)
        with pytest.raises(PlannerError) as caught:
            load_fleet(path)
        return caught.value

    for depth in (0, 200, sys.getrecursionlimit() - 150):
        assert "nested too deeply" in nested(depth).title


# -- odd but valid ----------------------------------------------------------------------------

def test_every_accepted_file_checks_clean(capsys):
    names = sorted(p.name for p in ACCEPTED.iterdir())
    assert len(names) >= 6
    for name in names:
        code, out, err = run_cli(capsys, "check", str(ACCEPTED / name))
        assert code == 0, (name, err)
        assert "valid: 2 vehicles" in out, name


def test_a_bom_or_windows_line_ends_change_nothing():
    """A UTF-8 byte-order mark is accepted (and remembered for the save); CRLF too."""
    plain = load_fleet(BASE).fleet
    bom = load_fleet(ACCEPTED / "bom.toml")
    assert bom.bom and not bom.text.startswith("\ufeff")
    crlf = load_fleet(ACCEPTED / "crlf.toml")
    assert bom.fleet == plain and crlf.fleet == plain
    assert load_fleet(ACCEPTED / "no_schema.toml").fleet == plain  # schema defaults to 1


def test_missing_fleet_table_means_the_documented_defaults():
    fleet = load_fleet(ACCEPTED / "no_fleet_table.toml").fleet
    assert fleet.fleet.name == "" and fleet.unit == "km"  # README reference: km by default
    assert len(fleet.vehicles) == 2


MARKUP = '[bold red]Van 1[/] <b>&amp;</b> ${HOME} %s {0} `x` \\e[31m =HYPERLINK("a")'


def test_a_label_full_of_markup_is_kept_and_shown_literally(capsys):
    path = ACCEPTED / "markup_label.toml"
    # The TOML 1.0 spec: a literal string ('…') keeps every character, backslashes included.
    assert tomllib.loads(path.read_text(encoding="utf-8"))["vehicles"][0]["label"] == MARKUP
    assert load_fleet(path).fleet.vehicles[0].label == MARKUP
    code, out, _ = run_cli(capsys, "list", str(path), "--as-of", "2026-12-07",
                           "--format", "json")
    assert code == 0
    assert json.loads(out)["vehicles"][0]["label"] == MARKUP
    code, out, _ = run_cli(capsys, "list", str(path), "--as-of", "2026-12-07",
                           "--format", "markdown")
    # Not turned into style; in Markdown each bracket backslash-escaped, which CommonMark
    # (§2.4, backslash escapes) renders as the literal bracket.
    assert code == 0 and "\\[bold red\\]Van 1\\[/\\]" in out


def test_unicode_text_survives():
    v = load_fleet(ACCEPTED / "unicode_text.toml").fleet.vehicles[0]
    assert v.id == "\u00c4\u00d6-01"
    assert v.label == "Fourgon 1 \u2014 Z\u00fcrich \u2192 \u0141\u00f3d\u017a \U0001F690"


# -- bad command-line values ------------------------------------------------------------------

@pytest.mark.parametrize(("args", "fragment"), [
    (["list", "{fleet}", "--as-of", "2026-13-01"], "is not a date: write it as YYYY-MM-DD"),
    (["list", "{fleet}", "--as-of", "tomorrow"], "is not a date"),
    (["list", "{fleet}", "--as-of", "07/12/2026"], "is not a date"),
    (["week", "{fleet}", "--start", "2026-02-30"], "is not a date"),
    (["list", "{fleet}", "--status", "overdo"], "did you mean 'overdue'?"),
    (["list", "{fleet}", "--status", ","], "no status given"),
    (["list", "{fleet}", "--status", "ok,late"], "unknown status 'late'"),
    (["list", "{fleet}", "--format", "xml"], "invalid choice: 'xml'"),
    (["list", "{fleet}", "--sort", "random"], "invalid choice: 'random'"),
    (["list", "{fleet}", "--unit", "miles"], "invalid choice: 'miles'"),
    (["risk", "{fleet}", "--format", "csv"], "invalid choice: 'csv'"),
    (["list"], "the following arguments are required: file"),
    (["check", "{tmp}/no-such-fleet.toml"], "no such file"),
    (["check", "{tmp}"], "is a folder, not a fleet file"),
    (["check", "{fleet}/x.toml"], "a part of the path is a file"),
])
def test_bad_values_exit_2_with_a_message(args, fragment, tmp_path, capsys):
    argv = [a.format(fleet=COURIER, tmp=tmp_path) for a in args]
    code, _, err = run_cli(capsys, *argv)
    assert code == 2, err
    assert fragment.lower() in err.lower(), err
    assert "Traceback" not in err


def test_bad_values_in_a_fresh_process(tmp_path):
    for argv in (["list", str(COURIER), "--as-of", "2026-13-01"],
                 ["list", str(COURIER), "--status", "overdo"],
                 ["list", str(COURIER), "-o", str(tmp_path / "missing" / "plan.csv")]):
        run = subprocess.run([sys.executable, "-m", "planner", *argv], capture_output=True,
                             text=True, cwd=ROOT, timeout=60)
        assert run.returncode == 2 and "Traceback" not in run.stderr, run.stderr
        assert run.stderr.strip()


def _list_to(capsys, out: Path | str) -> tuple[int, str]:
    code, _, err = run_cli(capsys, "list", str(COURIER), "--as-of", "2026-12-07",
                           "--format", "csv", "-o", str(out))
    return code, err


def test_output_into_a_missing_folder(tmp_path, capsys):
    code, err = _list_to(capsys, tmp_path / "missing" / "plan.csv")
    assert code == 2 and "does not exist: create it, or choose another path" in err
    assert not (tmp_path / "missing").exists()


def test_output_onto_a_folder(tmp_path, capsys):
    folder = tmp_path / "plans"
    folder.mkdir()
    code, err = _list_to(capsys, folder)
    assert code == 2 and "it is a folder: give the path of a file inside it" in err
    assert list(folder.iterdir()) == []


def test_output_under_a_file(tmp_path, capsys):
    blocker = tmp_path / "notes.txt"
    blocker.write_text("not a folder\n")
    code, err = _list_to(capsys, blocker / "plan.csv")
    assert code == 2 and f"{blocker} is a file, not a folder" in err
    assert blocker.read_text() == "not a folder\n"


def test_output_onto_the_fleet_file_is_refused(tmp_path, capsys):
    fleet = tmp_path / "fleet.toml"
    fleet.write_bytes(COURIER.read_bytes())
    code, _, err = run_cli(capsys, "list", str(fleet), "-o", str(fleet))
    assert code == 2 and "refusing to write over the fleet file" in err
    assert fleet.read_bytes() == COURIER.read_bytes()


def test_output_into_a_read_only_folder(tmp_path, capsys):
    if os.geteuid() != 0:
        folder = tmp_path / "locked"
        folder.mkdir()
        folder.chmod(0o555)
        try:
            code, err = _list_to(capsys, folder / "plan.csv")
        finally:
            folder.chmod(0o755)
        assert code == 2 and "no permission to write in" in err
        assert list(folder.iterdir()) == []
        return
    # As root, permission bits stop nothing; sysfs refuses new files even to root (EACCES, or
    # EROFS where it is mounted read-only).
    if not os.path.isdir("/sys/kernel"):
        pytest.skip("running as root and no /sys to stand in for a read-only folder")
    code, err = _list_to(capsys, "/sys/beltplan-plan.csv")
    assert code == 2, err
    assert "cannot write /sys/beltplan-plan.csv" in err
    assert "The previous file, if any, is unchanged" in err
    assert not os.path.exists("/sys/beltplan-plan.csv")


def test_output_over_a_read_only_file(tmp_path, capsys):
    target = tmp_path / "plan.csv"
    target.write_text("old plan\n")
    target.chmod(0o444)
    if os.access(target, os.W_OK):
        pytest.skip("running as root: a read-only file is writable to root")
    code, err = _list_to(capsys, target)
    assert code == 2 and "the file is read-only" in err
    assert target.read_text() == "old plan\n"
