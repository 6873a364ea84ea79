"""The week view: the workshop's days and bays, the jobs in them, what did not fit and why,
the parts to order, the customers to call and the totals.

The plan is `planner.week.plan_week`'s (through `WeekState`); moves go through `week.move`, so
a refusal is the engine's reason. The plan is for this session only and never saved into the
fleet file; the help line under the board says so.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from rich.console import Group
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import ContentSwitcher, OptionList, Static

from planner.errors import PlannerError
from planner.tui.actions import BY_ID, WEEK, bindings, first_key
from planner.tui.look import ACCENT, DIM, STYLES, field_text, literal
from planner.tui.screens.week_actions import WeekViewActions
from planner.tui.widgets import week_sections
from planner.tui.widgets.bars import KeyStrip, TitleBar
from planner.tui.widgets.week_board import WeekBoard
from planner.week import WeekPlan
from planner.week_export import day_text, money, span_text

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp
    from planner.tui.week_state import WeekState

WIDE = 150  # from this width the parts order and the call list sit beside the board

# (section id, the action that shows it, its words on the tab)
SECTIONS = (("board", "week_board", "week"), ("parts", "week_parts", "parts"),
            ("calls", "week_calls", "calls"), ("totals", "week_totals", "totals"))


class SectionTab(Static):
    """One tab of the section strip; a click shows its section."""

    def __init__(self, section: str, **kwargs: Any) -> None:
        super().__init__(markup=False, **kwargs)
        self.section = section

    def on_click(self) -> None:
        screen = self.screen
        if isinstance(screen, WeekScreen):
            screen.show_section(self.section)


class WeekScreen(WeekViewActions, Screen):
    """The workshop's week, to look at, rearrange and export."""

    SCOPE = WEEK
    BINDINGS = bindings("screen", WEEK)
    CSS_PATH = STYLES / "week.tcss"
    AUTO_FOCUS = "#w-board-list"

    def __init__(self) -> None:
        super().__init__()
        self.section = "board"
        self.message: Text | None = None  # a refusal, shown until the highlight moves

    @property
    def beltapp(self) -> BeltplanApp:
        return self.app  # type: ignore[return-value]

    @property
    def state(self) -> WeekState:
        return self.beltapp.week_state()

    @property
    def board(self) -> WeekBoard:
        return self.query_one(WeekBoard)

    def compose(self) -> ComposeResult:
        yield TitleBar()
        yield Static(id="w-summary", markup=False)
        with Horizontal(id="w-tabs"):
            for section, _, _ in SECTIONS:
                yield SectionTab(section, id=f"tab-{section}", classes="tab")
            yield Static(id="w-money", markup=False)
        with ContentSwitcher(id="w-sections", initial="w-board"):
            with Horizontal(id="w-board"):
                yield WeekBoard(id="w-board-list")
                with VerticalScroll(id="w-side"):  # the lists beside the board, when wide
                    yield Static(id="w-side-text", markup=False)
            for section in ("parts", "calls", "totals"):
                with VerticalScroll(id=f"w-{section}", classes="w-section"):
                    yield Static(id=f"w-{section}-text", markup=False)
        yield Static(id="w-info", markup=False)
        yield Static(id="w-help", markup=False)
        yield KeyStrip(WEEK)

    def on_mount(self) -> None:
        self.refresh_from_session()

    # -- drawing ----------------------------------------------------------------------------
    def refresh_from_session(self) -> None:
        """Redraw from the plan; planned again if the fleet or the planning date changed."""
        session = self.beltapp.session
        if not session.ok:
            return
        try:
            week = self.state.plan()
        except PlannerError as err:
            self.beltapp.say(err.render(), "error")
            return
        if self.state.dropped:
            n = self.state.dropped
            self.state.dropped = 0
            self.beltapp.say(f"The fleet or the planning date changed: the week was planned "
                             f"again and {n} move{'s were' if n != 1 else ' was'} dropped.",
                             "warning")
        self.show_plan(week)

    def show_plan(self, week: WeekPlan) -> None:
        self.beltapp.show_title(self.query_one(TitleBar))
        self.query_one("#w-summary", Static).update(self._summary(week))
        self._tabs(week)
        self.board.show(week)
        self.query_one("#w-parts-text", Static).update(week_sections.parts_order(week))
        self.query_one("#w-calls-text", Static).update(week_sections.call_list(week))
        self.query_one("#w-totals-text", Static).update(week_sections.totals(week))
        self.query_one("#w-side-text", Static).update(Group(
            week_sections.parts_order(week), Text(""), week_sections.call_list(week)))
        self.query_one("#w-help", Static).update(Text(
            "Not saved to the fleet file: this plan and its moves last for this session.",
            style=DIM))
        self._info()

    def _summary(self, week: WeekPlan) -> Text:
        """`Mon 2026-12-07 to Sun 2026-12-13 │ 9 jobs, 33 of 80 h │ 0 not placed │ 1 move`;
        the later parts only when they fit."""
        text = literal(f"{day_text(week.start)} to {day_text(week.end)}", "bold")
        n, moves = len(week.bookings), len(self.state.moves)
        parts = [Text(f"{n} job{'s' if n != 1 else ''}, {week.labour_hours:g} of "
                      f"{week.capacity:g} h"),
                 Text(f"{len(week.unplaced)} not placed", style="bold" if week.unplaced else "")]
        if moves:
            parts.append(Text(f"{moves} move{'s' if moves != 1 else ''}", style=ACCENT))
        parts.append(Text(f"planned on {week.as_of}", style=DIM))
        room = self.size.width - 2
        for part in parts:
            if text.cell_len + 3 + part.cell_len > room:
                break
            text.append(" │ ", style=DIM)
            text.append_text(part)
        return text

    def _tabs(self, week: WeekPlan) -> None:
        counts = {"parts": len(week.parts_order), "calls": len(week.call_list)}
        for section, action, words in SECTIONS:
            tab = self.query_one(f"#tab-{section}", SectionTab)
            label = f" {first_key(BY_ID[action].keys)} {words}"
            if section in counts:
                label += f" ({counts[section]})"
            tab.update(Text(label + " "))
            tab.set_class(section == self.section, "-current")
        self.query_one("#w-money", Static).update(Text(
            f"total {money(week.total_cost, week.currency)}", style=DIM))

    def show_section(self, section: str) -> None:
        self.section = section
        self.query_one(ContentSwitcher).current = f"w-{section}"
        self.query_one("#w-info").display = section == "board"  # it is about the board's job
        week = self.board.week
        if week is not None:
            self._tabs(week)
        self.query_one("#w-board-list" if section == "board" else f"#w-{section}").focus()

    def _info(self) -> None:
        box = self.query_one("#w-info", Static)
        box.set_class(self.message is not None, "-refused")
        if self.message is not None:
            box.update(self.message)
            return
        week, vid = self.board.week, self.board.current_id
        if week is None or vid is None:
            box.update(Text("No job to highlight." if week is None or not week.jobs else "",
                            style=DIM))
            return
        box.update(job_info(week, vid))

    def refused(self, err: PlannerError) -> None:
        """Show why the engine refused a move, until the highlight moves."""
        text = literal(err.title, "bold")
        if err.message:
            text.append("\n")
            text.append(literal(err.message))
        self.message = text
        if self.section != "board":
            self.show_section("board")
        self._info()

    # -- events -----------------------------------------------------------------------------
    def on_option_list_option_highlighted(self, event: OptionList.OptionHighlighted) -> None:
        self.message = None
        self._info()

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        vid = self.board.current_id
        if vid is not None:
            self.beltapp.open_detail(vid)

    def on_resize(self, event: Any) -> None:
        self.query_one("#w-board").set_class(self.size.width >= WIDE, "-wide")
        week = self.board.week
        if week is not None:
            self.call_after_refresh(self.show_plan, week)


