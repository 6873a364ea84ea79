"""The one way numbers reach people: percentages and money.

Every screen, table and export formats a share with `percent` and an amount with `money`, so a
small figure is never shown as a reassuring zero anywhere. Machine formats (JSON, CSV) keep the
full value. Pure: no imports from the rest of the package.
"""

from __future__ import annotations


def percent(x: float | None, digits: int = 1) -> str:
    """A fraction as a percentage for people: `1.2 %`; a value that would print as zero
    (an exact zero included) reads `< 0.1 %` (`< 1 %` with no decimals), never `0.0 %`."""
    if x is None:
        return "–"
    text = f"{x * 100:,.{digits}f}"
    if float(text.replace(",", "")) <= 0:
        return f"< {10 ** -digits:.{digits}f} %" if digits else "< 1 %"
    return f"{text} %"


def money(x: float | None, currency: str = "", decimals: int = 0,
          estimate: bool = True) -> str:
    """An amount for people: `1,234.50 EUR`. An amount too small to show reads `< 1` (or
    `< 0.01`), never `0`; an exact zero does too when it is an `estimate` (a model's figure),
    while a sum of entered costs shows its zero as it is."""
    if x is None:
        return "–"
    unit = f" {currency}" if currency else ""
    text = f"{x:,.{decimals}f}"
    shown = float(text.replace(",", ""))
    if shown == 0 and (x > 0 or estimate):
        return f"< {10 ** -decimals:.{decimals}f}{unit}" if decimals else f"< 1{unit}"
    return text + unit
