"""The fleet file's data model: one pydantic class per TOML table, one field per key.

Every field carries a description; the JSON Schema (`beltplan schema`) and the README's file
reference come from here. Structural rules (types, ranges, allowed words, unknown keys) live on
the fields; rules that need the whole fleet (unique ids, known profiles, odometers that only go
forward) live in `planner.validate`.
"""

from __future__ import annotations

import datetime as dt
import re
from enum import StrEnum
from typing import Annotated, Literal

from pydantic import (
    AfterValidator,
    BaseModel,
    BeforeValidator,
    ConfigDict,
    Field,
    Strict,
    model_validator,
)
from pydantic.dataclasses import dataclass as pydantic_dataclass
from pydantic.fields import FieldInfo

from planner.safetext import first_unshown

SCHEMA_VERSION = 1

# Sanity ceilings: a value above these is a typing slip, never a real vehicle.
MAX_ODOMETER = 5_000_000
MAX_INTERVAL_DISTANCE = 1_000_000
MAX_INTERVAL_MONTHS = 360
MAX_MONEY = 10_000_000.0
MAX_HOURS = 200.0

# Ranges that keep the risk numerics finite (the field descriptions say why).
MIN_SHAPE = 0.5
MAX_SHAPE = 20.0
MIN_SHARE = 0.0001
MAX_SHARE = 0.5
# The shortest working day a bay can have: half an hour; a job of many hours then spans a known
# number of days, never millions of them.
MIN_HOURS_PER_DAY = 0.5


class Drive(StrEnum):
    """How the crankshaft drives the camshafts."""

    BELT = "belt"
    WET_BELT = "wet-belt"
    CHAIN = "chain"
    GEAR = "gear"

    @property
    def has_interval(self) -> bool:
        """Belts (dry or wet) are replaced by interval; chains and gears on condition."""
        return self in (Drive.BELT, Drive.WET_BELT)


class Interference(StrEnum):
    """Whether valves and pistons can meet when the cam drive fails."""

    INTERFERENCE = "interference"
    NON_INTERFERENCE = "non-interference"
    UNKNOWN = "unknown"


class Fuel(StrEnum):
    PETROL = "petrol"
    DIESEL = "diesel"
    OTHER = "other"


class Duty(StrEnum):
    NORMAL = "normal"
    SEVERE = "severe"


class BeltHistory(StrEnum):
    KNOWN = "known"
    UNKNOWN = "unknown"


class JobReason(StrEnum):
    SCHEDULED = "scheduled"
    FAILED = "failed"
    PRECAUTION = "precaution"


class DistanceUnit(StrEnum):
    KM = "km"
    MI = "mi"


# Every scalar type is Strict: a value of the wrong TOML type is an error, never converted
# ("168500" is not a number, 1 is not a date, 12.0 is not a whole number of months).
STRICT = ConfigDict(extra="forbid", frozen=True, allow_inf_nan=False)
STRICT_DATACLASS = ConfigDict(extra="forbid", allow_inf_nan=False)
Day = Annotated[dt.date, Strict()]
Flag = Annotated[bool, Strict()]


# Control characters (Unicode category Cc, but tab and line ends) reach the file only as
# escapes (\u001b, \b …; the TOML 1.0 spec forbids them raw) and would reach the terminal, a CSV
# or a job sheet as commands: an escape sequence recolours or rewrites the screen.
CONTROL_CHARACTER = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f]")


def _printable(text: str) -> str:
    """Refuse control characters (the loader words the problem; see validate)."""
    if not text.isprintable() and CONTROL_CHARACTER.search(text):
        raise ValueError("contains a control character")
    return text


def _one_line(text: str) -> str:
    """An id or a name of a table: no control character, line end, tab or format character
    (it is shown in every message and list, and starts a row of them)."""
    if first_unshown(text) is not None:
        raise ValueError(ID_REFUSED)
    return text


ID_REFUSED = "holds a control character, line end, tab or format character"


def _whole_number(value: object) -> object:
    """A Literal[1] alone would take `true` for 1."""
    if type(value) is not int:
        raise ValueError("must be the whole number 1")
    return value


