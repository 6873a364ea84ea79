"""File text made inert before it is shown: one place for the terminal and one for Markdown.

Text from a fleet file, a CSV export or an in-use marker may hold characters a terminal obeys
rather than shows (ESC starts colour, cursor and window-title sequences; BEL ends a title; U+009B
is a one-byte CSI), characters that start a new line (CR, LF, U+2028), and format characters
that reverse what follows (U+202E). `shown` writes every such character as a visible escape
(`\\x1b`, `\\n`, `\\u202e`), so a message can neither command the terminal nor forge a line; every
printer of the command line and every view of the UI passes file text through it. The ids and
keys of a fleet file may not hold them at all (`UNSHOWN`, refused by `planner.fleet`).

`markdown_text` is the one escaping of free text for Markdown (the list's table and the week's
job sheets alike): one line, and every character Markdown acts on escaped, so no HTML, link,
image, heading or table cell can come from the file. No other planner import here.
"""

from __future__ import annotations

import re
import unicodedata

# The Unicode categories never shown as they are (Unicode Standard §4.5): Cc controls (C0,
# DEL, C1), Cf format characters (bidi overrides and isolates, zero-width characters), Zl and
# Zp line and paragraph separators, Cs lone surrogates.
_HIDDEN = frozenset(("Cc", "Cf", "Zl", "Zp", "Cs"))
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}
# The commonest of them as a pattern, for writers that escape in bulk (JSON, iCalendar, the
# imported file): C0, DEL, C1, soft hyphen, and the line separators and format characters of
# Unicode's General Punctuation block, the BOM and the interlinear annotation marks.
_ABOVE_C0 = ("\x7f-\x9f\u00ad\u061c\u180e\u200b-\u200f\u2028-\u202e\u2060-\u206f\ufeff"
             "\ufff9-\ufffb")
UNSHOWN = re.compile(f"[\x00-\x1f{_ABOVE_C0}]")
# The same without C0 (which JSON writers escape already).
UNSHOWN_ABOVE_C0 = re.compile(f"[{_ABOVE_C0}]")


def _escape(c: str) -> str:
    if c in _NAMED:
        return _NAMED[c]
    code = ord(c)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}" if code < 0x10000 \
        else f"\\U{code:08x}"


def first_unshown(text: str) -> int | None:
    """The position of the first character `shown` would escape, or None."""
    if text.isprintable():
        return None
    return next((i for i, c in enumerate(text) if unicodedata.category(c) in _HIDDEN), None)


def shown(text: str) -> str:
    """`text` with every control, format and line-separator character written as an escape.

    Printable text (the common case) is returned as it is.
    """
    if text.isprintable():
        return text
    return "".join(_escape(c) if unicodedata.category(c) in _HIDDEN else c for c in text)


def one_line(text: str) -> str:
    """`text` on one line for a layout that cannot hold a line end (a table cell, a list
    row): runs of white space, line ends included, become one space; the rest as `shown`."""
    return shown(" ".join(text.split()))


# The characters that make Markdown of plain text: backslash, code, emphasis, links and images
# ([ ]), HTML and autolinks (< >), table cells (|), headings (#), strikethrough (~).
_MD_SPECIAL = re.compile(r"([\\`*_\[\]<>|#~])")


def markdown_text(text: str) -> str:
    """Free text for Markdown: one line (`one_line`), every character Markdown acts on
    backslash-escaped (CommonMark §2.4: any ASCII punctuation may be), so no HTML, link, image,
    heading, emphasis or table cell comes from the text."""
    return _MD_SPECIAL.sub(r"\\\1", one_line(text))
