"""The forms: which fields each has and what applying it does.

Edit forms build the candidate text with `planner.edit` and parse it with the session's
`check` (the loader's rules), so they return text that is known to load.
"""

from __future__ import annotations

import datetime as dt
from typing import Any

from dateutil.relativedelta import relativedelta
from rich.text import Text

from planner import edit
from planner.errors import PlannerError, Problem
from planner.fleet import (
    BeltHistory,
    Drive,
    Duty,
    EngineProfile,
    Fuel,
    Interference,
    JobReason,
    Vehicle,
)
from planner.plan import VehiclePlan
from planner.tui.forms import FormField, FormSpec, choices
from planner.tui.look import DIM, field_text, literal
from planner.tui.session import EXPORT_FORMATS, Session

F = FormField


def _words(enum: Any) -> tuple[str, ...]:
    return tuple(e.value for e in enum)


def _subject(plan: VehiclePlan) -> Text:
    text = literal(plan.id, "bold")
    if plan.vehicle.label:
        text.append(" ")
        text.append(field_text(plan.vehicle.label))
    return text


def _checked(session: Session, text: str) -> str:
    session.check(text)  # raises PlannerError with every problem, located
    return text


def reading_form(session: Session, plan: VehiclePlan) -> FormSpec:
    unit = session.fleet.unit if session.fleet else "km"
    intro = _subject(plan)
    use = plan.usage
    if use.last_date is not None:
        intro.append(f"\nlast odometer value {use.last_odometer:,.0f} {unit} on "
                     f"{use.last_date}", style=DIM)
    if use.est_odometer is not None:
        intro.append(f"\nestimate on {session.as_of}: {use.est_odometer:,.0f} {unit}", style=DIM)

    def submit(v: dict[str, Any]) -> str:
        return _checked(session, edit.add_reading(session.text, plan.id, v["date"],
                                                  v["odometer"]))

    return FormSpec("Add an odometer reading", [
        F("date", "date", "date", session.as_of, required=True),
        F("odometer", f"odometer, {unit}", "distance", required=True,
          help="as shown on the instrument; odometers only go forward"),
    ], submit, intro=intro, subject=plan.id)


def job_form(session: Session, plan: VehiclePlan) -> FormSpec:
    unit = session.fleet.unit if session.fleet else "km"
    est = plan.usage.est_odometer

    def submit(v: dict[str, Any]) -> str:
        job = {k: v[k] for k in edit.JOB_KEYS}
        return _checked(session, edit.add_belt_job(session.text, plan.id, job))

    return FormSpec("Record a belt job", [
        F("date", "date", "date", session.as_of, required=True),
        F("odometer", f"odometer, {unit}", "distance", required=True,
          placeholder=f"about {est:,.0f}" if est is not None else ""),
        F("reason", "reason", "choice", "scheduled", required=True,
          choices=choices(_words(JobReason)),
          help="scheduled: at the interval · failed: the drive let go · precaution: early"),
        F("work", "work done", "text", ", ".join(plan.spec.parts) or None,
          placeholder="belt, tensioner, idler, water pump"),
        F("notes", "notes", "text"),
    ], submit, intro=_subject(plan), subject=plan.id, apply_words="Record")


VEHICLE_FIELDS = (
    ("id", "id", "text"), ("label", "label", "text"), ("engine", "engine profile", "choice"),
    ("duty", "duty", "choice"), ("in_service", "in service since", "date"),
    ("in_service_odometer", "odometer then", "distance"),
    ("belt_history", "belt history", "choice"), ("first_registered", "first registered", "date"),
    ("fuel", "fuel", "choice"), ("drive", "drive", "choice"),
    ("interference", "interference", "choice"),
    ("interval_distance", "interval", "distance"),
    ("interval_months", "interval, months", "months"),
    ("severe_interval_distance", "severe interval", "distance"),
    ("severe_interval_months", "severe interval, months", "months"),
    ("failure_cost", "failure cost", "number"), ("notes", "notes", "text"),
)
_ENUM_CHOICES = {"duty": Duty, "belt_history": BeltHistory, "fuel": Fuel, "drive": Drive,
                 "interference": Interference, "reason": JobReason}
_FROM_PROFILE = {"fuel", "drive", "interference", "interval_distance", "interval_months",
                 "severe_interval_distance", "severe_interval_months", "failure_cost"}


