"""Distance units. 1 mile = 1.609344 km exactly (international mile, 1959; NIST SP 811, App. B)."""

from __future__ import annotations

KM_PER_MILE = 1.609344


def distance_factor(source: str, target: str) -> float:
    """The factor that turns a distance in `source` units into `target` units."""
    if source == target:
        return 1.0
    if (source, target) == ("mi", "km"):
        return KM_PER_MILE
    if (source, target) == ("km", "mi"):
        return 1.0 / KM_PER_MILE
    raise ValueError(f"unknown distance units {source!r} -> {target!r}")
