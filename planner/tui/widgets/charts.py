"""Small text charts: a bar of life used and a plot of odometer readings over time.

Pure functions from numbers to rich `Text`; they draw what the engine computed and decide
nothing. Plain characters, so they read on any terminal and in monochrome.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

from rich.style import Style
from rich.text import Text

from planner.formats import percent
from planner.tui.look import DIM

FULL, EMPTY, OVER = "█", "░", "▶"


def life_bar(fraction: float | None, width: int = 30, style: Style | str = "") -> Text:
    """`███████████░░░░░░░ 61 %`; past 100 % the bar is full and ends in ▶."""
    if fraction is None:
        return Text("– (no interval)", style=DIM)
    filled = max(0, min(width, round(min(fraction, 1.0) * width)))
    text = Text(FULL * filled, style=style)
    text.append(EMPTY * (width - filled), style=DIM)
    text.append(OVER if fraction > 1 else " ", style=style)
    text.append(f" {percent(fraction, 0)} used")
    if fraction > 1:
        text.append(" (past the limit)", style="bold")
    return text


def odometer_plot(points: Sequence[tuple[dt.date, float]], as_of: dt.date,
                  estimate: float | None, due_odometer: float | None, unit: str,
                  total_width: int = 60, height: int = 7) -> Text:
    """Odometer values over time (●), the estimate for the planning date (○) and the
    distance limit (a dotted line, or a note when it is off the chart), in `total_width`
    cells including the axis labels."""
    if not points:
        return Text("no odometer values yet", style=DIM)
    xs = [p[0].toordinal() for p in points]
    ys = [p[1] for p in points]
    x0, x1 = min(xs), max(max(xs), as_of.toordinal())
    top_values = [*ys, *( [estimate] if estimate is not None else [])]
    y0, y1 = min(top_values), max(top_values)
    due_in_range = due_odometer is not None and y0 <= due_odometer <= y1 * 1.25
    if due_in_range:
        y1 = max(y1, due_odometer)  # type: ignore[arg-type]
    if y1 == y0:
        y1 = y0 + 1
    if x1 == x0:
        x1 = x0 + 1

    label_w = max(len(f"{y1:,.0f}"), len(f"{y0:,.0f}"))
    width = max(10, total_width - label_w - 2)

    def col(x: float) -> int:
        return round((x - x0) / (x1 - x0) * (width - 1))

    def row(y: float) -> int:
        return height - 1 - round((y - y0) / (y1 - y0) * (height - 1))

    grid = [[" "] * width for _ in range(height)]
    if due_in_range:
        r = row(due_odometer)  # type: ignore[arg-type]
        for c in range(width):
            grid[r][c] = "┄"
    for x, y in zip(xs, ys, strict=True):
        grid[row(y)][col(x)] = "●"
    if estimate is not None:
        grid[row(estimate)][col(as_of.toordinal())] = "○"

    out = Text()
    for r, line in enumerate(grid):
        label = f"{y1:,.0f}" if r == 0 else f"{y0:,.0f}" if r == height - 1 else ""
        out.append(f"{label:>{label_w}} ┤", style=DIM)
        for ch in line:
            out.append(ch, style="bold" if ch in "●○" else ("yellow" if ch == "┄" else ""))
        out.append("\n")
    first = dt.date.fromordinal(x0).isoformat()
    last = dt.date.fromordinal(x1).isoformat()
    gap = max(1, width - len(first) - len(last))
    out.append(" " * (label_w + 2) + first + " " * gap + last + "\n", style=DIM)
    keys = ["● odometer values", f"○ estimate on {as_of}"]
    if due_in_range:
        keys.append(f"┄ limit {due_odometer:,.0f} {unit}")
    elif due_odometer is not None:
        keys.append(f"the limit, {due_odometer:,.0f} {unit}, is off the chart")
    out.append(_wrap(keys, total_width), style=DIM)
    return out


def _wrap(parts: list[str], width: int) -> str:
    """Join `parts` with two spaces, starting a new line rather than passing `width`."""
    lines = [parts[0]]
    for part in parts[1:]:
        if len(lines[-1]) + 2 + len(part) <= width:
            lines[-1] += "  " + part
        else:
            lines.append(part)
    return "\n".join(lines)
