"""The one range of days the planner takes: the fleet file's, for typed dates too.

A planning date, a week's start or a date typed in the UI outside the years a fleet file may
hold would plan with days the file refuses, and near year 9999 the calendar arithmetic runs off
the end of Python's dates.
"""

from __future__ import annotations

import datetime as dt

from planner.validate import EARLIEST_DATE, LATEST_DATE


def out_of_range(day: dt.date) -> str | None:
    """Why `day` is refused (outside the file's years), or None when it is in range."""
    if EARLIEST_DATE <= day <= LATEST_DATE:
        return None
    return (f"{day.isoformat()} is outside {EARLIEST_DATE.isoformat()} to "
            f"{LATEST_DATE.isoformat()}, the days a fleet file takes")


def parse_day(text: str) -> dt.date:
    """An ISO 8601 day inside the file's range; ValueError says what to type instead."""
    try:
        day = dt.date.fromisoformat(text)
    except ValueError:
        raise ValueError(
            f"{text!r} is not a date: write it as YYYY-MM-DD, e.g. 2026-12-07") from None
    why = out_of_range(day)
    if why is not None:
        raise ValueError(why)
    return day
