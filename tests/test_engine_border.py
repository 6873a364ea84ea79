"""The engine is pure: importing it loads no UI, no command line and no file layer."""

from __future__ import annotations

import subprocess
import sys

import pytest

ENGINE = ["planner.fleet", "planner.validate", "planner.plan", "planner.risk",
          "planner.reliability", "planner.schedule", "planner.export", "planner.locate",
          "planner.errors", "planner.units", "planner.week", "planner.week_export",
          "planner.importer", "planner.edit", "planner.formats", "planner.caution"]
FORBIDDEN = ["textual", "planner.tui", "planner.cli", "planner.fileio", "planner.inuse",
             "planner.fleetcache", "planner.reparse", "planner.recovery", "scipy", "numpy"]


@pytest.mark.parametrize("module", ENGINE)
def test_engine_module_imports_nothing_it_must_not(module):
    code = (f"import sys, importlib; importlib.import_module({module!r}); "
            f"bad = [m for m in {FORBIDDEN!r} if m in sys.modules]; print(','.join(bad))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.strip()
    assert out == "", f"{module} pulls in {out}"
