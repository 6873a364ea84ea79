"""The UI's only readings of the clock, in one place so that tests can fix them.

The planning date is never read here: it is passed in (`create_app(path, as_of)`). Two things
at the edge need the real clock, as the command line does: the DTSTAMP of an exported calendar
(when the file was made) and "today" for refusing imported readings dated in the future (a
typing slip). Callers use `clock.utc_now()` / `clock.today()` through the module, so a test can
replace them with `monkeypatch.setattr(clock, "utc_now", …)`.
"""

from __future__ import annotations

import datetime as dt


def utc_now() -> dt.datetime:
    """Now, in UTC, to the second (an iCalendar DTSTAMP)."""
    return dt.datetime.now(dt.UTC).replace(microsecond=0)


def today() -> dt.date:
    """Today's date on this computer."""
    return dt.date.today()
