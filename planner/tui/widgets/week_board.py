"""The week board: each working day, each bay's lane with a bar of its hours, the jobs in it.

Days run down the screen; under each day every bay has a lane line (a bar of the bay-day's
hours, one shade per job, `·` for the hours still free) and then its jobs in clock order. The
jobs the week could not place follow, each with its reason. Only job lines can be highlighted
(the others are disabled options), so up and down go from job to job.
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import Any

from rich.style import Style
from rich.text import Text
from textual.widgets import OptionList
from textual.widgets.option_list import Option

from planner.tui.look import (
    ACCENT,
    CONSEQUENCE_STYLE,
    CONSEQUENCE_SYMBOL,
    DIM,
    consequence_text,
    field_text,
    literal,
    status_text,
)
from planner.week import BaySlot, DayPlan, Segment, UnplacedJob, WeekJob, WeekPlan
from planner.week_export import day_text, hours_text, span_text

BAR = 16  # cells for a whole bay-day
SHADES = ("█", "▓")  # alternate per job so two jobs side by side stay two
SHADE_STYLES = (ACCENT, Style(color="#c98a2e"))  # and in two ambers, for colour terminals
FREE = "·"
DAY_BAND = Style(bgcolor="#2a2e33")  # the theme's panel colour: a band per day
WIDE = 70  # from this width consequences are written out, below it only their symbol
ACTION_WIDTH = 110  # from this width a required job's line says "replace now" before its label
STATUS_WIDTH = len("✗ near-limit")  # the longest status a booked job can have
CONSEQUENCE_WIDTH = len("◆ engine-damage")


def lane_bar(slot: BaySlot, cells: int = BAR) -> Text:
    """`▕████▓▓▓▓··▏`: the bay-day's hours, a shade per job, dots for the free hours."""
    bar = literal("▕", DIM)
    capacity = slot.capacity or 1.0
    pos = 0
    for k, s in enumerate(slot.segments):
        end = min(max(round((s.start_hour + s.hours) / capacity * cells), pos + 1), cells)
        bar.append(SHADES[k % 2] * (end - pos), style=SHADE_STYLES[k % 2])
        pos = end
    bar.append(FREE * (cells - pos), style=DIM)
    bar.append("▏", style=DIM)
    return bar


def _fixed(text: Text, width: int, right: bool = False) -> Text:
    """`text` cut or padded to exactly `width` cells."""
    out = text.copy()
    out.truncate(width, overflow="ellipsis", pad=not right)
    if right and out.cell_len < width:
        out = Text(" " * (width - out.cell_len)) + out
    return out


def _consequence(job: WeekJob, wide: bool) -> Text:
    if wide:
        return _fixed(consequence_text(job.consequence.value), CONSEQUENCE_WIDTH)
    value = job.consequence.value
    return Text(CONSEQUENCE_SYMBOL.get(value, " "), style=CONSEQUENCE_STYLE.get(value, ""))


class BoardLayout:
    """The widths of a board's columns, from the plan and the space there is."""

    def __init__(self, week: WeekPlan, width: int) -> None:
        self.width = max(width, 40)
        self.wide = self.width >= WIDE
        ids = [len(j.vehicle_id) for j in week.jobs] or [7]
        self.id_width = min(max(max(ids), 7), 14)

    def job_line(self, job: WeekJob, when: Text, hours: str, tail: Text) -> Text:
        line = Text("    ")
        line.append_text(_fixed(when, 11))
        line.append(" ")
        line.append_text(_fixed(literal(job.vehicle_id, "bold"), self.id_width))
        line.append(" ")
        line.append_text(_fixed(Text(hours), 7, right=True))
        line.append(" ")
        line.append_text(_fixed(status_text(job.status.value), STATUS_WIDTH))
        line.append(" ")
        line.append_text(_consequence(job, self.wide))
        line.append("  ")
        # Due now: the action before the label (narrow, the status word says it, and the day
        # count must stay in view).
        if job.required and self.width >= ACTION_WIDTH:
            line.append("replace now ", style="bold")
        line.append_text(tail)
        line.truncate(self.width, overflow="ellipsis")
        line.no_wrap = True
        return line

    def segment(self, s: Segment) -> Text:
        hours = hours_text(s.hours)
        tail = field_text(s.job.label, DIM)
        if s.day_count > 1:
            tail = Text.assemble((f"day {s.day_index} of {s.day_count} ", "bold"), tail)
        return self.job_line(s.job, Text(span_text(s).replace("-", "–")), hours, tail)

    def unplaced(self, u: UnplacedJob) -> Text:
        hours = "– h" if u.job.hours is None else hours_text(u.job.hours)
        return self.job_line(u.job, Text("not placed", style="bold"), hours,
                             field_text(u.job.label, DIM))

    def reason(self, u: UnplacedJob) -> Text:
        """The line under a job not placed: why, in full width."""
        line = Text("      ")
        line.append(literal(u.reason, "bold"))
        line.append(field_text(f": {u.detail}", DIM))
        line.truncate(self.width, overflow="ellipsis")
        return line