class _Model(BaseModel):
    model_config = STRICT


Odometer = Annotated[float, Strict(), Field(ge=0, le=MAX_ODOMETER)]
Money = Annotated[float, Strict(), Field(ge=0, le=MAX_MONEY)]
Hours = Annotated[float, Strict(), Field(gt=0, le=MAX_HOURS)]
IntervalDistance = Annotated[float, Strict(), Field(gt=0, le=MAX_INTERVAL_DISTANCE)]
IntervalMonths = Annotated[int, Strict(), Field(gt=0, le=MAX_INTERVAL_MONTHS)]
ShortText = Annotated[str, Strict(), Field(max_length=2000), AfterValidator(_printable)]


@pydantic_dataclass(frozen=True, slots=True, config=STRICT_DATACLASS)
class Reading:
    """One dated odometer reading (fuel card, driver's log, telematics, workshop).

    A pydantic dataclass rather than a model: a fleet holds hundreds of thousands of readings,
    and this validates them about three times faster. `fields_of` reads its fields.
    """

    date: Day = Field(description="Day of the reading (ISO 8601, e.g. 2026-11-20).")
    odometer: Odometer = Field(description="Odometer at that day, in the fleet's distance unit.")


class BeltJob(_Model):
    """A cam-drive job done on the vehicle: the belt fitted then is the one now running."""

    date: Day = Field(description="Day the job was done.")
    odometer: Odometer = Field(description="Odometer at the job, in the fleet's distance unit.")
    reason: JobReason = Field(
        description="scheduled (at the interval), failed (the drive let go) or precaution "
        "(early, e.g. on acquisition or with other work)."
    )
    work: ShortText = Field(default="", description="What was replaced, e.g. 'belt, tensioner'.")
    notes: ShortText = Field(default="", description="Free text kept with the job.")


class DateRange(_Model):
    """A span of days, both ends included."""

    start: Day = Field(description="First day (included).")
    end: Day = Field(description="Last day (included).")
    reason: ShortText = Field(default="", description="Why, e.g. 'long route', 'customer away'.")


class Contact(_Model):
    """Who to call about a customer car (garages)."""

    name: ShortText = Field(default="", description="Customer's name.")
    phone: ShortText = Field(default="", description="Telephone number.")
    email: ShortText = Field(default="", description="E-mail address.")


class DriveSpec(_Model):
    """Fields an engine profile sets and a vehicle may override."""

    fuel: Fuel | None = Field(default=None, description="petrol, diesel or other.")
    drive: Drive | None = Field(default=None,
                                description="belt, wet-belt, chain or gear.")
    interference: Interference | None = Field(
        default=None,
        description="interference, non-interference or unknown (unknown is planned as "
        "interference and shown as unverified).",
    )
    interval_distance: IntervalDistance | None = Field(
        default=None, description="Maker's replacement interval by distance (fleet unit)."
    )
    interval_months: IntervalMonths | None = Field(
        default=None, description="Maker's replacement interval by age, in calendar months."
    )
    severe_interval_distance: IntervalDistance | None = Field(
        default=None, description="Maker's severe-service interval by distance, if published."
    )
    severe_interval_months: IntervalMonths | None = Field(
        default=None, description="Maker's severe-service interval by age, if published."
    )
    labour_hours: Hours | None = Field(default=None, description="Workshop hours for the job.")
    parts: list[Annotated[str, Strict(), Field(min_length=1, max_length=200),
                          AfterValidator(_printable)]] | None = Field(
        default=None, description="Parts for the job, e.g. ['belt kit', 'water pump']."
    )
    parts_cost: Money | None = Field(default=None, description="Cost of the parts.")
    failure_cost: Money | None = Field(
        default=None, description="Repair estimate if the drive fails (engine damage)."
    )


# The override fields, in file order; the resolver in `planner.plan` walks this tuple.
SPEC_FIELDS: tuple[str, ...] = tuple(DriveSpec.model_fields)


class EngineProfile(DriveSpec):
    """An engine shared by several vehicles: its drive, intervals, job and costs."""

    description: ShortText = Field(default="", description="What the profile is, in words.")


