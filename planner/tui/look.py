"""The UI's own look: a symbol and a colour for every status and consequence, and the theme.

Every status and consequence is shown as a symbol and a word; colour only adds to them, so the
screen reads the same on a monochrome terminal, with NO_COLOR set, or to a colour-blind user.
"""

from __future__ import annotations

from pathlib import Path

from rich.style import Style
from rich.text import Text
from textual.theme import Theme

from planner.safetext import shown

# The .tcss files sit in planner/tui/ (packaged by pyproject's "tui/*.tcss").
STYLES = Path(__file__).resolve().parent

STATUS_SYMBOL = {
    "overdue": "✗", "no-record": "?", "missing-fact": "∅", "near-limit": "!", "ok": "✓",
    "on-condition": "~",
}
# The status colours are beltplan's own "workshop tag" scheme, not a traffic light: the two
# statuses that need a job now and the one that needs a fact found are filled tags (raspberry,
# indigo, ochre) in light bold letters, the warning band is a petrol blue, a drive with no
# interval is teal, and "ok" carries no colour at all. Every tag has its own background and
# every plain colour has a contrast of at least 3:1 on the theme's background and on white
# (tests/test_look.py), and the symbol and word say it all without colour.
STATUS_STYLE = {
    "overdue": Style(color="#ffffff", bgcolor="#a8325f", bold=True),
    "no-record": Style(color="#ffffff", bgcolor="#5646a8", bold=True),
    "missing-fact": Style(color="#ffffff", bgcolor="#8a5a00", bold=True),
    "near-limit": Style(color="#3d8fd1", bold=True),
    "ok": Style(),
    "on-condition": Style(color="#4f9a94", italic=True),
}
# Marks drawn in a status's colour (the life bar): a tag's background, else its letters' colour.
STATUS_INK = {status: Style(color=style.bgcolor or style.color)
              for status, style in STATUS_STYLE.items()}
CONSEQUENCE_SYMBOL = {"engine-damage": "◆", "unverified": "◇", "breakdown": "·"}
CONSEQUENCE_STYLE = {
    "engine-damage": Style(color="#c9622a", bold=True),
    "unverified": Style(color="#9a6fd0"),
    "breakdown": Style(color="#a08a5a"),
}
WHAT_IT_MEANS = {
    "overdue": "past a limit: replace now; it can stop the engine without warning",
    "no-record": "no belt record: replace now, as on acquisition",
    "missing-fact": "a fact needed to plan it is missing: find it; never read as safe",
    "near-limit": "within the warning distance or days: book it before the due date",
    "ok": "not yet due",
    "on-condition": "chain or gear: no fixed interval",
    "engine-damage": "interference engine: valves meet pistons",
    "unverified": "interference not known: planned as engine damage",
    "breakdown": "non-interference: a failure stops the engine; internal damage is less "
                 "likely, not ruled out",
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
    """Text shown as it is: `[red]van[/]` stays those characters, never markup; a control or
    format character (ESC, CR, a tab, U+202E …) as a visible escape (`safetext.shown`), so it
    never reaches the terminal. Its line ends are kept (the planner's own messages have some):
    a field of the file goes through `field_text`.

    The style covers these characters only, so text appended later does not inherit it.
    """
    text = Text()
    text.append("\n".join(shown(line) for line in str(value).split("\n")), style=style)
    return text


def field_text(value: object, style: Style | str = "") -> Text:
    """A field of the file (a label, a note, a name): as `literal`, its line ends escaped
    too, so it never makes a line of its own that could pass for another row."""
    text = Text()
    text.append(shown(str(value)), style=style)
    return text