def job_info(week: WeekPlan, vehicle_id: str) -> Text:
    """Two lines on the highlighted job: what and where; why it is due, or why not placed."""
    job = week.job(vehicle_id)
    if job is None:
        return Text("")
    text = literal(job.vehicle_id, "bold")
    if job.label:
        text.append(" ")
        text.append(field_text(job.label))
    booking = week.booking(vehicle_id)
    if booking is not None:
        first = booking.segments()[0]
        days = len(booking.days)
        text.append(" · ", style=DIM)
        text.append(f"bay {booking.bay}, {day_text(booking.first_day)} {span_text(first)}"
                    + (f" (+{days - 1} day{'s' if days > 2 else ''})" if days > 1 else ""))
    text.append(" · ", style=DIM)
    text.append(field_text(job.engine))
    if booking is not None:
        text.append("\n")
        text.append(field_text(job.reason))
        text.append(" · parts: ", style=DIM)
        text.append(field_text(", ".join(job.parts) or "not listed"))
        if booking.parts_ready is not None:
            text.append(f", in on {booking.parts_ready}", style=DIM)
        return text
    unplaced = next((u for u in week.unplaced if u.job.vehicle_id == vehicle_id), None)
    text.append("\n")
    if unplaced is not None:
        text.append("not placed: ", style="bold")
        text.append(field_text(f"{unplaced.reason}: {unplaced.detail}"))
    return text
