"""The help view (every key, from the action table) and the about view (with the cautions)."""

from __future__ import annotations

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Vertical, VerticalScroll
from textual.widgets import Static

from planner import __version__, export
from planner.tui.actions import ACTIONS, ANY_VIEW, HELP, bindings, key_label
from planner.tui.look import (
    ACCENT,
    CONSEQUENCE_SYMBOL,
    DIM,
    STATUS_SYMBOL,
    WHAT_IT_MEANS,
    consequence_text,
    literal,
    status_text,
)
from planner.tui.screens.modal import Popup

VIEW_NAMES = {"main": "list", "detail": "detail", "error": "error view", "form": "pop-ups",
              "help": "help, about", "week": "week"}


class HelpPopup(Popup[None]):
    """Help and about: esc, q or ? close them."""

    SCOPE = HELP
    BINDINGS = bindings("screen", HELP)

    def action_close(self) -> None:
        self.dismiss(None)


def keys_tables() -> list[RenderableType]:
    """One heading and one table per group of the action table, in its order."""
    out: list[RenderableType] = []
    groups = list(dict.fromkeys(a.group for a in ACTIONS))
    for group in groups:
        out.append(literal(f"\n{group}", "bold underline"))
        table = Table.grid(padding=(0, 2))
        table.add_column(no_wrap=True, style=ACCENT, min_width=12)
        table.add_column(ratio=1)
        table.add_column(no_wrap=True, style=DIM, min_width=12)
        for action in ACTIONS:
            if action.group == group:
                where = ("every view" if action.scopes == ANY_VIEW else
                         ", ".join(VIEW_NAMES[s] for s in action.scopes))
                table.add_row(Text(key_label(action.keys)), Text(action.help), Text(where))
        out.append(table)
    return out


def legend() -> list[RenderableType]:
    table = Table.grid(padding=(0, 2))
    table.add_column(no_wrap=True, min_width=16)
    table.add_column(ratio=1)
    for status in STATUS_SYMBOL:
        table.add_row(status_text(status), Text(WHAT_IT_MEANS[status]))
    for consequence in CONSEQUENCE_SYMBOL:
        table.add_row(consequence_text(consequence), Text(WHAT_IT_MEANS[consequence]))
    return [literal("\nSymbols", "bold underline"), table]


class HelpScreen(HelpPopup):
    """Every key of every view."""

    def compose(self) -> ComposeResult:
        with Vertical(classes="panel") as panel:
            panel.border_title = "Keys"
            panel.border_subtitle = "esc, q or ? closes"
            with VerticalScroll(classes="scroll -full"):
                yield Static(Group(Text("The same commands are in the command palette "
                                        "(ctrl+p). The last column says where each works."),
                                   *keys_tables(), *legend()),
                             id="help-keys", markup=False)


def about_text(model_line: str | None) -> Text:
    text = literal("beltplan", ACCENT)
    text.append(f" {__version__}: a timing-belt service and failure-risk planner.\n\n")
    text.append("Cautions\n", style="bold underline")
    text.append(export.CAUTION + "\n")
    for line in (
        "Overdue belts and belts with no record are required jobs: replace them now. Their "
        "risk figures extrapolate beyond the maker's data and are never a reason to wait.",
        "Interference not recorded is planned and costed as interference until someone "
        "checks it; diesels almost always are interference engines.",
    ):
        text.append("• " + line + "\n")
    if model_line:
        text.append("\nRisk figures\n", style="bold underline")
        text.append(model_line + "\n")
    text.append("\nHow a status is decided\n", style="bold underline")
    text.append("A belt is due by distance or by age, whichever comes first; the distance "
                "limit is turned into a date from the vehicle's odometer readings. The detail "
                "view (enter) shows both limits and which one decides.")
    return text


class AboutScreen(HelpPopup):
    """What the planner is, its assumptions, and the cautions."""

    def __init__(self, model_line: str | None) -> None:
        super().__init__()
        self.model_line = model_line

    def compose(self) -> ComposeResult:
        with Vertical(classes="panel") as panel:
            panel.border_title = "About beltplan"
            panel.border_subtitle = "esc, q or ? closes"
            with VerticalScroll(classes="scroll -full"):
                yield Static(about_text(self.model_line), id="about-text", markup=False)
