"""The UI's own look: a symbol and a colour for every status and consequence, and the theme.

Every status and consequence is shown as a symbol and a word; colour only adds to them, so the
screen reads the same on a monochrome terminal, with NO_COLOR set, or to a colour-blind user.
"""

from __future__ import annotations

from pathlib import Path

from rich.style import Style
from rich.text import Text
from textual.theme import Theme

# The .tcss files sit in planner/tui/ (packaged by pyproject's "tui/*.tcss").
STYLES = Path(__file__).resolve().parent

STATUS_SYMBOL = {
    "overdue": "✗", "no-record": "?", "missing-fact": "∅", "near-limit": "!", "ok": "✓",
    "on-condition": "~",
}
STATUS_STYLE = {
    "overdue": Style(color="#ff6a4d", bold=True),
    "no-record": Style(color="#d58cf0", bold=True),
    "missing-fact": Style(color="#f08ac0", bold=True),
    "near-limit": Style(color="#f0c040"),
    "ok": Style(color="#8cc46a"),
    "on-condition": Style(color="#8fb3d9"),
}
CONSEQUENCE_SYMBOL = {"engine-damage": "◆", "unverified": "◇", "breakdown": "·"}
CONSEQUENCE_STYLE = {
    "engine-damage": Style(color="#ff8a5c"),
    "unverified": Style(color="#d58cf0"),
    "breakdown": Style(color="#d9c08a"),
}
WHAT_IT_MEANS = {
    "overdue": "past a limit: book it now",
    "no-record": "no belt record: replace on acquisition",
    "missing-fact": "a fact needed to plan it is missing: find it (never ok)",
    "near-limit": "within the warning distance or days",
    "ok": "not yet due",
    "on-condition": "chain or gear: no fixed interval",
    "engine-damage": "interference engine: valves meet pistons",
    "unverified": "interference not known: planned as engine damage",
    "breakdown": "non-interference: stops, no internal damage",
}

DIM = Style(dim=True)
BOLD = Style(bold=True)
ACCENT = Style(color="#e8a33d", bold=True)
KEY_CHIP = Style(color="#16181b", bgcolor="#e8a33d", bold=True)

THEME = Theme(
    name="beltplan-workshop",
    primary="#e8a33d",      # amber of a workshop label
    secondary="#4f9a94",    # teal of a service card
    accent="#4f9a94",
    warning="#f0c040",
    error="#ff6a4d",
    success="#8cc46a",
    foreground="#e6e1d6",
    background="#16181b",
    surface="#1e2125",
    panel="#2a2e33",
    dark=True,
)


def status_text(status: str) -> Text:
    """`✗ overdue`, styled."""
    return Text(f"{STATUS_SYMBOL.get(status, ' ')} {status}", style=STATUS_STYLE.get(status, ""))


def consequence_text(consequence: str) -> Text:
    return Text(f"{CONSEQUENCE_SYMBOL.get(consequence, ' ')} {consequence}",
                style=CONSEQUENCE_STYLE.get(consequence, ""))


def literal(value: object, style: Style | str = "") -> Text:
    """File text shown as it is: `[red]van[/]` stays those characters, never markup.

    The style covers these characters only, so text appended later does not inherit it.
    """
    text = Text()
    text.append(str(value), style=style)
    return text