def vehicle_form(session: Session, vehicle: Vehicle | None) -> FormSpec:
    """Add a vehicle (`vehicle` None) or edit one; blank override fields use the profile's."""
    assert session.fleet is not None
    unit = session.fleet.unit
    engines = tuple((pid, f"{pid}  {p.description}".strip())
                    for pid, p in session.fleet.engines.items())
    fields = []
    for name, label, kind in VEHICLE_FIELDS:
        if name not in Vehicle.model_fields:
            continue
        value = getattr(vehicle, name) if vehicle is not None else None
        if vehicle is None and name in ("duty", "belt_history"):
            value = Vehicle.model_fields[name].default
        if kind == "distance":
            label = f"{label}, {unit}"
        opts = engines if name == "engine" else (
            choices(_words(_ENUM_CHOICES[name])) if kind == "choice" else ())
        fields.append(F(name, label, kind, value, required=name in ("id", "in_service"),
                        choices=opts, placeholder="from the profile"
                        if name in _FROM_PROFILE else ("none" if name == "engine" else "")))
    fields[0] = F("id", "id", "text", vehicle.id if vehicle else None, required=True,
                  help="fleet number or plate; must be unique")

    def submit(v: dict[str, Any]) -> str:
        if vehicle is None:
            return _checked(session, edit.add_vehicle(session.text, v))
        return _checked(session, edit.edit_vehicle(session.text, vehicle.id, v))

    intro = Text("Blank drive and interval fields come from the engine profile.", style=DIM)
    title = "Add a vehicle" if vehicle is None else f"Edit vehicle {vehicle.id}"
    return FormSpec(title, fields, submit, intro=intro,
                    subject=vehicle.id if vehicle else None,
                    apply_words="Add" if vehicle is None else "Apply")


ENGINE_FIELDS = (
    ("description", "description", "text"), ("fuel", "fuel", "choice"),
    ("drive", "drive", "choice"), ("interference", "interference", "choice"),
    ("interval_distance", "interval", "distance"),
    ("interval_months", "interval, months", "months"),
    ("severe_interval_distance", "severe interval", "distance"),
    ("severe_interval_months", "severe interval, months", "months"),
    ("labour_hours", "labour hours", "number"), ("parts", "parts (a, b, …)", "list"),
    ("parts_cost", "parts cost", "number"), ("failure_cost", "failure cost", "number"),
)


def engine_form(session: Session, profile_id: str | None) -> FormSpec:
    """Add a profile (`profile_id` None) or edit one (its id stays: vehicles refer to it)."""
    assert session.fleet is not None
    unit = session.fleet.unit
    profile: EngineProfile | None = session.fleet.engines.get(profile_id) if profile_id else None
    fields = [F("id", "profile id", "text", profile_id, required=True, disabled=profile_id
                is not None, help="" if profile_id else "short, e.g. tesk; vehicles name it "
                "in engine = \"…\"")]
    for name, label, kind in ENGINE_FIELDS:
        value = getattr(profile, name) if profile is not None else None
        if kind == "distance":
            label = f"{label}, {unit}"
        fields.append(F(name, label, kind, value, choices=choices(
            _words(_ENUM_CHOICES[name])) if kind == "choice" else ()))

    def submit(v: dict[str, Any]) -> str:
        pid = profile_id or v["id"]
        if profile_id is None and pid in session.fleet.engines:  # type: ignore[union-attr]
            raise PlannerError("profile exists", problems=[Problem(
                f"there is already a profile {pid!r}", ("id",),
                hint="choose another id, or edit that profile instead")])
        values = {k: val for k, val in v.items() if k != "id"}
        return _checked(session, edit.set_engine(session.text, pid, values))

    title = f"Edit engine profile {profile_id}" if profile_id else "Add an engine profile"
    return FormSpec(title, fields, submit, apply_words="Apply" if profile_id else "Add",
                    intro=Text("Take intervals from the maker's schedule, never from memory.",
                               style=DIM))


def date_form(session: Session) -> FormSpec:
    as_of = session.as_of
    month_end = as_of + relativedelta(day=31)
    quick = [
        ("end of this month", {"as_of": month_end.isoformat()}),
        ("end of next month", {"as_of": (as_of + relativedelta(months=1, day=31)).isoformat()}),
        ("+90 days", {"as_of": (as_of + dt.timedelta(days=90)).isoformat()}),
        (f"back to {session.start_as_of}", {"as_of": session.start_as_of.isoformat()}),
    ]
    return FormSpec("Planning date", [
        F("as_of", "plan as of", "date", as_of, required=True,
          help="what is due by this day? statuses and estimates move with it"),
    ], lambda v: v["as_of"], quick=quick, apply_words="Plan")


def export_form(session: Session, records: list[dict[str, Any]]) -> FormSpec:
    def submit(v: dict[str, Any]) -> Any:
        return session.export(records, v["format"], v["file"])

    def changed(name: str, value: Any, form: Any) -> None:
        if name == "format" and value:
            form.set_raw("file", str(session.default_export_path(value)))

    n = len(records)
    intro = Text(f"{n} vehicle{'s' if n != 1 else ''} as listed (filters and order apply); "
                 "the same writers as beltplan list --format.", style=DIM)
    return FormSpec("Export the list", [
        F("format", "format", "choice", "csv", required=True,
          choices=tuple((k, k) for k in EXPORT_FORMATS)),
        F("file", "file", "text", str(session.default_export_path("csv")), required=True,
          help="replaced if it exists; relative names go beside the fleet file"),
    ], submit, intro=intro, changed=changed, apply_words="Export")
