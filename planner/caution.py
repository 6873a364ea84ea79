"""The one caution text, shown wherever beltplan tells someone what to do about a belt.

A module of its own with no imports from the planner, so that every help text (even the UI
launcher's, which loads nothing else) can carry it. `planner.export` re-exports it.
"""

from __future__ import annotations

import textwrap

# Every output a person reads carries it whole; the README quotes it (tests/test_advice.py).
CAUTION = (
    "The maker's schedule and service information come first: beltplan is a planning aid, not "
    "a diagnosis, and never a reason to run past a maker's interval. Cam-drive work belongs to "
    "a qualified technician following the maker's procedure and local rules. A belt past its "
    "interval can stop the engine without warning — at speed that also takes away power "
    "steering and brake assist."
)


def caution_block(width: int = 79, lead: str = "Caution: ") -> str:
    """The caution wrapped for help texts and plain-text files."""
    return textwrap.fill(lead + CAUTION, width)