def _day_heading(d: DayPlan, width: int) -> Text:
    """`Tue 2026-12-08 · 15 of 16 h booked, 1 h free` on a band the width of the board."""
    line = literal(day_text(d.day), "bold")
    if not d.working:
        line.append(" · closed (holiday)")
    else:
        line.append(f" · {d.booked:g} of {d.capacity:g} h booked, {hours_text(d.left)} free")
    line.truncate(width, overflow="ellipsis", pad=True)
    line.stylize(DAY_BAND)
    return line


def _lane(slot: BaySlot) -> Text:
    line = Text(f"  bay {slot.bay} ")
    line.append_text(lane_bar(slot))
    if slot.left > 1e-9:
        line.append(f" {hours_text(slot.left)} free")
    else:
        line.append(" full", style="bold")
    return line


def board_options(week: WeekPlan, width: int) -> Iterator[tuple[str | None, Text]]:
    """(vehicle id or None, line) for every line of the board, top to bottom."""
    layout = BoardLayout(week, width)
    shown_days = [d for d in week.days if d.working or d.closed]
    for d in shown_days:
        yield None, _day_heading(d, layout.width)
        for slot in d.bays:
            yield None, _lane(slot)
            for s in slot.segments:
                yield s.job.vehicle_id, layout.segment(s)
    if not week.jobs:
        yield None, Text("")
        yield None, Text(f"No belt is due between {week.start} and {week.end}: nothing to "
                         "book.", style="bold")
    if week.unplaced:
        yield None, Text("")
        yield None, Text(f"Not placed ({len(week.unplaced)}), each with its reason",
                         style="bold")
        for u in week.unplaced:
            yield u.job.vehicle_id, layout.unplaced(u)
            yield None, layout.reason(u)


class WeekBoard(OptionList):
    """The board as an option list whose only selectable lines are jobs."""

    def __init__(self, **kwargs: Any) -> None:
        super().__init__(**kwargs)
        self.vehicle_of: dict[str, str] = {}  # option id -> vehicle id
        self.week: WeekPlan | None = None

    def show(self, week: WeekPlan) -> None:
        """Lay the plan out again, keeping the highlight on the same vehicle."""
        keep = self.current_id
        self.week = week
        width = self.scrollable_content_region.width or self.size.width or 78
        options: list[Option] = []
        self.vehicle_of = {}
        for n, (vid, line) in enumerate(board_options(week, width - 1)):
            ident = f"line-{n}"
            if vid is not None:
                self.vehicle_of[ident] = vid
            options.append(Option(line, id=ident, disabled=vid is None))
        top = self.scroll_y
        self.clear_options()
        self.add_options(options)
        self.scroll_to(y=top, animate=False, immediate=True)
        if not (keep and self.select_vehicle(keep)):
            self.select_first()

    @property
    def current_id(self) -> str | None:
        """The highlighted job's vehicle."""
        if self.highlighted is None or self.highlighted >= self.option_count:
            return None
        option = self.get_option_at_index(self.highlighted)
        return self.vehicle_of.get(option.id or "")

    def select_vehicle(self, vehicle_id: str) -> bool:
        for index in range(self.option_count):
            option = self.get_option_at_index(index)
            if self.vehicle_of.get(option.id or "") == vehicle_id:
                self.highlighted = index
                return True
        return False

    def select_first(self) -> None:
        for index in range(self.option_count):
            if not self.get_option_at_index(index).disabled:
                self.highlighted = index
                return
        self.highlighted = None
