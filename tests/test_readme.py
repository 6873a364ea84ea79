"""The README's promises: two quick-start commands, the test command CI runs, a true reference."""

from __future__ import annotations

import re

from planner.docs import BEGIN, END, reference
from tests.conftest import ROOT

README = (ROOT / "README.md").read_text(encoding="utf-8")


def quick_start_commands() -> list[str]:
    section = README.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    return re.findall(r"```sh\n(.*?)\n```", section, flags=re.S)


def test_quick_start_has_exactly_two_commands():
    commands = quick_start_commands()
    assert len(commands) == 2
    assert all("\n" not in c for c in commands)
    assert "fleet_examples/courier_fleet.toml" in commands[0]
    assert "pytest" in commands[1]


def test_ci_runs_the_readmes_test_command():
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert quick_start_commands()[1] in ci.splitlines()


def test_readme_reference_is_generated_from_the_models():
    start, end = README.index(BEGIN), README.index(END) + len(END)
    assert README[start:end] == reference(), "run: python -m planner.docs, paste into README"


def test_readme_opens_with_the_job_and_the_caution():
    head = README[:3000]
    assert "timing belts" in head and "whichever comes first" in head
    assert "qualified technician" in head and "without warning" in head
