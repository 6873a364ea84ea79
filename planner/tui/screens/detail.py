"""The detail view of one vehicle: why it is due, from which data, and what to do."""

from __future__ import annotations

from typing import TYPE_CHECKING

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Container, VerticalScroll
from textual.screen import Screen
from textual.widgets import Static

from planner.tui.actions import DETAIL
from planner.tui.look import STYLES
from planner.tui.widgets import detail_parts as parts
from planner.tui.widgets.bars import KeyStrip, TitleBar

if TYPE_CHECKING:
    from planner.tui.app import BeltplanApp

WIDE = 120  # from this width the sections sit in two columns

SECTIONS = (
    ("engine", "Engine and interval in force"),
    ("install", "Belt now running and usage"),
    ("limits", "Limits: whichever comes first"),
    ("life", "Life used"),
    ("odometer", "Odometer over time"),
    ("risk", "Failure risk (estimate)"),
    ("notes", "Notes"),
    ("jobs", "Job history"),
)


class DetailScreen(Screen):
    """Everything the planner knows and concludes about one vehicle."""

    SCOPE = DETAIL
    CSS_PATH = STYLES / "detail.tcss"

    def __init__(self, vehicle_id: str) -> None:
        super().__init__()
        self.vehicle_id = vehicle_id

    @property
    def beltapp(self) -> BeltplanApp:
        return self.app  # type: ignore[return-value]

    def compose(self) -> ComposeResult:
        yield TitleBar()
        with VerticalScroll(id="detail-body"):
            yield Static(id="d-heading", markup=False)
            yield Static(id="d-todo", markup=False)
            with Container(id="d-sections"):
                for key, title in SECTIONS:
                    box = Static(id=f"d-{key}", classes="section", markup=False)
                    box.border_title = title
                    yield box
        yield KeyStrip(DETAIL)

    def on_mount(self) -> None:
        self.refresh_from_session()

    def on_resize(self) -> None:
        wide = self.size.width >= WIDE
        self.query_one("#d-sections").set_class(wide, "-wide")
        self.refresh_from_session()

    def refresh_from_session(self) -> None:
        """Redraw from the current plan (after an edit or a new planning date)."""
        session = self.beltapp.session
        if not session.ok:
            return
        self.beltapp.show_title(self.query_one(TitleBar))
        plan = session.plan_of(self.vehicle_id)
        if plan is None:  # deleted, or renamed by an edit
            self.query_one("#d-heading", Static).update(
                Text(f"{self.vehicle_id} is no longer in the fleet: press esc", style="bold"))
            return
        record = next(r for r in session.records() if r["id"] == self.vehicle_id)
        fleet = session.fleet
        assert fleet is not None
        unit, as_of = fleet.unit, session.as_of
        todo = parts.what_to_do(plan)
        box = self.query_one("#d-todo", Static)
        box.display = todo is not None
        box.update(todo or "")
        box.set_class(plan.status.value == "overdue", "-overdue")
        self.query_one("#d-heading", Static).update(parts.heading(plan))
        # The section's inner width: body padding, border, section padding, scrollbar.
        column = self.size.width // 2 if self.size.width >= WIDE else self.size.width
        chart_width = column - 9
        content = {
            "engine": parts.engine(plan, fleet),
            "install": parts.install_and_usage(plan, unit),
            "limits": parts.limits(plan, unit, as_of),
            "life": parts.life(plan),
            "odometer": parts.odometer(plan, unit, as_of, min(chart_width, 76)),
            "risk": parts.risk(record, session.assessment().model.describe()),
            "notes": parts.notes(record, plan),
            "jobs": parts.jobs(plan, unit),
        }
        for key, renderable in content.items():
            self.query_one(f"#d-{key}", Static).update(renderable)
