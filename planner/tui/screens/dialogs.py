"""Small dialogs: a question with buttons, a pick from a list, the filter."""

from __future__ import annotations

from collections.abc import Sequence

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical
from textual.widgets import Button, OptionList, SelectionList, Static
from textual.widgets.option_list import Option
from textual.widgets.selection_list import Selection

from planner.tui.look import consequence_text, status_text
from planner.tui.screens.modal import Popup
from planner.tui.view import CONSEQUENCES, STATUSES


class AskDialog(Popup[str]):
    """A question and a row of answers; dismisses with the chosen answer's id (None: esc)."""

    PANEL_CLASSES = "panel -narrow"
    ESCAPE_WORDS = "esc: cancel"
    ANSWERS_IN_A_COLUMN = False  # a row of buttons; a column for long answers

    def __init__(self, title: str, question: Text | str,
                 answers: Sequence[tuple[str, str, str]], name: str | None = None) -> None:
        """`answers`: (id, button words, variant) — the first is focused."""
        super().__init__(name=name)
        self.title_words = title
        self.question = question if isinstance(question, Text) else Text(question)
        self.answers = answers

    def compose(self) -> ComposeResult:
        with Vertical(classes=self.PANEL_CLASSES) as panel:
            panel.border_title = self.title_words
            panel.border_subtitle = self.ESCAPE_WORDS
            yield Static(self.question, classes="intro", markup=False)
            answers = (Vertical(classes="choices") if self.ANSWERS_IN_A_COLUMN
                       else Horizontal(classes="buttons"))
            with answers:
                for ident, words, variant in self.answers:
                    yield Button(words, id=f"ask-{ident}", variant=variant,  # type: ignore[arg-type]
                                 compact=True)

    def on_mount(self) -> None:
        self.query(Button).first().focus()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        self.dismiss(str(event.button.id).removeprefix("ask-"))


class PickDialog(Popup[str]):
    """Choose one entry of a list; dismisses with its id."""

    def __init__(self, title: str, intro: str, options: Sequence[tuple[str, Text | str]],
                 current: str | None = None) -> None:
        super().__init__()
        self.title_words = title
        self.intro = intro
        self.options = options
        self.current = current

    def compose(self) -> ComposeResult:
        with Vertical(classes="panel -narrow") as panel:
            panel.border_title = self.title_words
            panel.border_subtitle = "enter: choose · esc: cancel"
            yield Static(Text(self.intro), classes="intro", markup=False)
            yield OptionList(*(Option(words if isinstance(words, Text) else Text(words), id=i)
                               for i, words in self.options), id="pick")

    def on_mount(self) -> None:
        pick = self.query_one(OptionList)
        ids = [i for i, _ in self.options]
        if self.current in ids:
            pick.highlighted = ids.index(self.current)
        pick.focus()

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        self.dismiss(event.option.id)


class FilterDialog(Popup[tuple[frozenset[str], frozenset[str]]]):
    """Tick the statuses and consequences to show (none ticked: all of them)."""

    def __init__(self, statuses: frozenset[str], consequences: frozenset[str]) -> None:
        super().__init__()
        self.statuses = statuses
        self.consequences = consequences

    def compose(self) -> ComposeResult:
        with Vertical(classes="panel -narrow") as panel:
            panel.border_title = "Filter"
            panel.border_subtitle = "space: tick · enter on Apply · esc: cancel"
            yield Static(Text("Show only the ticked ones; nothing ticked shows all."),
                         classes="intro", markup=False)
            yield SelectionList(*(Selection(status_text(s), s, s in self.statuses)
                                  for s in STATUSES), id="f-status")
            yield SelectionList(*(Selection(consequence_text(c), c, c in self.consequences)
                                  for c in CONSEQUENCES), id="f-consequence")
            with Horizontal(classes="buttons"):
                yield Button("Needs action", id="f-action", compact=True)
                yield Button("Show all", id="f-all", compact=True)
                yield Button("Apply", id="f-apply", variant="primary", compact=True)

    def on_mount(self) -> None:
        self.query_one("#f-status", SelectionList).border_title = "Status"
        self.query_one("#f-consequence", SelectionList).border_title = "If it fails"
        self.query_one("#f-status").focus()

    def _chosen(self) -> tuple[frozenset[str], frozenset[str]]:
        status = self.query_one("#f-status", SelectionList)
        consequence = self.query_one("#f-consequence", SelectionList)
        return frozenset(status.selected), frozenset(consequence.selected)

    def action_apply(self) -> None:
        self.dismiss(self._chosen())

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        if event.button.id == "f-all":
            self.dismiss((frozenset(), frozenset()))
        elif event.button.id == "f-action":
            self.dismiss((frozenset({"overdue", "no-record", "missing-fact", "near-limit"}),
                          frozenset()))
        else:
            self.action_apply()
