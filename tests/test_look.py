"""The status colours: beltplan's own scheme, readable on dark and light terminals, never the
only carrier of meaning.

Contrast is measured as WCAG 2.1 defines it [source: W3C, Web Content Accessibility Guidelines
2.1, "relative luminance" and "contrast ratio" in the glossary; 3:1 is the minimum for large
text and user-interface marks (SC 1.4.11), 4.5:1 for ordinary text (SC 1.4.3)]. Hues come from
the standard library's `colorsys` (RGB to HLS).
"""

from __future__ import annotations

import colorsys

import pytest
from rich.color import Color
from rich.style import Style

from planner.cli import cmd_list
from planner.tui import look

DARK_THEME = "#16181b"  # the UI's background (look.THEME)
BLACK, WHITE = "#000000", "#ffffff"  # a dark and a light terminal


def rgb(color: Color | str) -> tuple[int, int, int]:
    c = Color.parse(color) if isinstance(color, str) else color
    t = c.get_truecolor()  # a named colour: the standard palette's value
    return (t.red, t.green, t.blue)


def luminance(color: Color | str) -> float:
    """WCAG 2.1 relative luminance: sRGB channels linearised, weighted 0.2126/0.7152/0.0722."""
    def lin(v: int) -> float:
        s = v / 255
        return s / 12.92 if s <= 0.04045 else ((s + 0.055) / 1.055) ** 2.4
    r, g, b = rgb(color)
    return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)


def contrast(a: Color | str, b: Color | str) -> float:
    hi, lo = sorted((luminance(a), luminance(b)), reverse=True)
    return (hi + 0.05) / (lo + 0.05)


def hue_degrees(color: Color) -> float:
    r, g, b = rgb(color)
    return colorsys.rgb_to_hls(r / 255, g / 255, b / 255)[0] * 360


def test_the_contrast_formula_against_the_wcag_end_points():
    # WCAG 2.1: black on white is 21:1, a colour on itself 1:1.
    assert contrast(BLACK, WHITE) == pytest.approx(21.0)
    assert contrast("#777777", "#777777") == pytest.approx(1.0)
    # #767676 on white is the well-known lightest grey that passes 4.5:1 (from memory: 4.54).
    assert contrast("#767676", WHITE) == pytest.approx(4.54, abs=0.01)


def ui_styles() -> list[tuple[str, Style]]:
    return [*look.STATUS_STYLE.items(), *look.CONSEQUENCE_STYLE.items()]


def cli_styles() -> list[tuple[str, Style]]:
    return [(k, Style.parse(v)) for k, v in
            [*cmd_list.STATUS_STYLE.items(), *cmd_list.CONSEQUENCE_STYLE.items()]]


@pytest.mark.parametrize("where, styles, backgrounds", [
    ("UI", ui_styles(), (DARK_THEME,)),
    ("CLI", cli_styles(), (BLACK, WHITE)),  # the terminal may be dark or light
])
def test_every_status_colour_is_readable(where, styles, backgrounds):
    for word, style in styles:
        if style.bgcolor is not None:  # a tag: its own background, ordinary text on it
            assert contrast(style.color, style.bgcolor) >= 4.5, (where, word)
        elif style.color is not None:  # coloured letters on the terminal's background
            for bg in backgrounds:
                assert contrast(style.color, bg) >= 3.0, (where, word, bg)


@pytest.mark.parametrize("where, styles", [("UI", dict(ui_styles())), ("CLI", dict(cli_styles()))])
def test_the_three_statuses_are_not_a_red_amber_green_light(where, styles):
    overdue, near, ok = styles["overdue"], styles["near-limit"], styles["ok"]
    # "ok" is not painted green: it carries no colour of its own.
    assert ok.color is None and ok.bgcolor is None, where
    # The warning band is not amber or yellow (hues about 30-65 degrees).
    assert not 25 <= hue_degrees(near.color) <= 70, where
    # Overdue is a tag with its own background, not red letters; nor is the tag plain red
    # (hue within 15 degrees of 0).
    assert overdue.bgcolor is not None, where
    h = hue_degrees(overdue.bgcolor)
    assert 15 < h < 345, where


def test_the_words_and_symbols_carry_the_meaning_without_colour():
    # With every style stripped, each status still reads as its own symbol and word.
    plain = {s: look.status_text(s).plain for s in look.STATUS_STYLE}
    assert plain == {"overdue": "✗ overdue", "no-record": "? no-record",
                     "missing-fact": "∅ missing-fact", "near-limit": "! near-limit",
                     "ok": "✓ ok", "on-condition": "~ on-condition"}
    assert len({p.split()[0] for p in plain.values()}) == len(plain)  # six distinct symbols


def test_a_tag_status_draws_its_life_bar_in_the_tag_colour():
    # The bar's blocks would be white on a tag's background; they take the tag's colour.
    assert look.STATUS_INK["overdue"].color == look.STATUS_STYLE["overdue"].bgcolor
    assert look.STATUS_INK["near-limit"].color == look.STATUS_STYLE["near-limit"].color
