"""The readings import's report: what would be added, skipped and rejected, before applying.

Rejected rows come first (they need someone to look at them), each with its row, column, value
and fix as the importer words them; then the skipped and the added ones; then how the file was
read (encoding, columns, date order), which is the report `beltplan readings` prints.
"""

from __future__ import annotations

from rich.console import Group, RenderableType
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.widgets import Button, Static

from planner.tui.look import DIM, STATUS_STYLE, literal
from planner.tui.readings_import import StagedImport
from planner.tui.screens.modal import Popup

ROW_PREFIXES = ("  added: ", "  skipped: ", "  rejected: ", "Readings: ")


def report_text(staged: StagedImport, unit: str) -> RenderableType:
    """The report as the popup shows it."""
    r = staged.result
    head = literal(f"{len(r.added)} to add", "bold")
    head.append(f" · {len(r.skipped)} skipped (already in the file)")
    head.append(f" · {len(r.rejected)} rejected", style="bold" if r.rejected else "")
    out: list[RenderableType] = [head]
    if r.rejected:
        out.append(literal(f"\nRejected ({len(r.rejected)}): left out, with the reason",
                           "bold underline"))
        out += [literal(p.render(), STATUS_STYLE["overdue"]) for p in r.rejected]
    if r.skipped:
        out.append(literal(f"\nSkipped ({len(r.skipped)})", "bold underline"))
        out += [literal(p.render(), DIM) for p in r.skipped]
    if r.added:
        out.append(literal(f"\nTo add ({len(r.added)})", "bold underline"))
        out += [literal(f"{a.vehicle} {a.date} {a.odometer:,.0f} {unit} (row {a.row})")
                for a in r.added]
    out.append(literal("\nHow the file was read", "bold underline"))
    out += [literal(line, DIM) for line in r.report if not line.startswith(ROW_PREFIXES)]
    return Group(*out)


class ImportReport(Popup[bool]):
    """Shows the report; dismisses True to apply it (only when there is something to add)."""

    def __init__(self, staged: StagedImport, unit: str) -> None:
        super().__init__()
        self.staged = staged
        self.unit = unit

    def compose(self) -> ComposeResult:
        n = len(self.staged.result.added)
        with Vertical(classes="panel") as panel:
            panel.border_title = f"Readings from {self.staged.path.name}"
            panel.border_subtitle = "enter: apply · esc: cancel" if n else "esc: close"
            with VerticalScroll(classes="scroll", id="import-scroll"):
                yield Static(report_text(self.staged, self.unit), id="import-report",
                             markup=False)
            words = Text("Nothing to add: the fleet stays as it is." if not n else
                         "Adding them is an edit like any other: u undoes it, and the file "
                         "changes only when you save.", style=DIM)
            yield Static(words, classes="intro", id="import-note", markup=False)
            with Horizontal(classes="buttons"):
                if n:
                    yield Button("Cancel", id="cancel", compact=True)
                    yield Button(f"Add {n} reading{'s' if n != 1 else ''}", id="apply",
                                 variant="primary", compact=True)
                else:
                    yield Button("Close", id="cancel", variant="primary", compact=True)

    def on_mount(self) -> None:
        self.query(Button).last().focus()

    def action_apply(self) -> None:
        self.dismiss(bool(self.staged.result.added))

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        if event.button.id == "apply":
            self.action_apply()
        else:
            self.dismiss(False)

