"""The base of every pop-up (forms, dialogs, help): a framed panel over the dimmed view."""

from __future__ import annotations

from typing import Any, TypeVar

from textual.screen import ModalScreen

from planner.tui.actions import FORM, bindings
from planner.tui.look import STYLES

T = TypeVar("T")


class Popup(ModalScreen[T]):
    """Escape cancels (dismiss with None); `apply` is the form's or dialog's own."""

    SCOPE = FORM
    BINDINGS = bindings("screen", FORM)
    CSS_PATH = STYLES / "popup.tcss"

    def action_cancel(self) -> None:
        self.dismiss(None)

    def action_apply(self) -> None:
        """Forms override this; elsewhere apply just closes."""
        self.dismiss(None)

    def on_click(self, event: Any) -> None:
        # A click on the dimmed background (outside the panel) closes the pop-up.
        if getattr(event, "widget", None) is self:
            self.dismiss(None)
