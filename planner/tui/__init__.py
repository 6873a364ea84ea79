"""The terminal UI (Textual). Start it with `create_app(path, as_of).run()`.

Only this package and `planner.cli` import Textual; the engine stays pure.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    import datetime as dt
    from pathlib import Path

    from planner.tui.app import BeltplanApp


def create_app(path: str | Path, as_of: dt.date, **kwargs: Any) -> BeltplanApp:
    """The app on the fleet file at `path`, planning as of `as_of`."""
    from planner.tui.app import create_app as _create

    return _create(path, as_of, **kwargs)


__all__ = ["create_app"]