class Vehicle(DriveSpec):
    """One vehicle. Drive fields given here override those of its engine profile."""

    id: Annotated[str, Strict(), Field(min_length=1, max_length=64),
                  AfterValidator(_one_line)] = Field(
        description="Unique id (fleet number or plate).")
    label: ShortText = Field(default="", description="Name shown beside the id.")
    engine: Annotated[str, Strict(), AfterValidator(_one_line)] | None = Field(
        default=None, description="Id of an [engines.<id>] profile.")
    duty: Duty = Field(default=Duty.NORMAL,
                       description="normal or severe (towing, short trips, stop-start delivery, "
                       "long idling, dust, extreme temperatures).")
    in_service: Day = Field(description="Day the vehicle entered service (or the fleet).")
    in_service_odometer: Odometer = Field(
        default=0, description="Odometer on the in-service day."
    )
    first_registered: Day | None = Field(
        default=None,
        description="Day the vehicle was first registered, if it was bought used; with unknown "
        "belt history the risk model assumes a belt this old.",
    )
    belt_history: BeltHistory = Field(
        default=BeltHistory.KNOWN,
        description="known: the factory belt (or a recorded job) is the one running; unknown: "
        "bought used without a belt record.",
    )
    readings: list[Reading] = Field(default_factory=list, description="Odometer readings.")
    belt_jobs: list[BeltJob] = Field(default_factory=list, description="Cam-drive jobs done.")
    unavailable: list[DateRange] = Field(
        default_factory=list, description="Days the vehicle cannot come to the workshop."
    )
    contact: Contact | None = Field(default=None, description="Who to call (garages).")
    notes: ShortText = Field(default="", description="Free text kept with the vehicle.")


OLD_SETTING_NAMES = {"due_soon_distance": "near_limit_distance", "due_soon_days": "near_limit_days"}


class FleetSettings(_Model):
    """The [fleet] table: names, units and warning thresholds."""

    name: ShortText = Field(default="", description="Name of the fleet or garage.")
    distance_unit: DistanceUnit = Field(
        default=DistanceUnit.KM, description="km or mi: the unit of every distance in the file."
    )
    near_limit_distance: Annotated[float, Strict(), Field(ge=0, le=MAX_INTERVAL_DISTANCE)] = Field(
        default=5000, description="Warn this far before a distance limit."
    )
    near_limit_days: Annotated[int, Strict(), Field(ge=0, le=3650)] = Field(
        default=60, description="Warn this many days before a date limit."
    )
    # The keys' earlier names, still read so that older files load unchanged; the new name wins
    # when a file gives both (`planner.validate.notices` tells the user of the new names).
    due_soon_distance: Annotated[float, Strict(), Field(ge=0, le=MAX_INTERVAL_DISTANCE)] | None = (
        Field(default=None, description="Earlier name of near_limit_distance, still read."))
    due_soon_days: Annotated[int, Strict(), Field(ge=0, le=3650)] | None = Field(
        default=None, description="Earlier name of near_limit_days, still read.")

    @model_validator(mode="after")
    def _earlier_names(self) -> FleetSettings:
        for old, new in OLD_SETTING_NAMES.items():
            value = getattr(self, old)
            if value is not None and new not in self.model_fields_set:
                object.__setattr__(self, new, value)
        return self
    default_daily_distance: Annotated[float, Strict(), Field(ge=0, le=5000)] | None = Field(
        default=None, description="Distance per day assumed when a vehicle has too few readings."
    )
    labour_rate: Money = Field(default=0.0, description="Workshop cost per labour hour.")
    breakdown_cost: Money = Field(
        default=400.0,
        description="Cost of a drive failure on a non-interference engine: tow, belt job and a "
        "lost day (default 400, from memory: set your own).",
    )
    currency: Annotated[str, Strict(), Field(max_length=8), AfterValidator(_one_line)] = Field(
        default="", description="Currency shown beside costs, e.g. 'EUR' (display only)."
    )


class RiskSettings(_Model):
    """The [risk] table: assumptions of the failure-risk model (shown wherever it is used)."""

    shape: Annotated[float, Strict(), Field(ge=MIN_SHAPE, le=MAX_SHAPE)] = Field(
        default=3.5, description="Weibull shape beta of drive life (default 3.5, from memory). "
        f"From {MIN_SHAPE} to {MAX_SHAPE:g}: below, the scale that puts the share failed at the "
        "interval grows past any number a computer holds (at 0.003 it is 10^666 intervals); "
        "above, every belt would fail at one age, which no wear-out data shows."
    )
    share_failed_at_interval: Annotated[float, Strict(), Field(ge=MIN_SHARE, le=MAX_SHARE)] = (
        Field(
            default=0.01,
            description="Share of drives expected to have failed by the maker's interval "
            f"(default 0.01, from memory). From {MIN_SHARE:g} to {MAX_SHARE:g}: a maker sets "
            "its interval well before half the belts fail, and below one in ten thousand the "
            "figure is beyond what any record could show.",
        ))
    horizon_days: Annotated[int, Strict(), Field(ge=1, le=3650)] = Field(
        default=90, description="Look-ahead for the failure probability, in days."
    )
    use_fleet_fit: Flag = Field(
        default=False,
        description="Use the Weibull fit from the fleet's own job history instead of the "
        "assumptions above, when the history has enough failures.",
    )


Weekday = Literal["mon", "tue", "wed", "thu", "fri", "sat", "sun"]


class Workshop(_Model):
    """The [workshop] table: bays and hours for the week plan."""

    bays: Annotated[int, Strict(), Field(ge=1, le=100)] = Field(default=1,
                                                                description="Number of bays.")
    hours_per_day: Annotated[float, Strict(), Field(ge=MIN_HOURS_PER_DAY, le=24)] = Field(
        default=8.0, description="Working hours per bay per day (jobs start from 08:00). "
        f"From {MIN_HOURS_PER_DAY} to 24: a shorter day is no working day, and would split one "
        "job over thousands of days."
    )
    weekdays: list[Weekday] = Field(
        default_factory=lambda: ["mon", "tue", "wed", "thu", "fri"],
        description="Working weekdays.",
    )
    closed: list[Day] = Field(default_factory=list, description="Closed days (holidays).")
    parts_lead_days: Annotated[int, Strict(), Field(ge=0, le=365)] = Field(
        default=2, description="Calendar days from ordering parts to having them (two working "
        "days from a Friday order is 4)."
    )
    kits_in_stock: Flag = Field(
        default=False, description="Common kits are on the shelf: no lead time."
    )


class Fleet(_Model):
    """A whole fleet file."""

    schema_version: Annotated[Literal[1], BeforeValidator(_whole_number)] = Field(
        default=SCHEMA_VERSION, alias="schema", description="Format version of the file: 1."
    )
    fleet: FleetSettings = Field(default_factory=FleetSettings)
    engines: dict[Annotated[str, Strict(), Field(min_length=1, max_length=64),
                            AfterValidator(_one_line)],
                  EngineProfile] = Field(default_factory=dict, description="Engine profiles by id.")
    vehicles: list[Vehicle] = Field(default_factory=list, description="The vehicles.")
    risk: RiskSettings = Field(default_factory=RiskSettings)
    workshop: Workshop = Field(default_factory=Workshop)

    model_config = ConfigDict(**STRICT, populate_by_name=True)

    @property
    def unit(self) -> str:
        return self.fleet.distance_unit.value


def fields_of(model: type) -> dict[str, FieldInfo]:
    """The fields of a fleet-file table's class, a pydantic model or a pydantic dataclass."""
    fields = getattr(model, "model_fields", None)
    return fields if fields is not None else model.__pydantic_fields__


def is_table_class(obj: object) -> bool:
    """A class that describes a table of the fleet file."""
    return isinstance(obj, type) and (issubclass(obj, BaseModel)
                                      or hasattr(obj, "__pydantic_fields__"))


def json_schema() -> dict:
    """The JSON Schema of the fleet file, for editors."""
    schema = Fleet.model_json_schema(by_alias=True)
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "beltplan fleet file"
    return schema
