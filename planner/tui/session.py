"""What the terminal UI is working on: one fleet file, its edited text, the planning date.

No Textual here: the session is the UI's model and is tested on its own. It holds the text the
user is editing (with an undo stack of earlier texts), parses every candidate text with the
loader's own rules, saves through `fileio.save_fleet_text` and asks the engine for the plan.
It never decides a planning rule itself.

Reading a big file and planning it take seconds, so both come in two halves: `read()` and
`plan_job()` do the work without touching the session (the UI runs them in a worker thread),
and `adopt()` and `store()` make the result current (on the UI thread, in one step).
"""

from __future__ import annotations

import datetime as dt
import time
from collections import Counter
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from planner import export, fleetcache
from planner.errors import PlannerError, Problem
from planner.fileio import (
    LoadedFleet,
    backup_path,
    digest_of,
    load_fleet,
    parse_fleet_text,
    save_fleet_text,
    warnings_of,
    write_new,
    write_output,
)
from planner.fleet import Fleet
from planner.plan import Status, VehiclePlan
from planner.reparse import reparse_fleet_text
from planner.risk import FleetAssessment, assess_fleet_plan
from planner.validate import vehicle_warnings

EXPORT_FORMATS: dict[str, str] = {"csv": "csv", "json": "json", "markdown": "md"}


@dataclass(frozen=True)
class Planned:
    """The plan of one fleet on one date, and its export records (triage order)."""

    fleet: Fleet
    as_of: dt.date
    assessment: FleetAssessment
    records: list[dict[str, Any]]
    seconds: float  # how long planning took (the UI re-plans in a worker when it is slow)

    def columns(self) -> list[tuple[str, str]]:
        return export.table_columns(self.fleet.unit, self.assessment.model.horizon_days)


def plan(fleet: Fleet, as_of: dt.date) -> Planned:
    """Plan `fleet` on `as_of` (pure: safe in a worker thread)."""
    start = time.perf_counter()
    assessment = assess_fleet_plan(fleet, as_of)
    records = export.assessment_records(assessment)
    return Planned(fleet, as_of, assessment, records, time.perf_counter() - start)


@dataclass(frozen=True)
class Reading:
    """What reading the file gave: the file, or why it cannot be used; perhaps its plan."""

    loaded: LoadedFleet | None
    error: PlannerError | None = None
    planned: Planned | None = None
    warnings: tuple[Problem, ...] = ()  # the file loads; facts missing or doubtful


@dataclass(frozen=True)
class Change:
    """One step back: the text (and its fleet) before an edit, and what the edit was."""

    text: str
    fleet: Fleet
    what: str


class Session:
    """The fleet file being planned and edited in the UI."""

    def __init__(self, path: str | Path, as_of: dt.date) -> None:
        self.path = Path(path)
        self.start_as_of = as_of
        self.as_of = as_of
        self.loaded: LoadedFleet | None = None
        self.error: PlannerError | None = None
        self.warnings: tuple[Problem, ...] = ()  # of the file as last read
        self.text = ""
        self.fleet: Fleet | None = None
        self.history: list[Change] = []
        self._cache: Planned | None = None
        self._checked: tuple[str, Fleet] | None = None  # the last text `check` accepted
        self._kept: set[str] = set()  # digests whose fleet is in the cache (or was offered)
        self._unread: set[str] = set()  # digests saved here, their fleet from the quick check

    # -- reading ------------------------------------------------------------------------------
    def load(self) -> bool:
        """(Re)read the file from disk, dropping edits; False (and `error`) when it is bad."""
        return self.adopt(self.read(with_plan=False))

    def read(self, with_plan: bool = True) -> Reading:
        """Read (and plan) the file without changing the session: safe in a worker thread."""
        try:
            loaded = load_fleet(self.path, known=self._cached)
            return Reading(loaded, None, plan(loaded.fleet, self.as_of) if with_plan else None,
                           tuple(warnings_of(loaded)))
        except PlannerError as err:
            return Reading(None, err)

    def new_warnings(self, before: Fleet | None, vehicle_id: str) -> list[Problem]:
        """Warnings of one vehicle that an edit brought (e.g. a belt job recorded twice)."""
        def of(fleet: Fleet | None) -> list[Problem]:
            if fleet is None:
                return []
            hit = next(((i, v) for i, v in enumerate(fleet.vehicles) if v.id == vehicle_id),
                       None)
            return [] if hit is None else vehicle_warnings(hit[0], hit[1], fleet)
        old = {p.message for p in of(before)}
        return [p for p in of(self.fleet) if p.message not in old]

    def _cached(self, digest: str) -> Fleet | None:
        fleet = fleetcache.get(digest)  # never raises: a cache problem means "not cached"
        if fleet is not None:
            self._kept.add(digest)  # nothing to write back
        return fleet

    def adopt(self, reading: Reading) -> bool:
        """Make what `read` gave current, dropping edits; False (and `error`) when bad."""
        self.history.clear()
        self._cache = None
        self.loaded, self.error = reading.loaded, reading.error
        self.warnings = reading.warnings
        if reading.loaded is None:
            self.fleet, self.text = None, ""
            return False
        self.text = reading.loaded.text
        self.fleet = reading.loaded.fleet
        if reading.planned is not None:
            self.store(reading.planned)
        return True

    @property
    def ok(self) -> bool:
        return self.fleet is not None

    @property
    def dirty(self) -> bool:
        """True while the text differs from what is on disk (as last read or saved)."""
        return self.loaded is not None and self.text != self.loaded.text

    @property
    def name(self) -> str:
        if self.fleet is not None and self.fleet.fleet.name:
            return self.fleet.fleet.name
        return self.path.name

    # -- editing ------------------------------------------------------------------------------
    def check(self, text: str) -> Fleet:
        """Parse and validate candidate text exactly as the loader does (PlannerError if not)."""
        if self._checked is not None and self._checked[0] == text:
            return self._checked[1]
        if self.fleet is not None:  # an edit of the current text: only what changed is read
            fleet = reparse_fleet_text(text, str(self.path), self.text, self.fleet)
        else:
            fleet = parse_fleet_text(text, str(self.path))
        self._checked = (text, fleet)
        return fleet

    def apply(self, text: str, what: str) -> Fleet:
        """Make `text` the current text if it is valid; the previous one goes on the undo stack."""
        fleet = self.check(text)
        assert self.fleet is not None
        self.history.append(Change(self.text, self.fleet, what))
        self.text, self.fleet = text, fleet
        return fleet

    def undo(self) -> str | None:
        """Go back one edit; returns what was undone, or None when there is nothing to undo."""
        if not self.history:
            return None
        change = self.history.pop()
        self.text, self.fleet = change.text, change.fleet
        return change.what

    # -- saving -------------------------------------------------------------------------------
    def changed_on_disk(self) -> bool:
        """True when the file on disk is no longer the one read (or last saved)."""
        if self.loaded is None:
            return False
        try:
            return digest_of(self.path.read_bytes()) != self.loaded.digest
        except OSError:
            return True

    def save(self) -> None:
        """Checked, backed-up, atomic save; raises PlannerError (e.g. changed on disk)."""
        if self.loaded is None:
            raise PlannerError("nothing to save", "The file did not load.")
        assert self.fleet is not None  # the text was checked: `fleet` is what it gives
        self.loaded = save_fleet_text(self.loaded, self.text, self.fleet)
        self._unread.add(self.loaded.digest)  # its fleet came from the quick check

    def cache_job(self) -> Callable[[], bool] | None:
        """Work for a worker thread: keep the fleet of the file as it is on disk in the cache
        (`fleetcache`), so the next open is quick; None when there is nothing new to keep.

        A saved text's fleet came from the check of its edits (`reparse`), not from reading
        the whole text: the job reads it whole first and keeps the fleet only when both agree.
        When they do not, or the text does not read at all, it raises `PlannerError` (a bug
        of the quick check; the file on disk is what was saved, its previous version in .bak).
        """
        loaded = self.loaded
        if loaded is None or loaded.digest in self._kept:
            return None
        self._kept.add(loaded.digest)
        verify = loaded.digest in self._unread

        def job() -> bool:
            if verify and parse_fleet_text(loaded.text, str(loaded.path)) != loaded.fleet:
                raise PlannerError(
                    f"{loaded.path} was saved, but reads back differently from what was "
                    "checked: this is a bug in beltplan, please report it",
                    f"Reload (ctrl+r) to see the file as it reads now; the version before the "
                    f"save is in {backup_path(loaded.path).name}.")
            return fleetcache.put(loaded.digest, loaded.fleet)

        return job

    def save_copy(self) -> Path:
        """Write the current text beside the file, for when the file itself cannot be saved:
        `<stem>.mine<suffix>`, or `.mine-2`, `-3`, … when taken (never over an earlier copy,
        never through a link), with the fleet file's owner, group and mode."""
        target = self.path.with_name(self.path.stem + ".mine" + self.path.suffix)
        return write_new(target, self.text.encode("utf-8"), like=self.path)

    # -- planning -----------------------------------------------------------------------------
    def assessment(self) -> FleetAssessment:
        """Plans (triage order) and risks on the planning date, computed once per text/date."""
        return self._computed()[0]

    def records(self) -> list[dict[str, Any]]:
        """One export record per vehicle, in triage order (the fields the CLI writes)."""
        return self._computed()[1]

    def _computed(self) -> tuple[FleetAssessment, list[dict[str, Any]]]:
        assert self.fleet is not None
        if not self.planned:
            self._cache = plan(self.fleet, self.as_of)
        assert self._cache is not None
        return self._cache.assessment, self._cache.records

    @property
    def planned(self) -> bool:
        """True when the plan of the current text and date is at hand (no work to get it)."""
        cache = self._cache
        return cache is not None and cache.fleet is self.fleet and cache.as_of == self.as_of

    @property
    def last_plan_seconds(self) -> float:
        """How long the last plan took (0 before the first)."""
        return self._cache.seconds if self._cache is not None else 0.0

    def plan_job(self) -> Callable[[], Planned]:
        """The plan of the current text and date, as work for a worker thread; `store` it."""
        assert self.fleet is not None
        fleet, as_of = self.fleet, self.as_of
        return lambda: plan(fleet, as_of)

    def store(self, planned: Planned) -> bool:
        """Keep a plan made by `plan_job`; False (nothing kept) when the text or date moved on."""
        if planned.fleet is not self.fleet or planned.as_of != self.as_of:
            return False
        self._cache = planned
        return True

    def plan_of(self, vehicle_id: str) -> VehiclePlan | None:
        for plan in self.assessment().plans:
            if plan.id == vehicle_id:
                return plan
        return None

    def columns(self) -> list[tuple[str, str]]:
        assert self.fleet is not None
        self._computed()
        assert self._cache is not None
        return self._cache.columns()

    # -- exporting ----------------------------------------------------------------------------
    def default_export_path(self, fmt: str) -> Path:
        """A bare file name: `export` puts a relative name beside the fleet file."""
        return Path(f"{self.path.stem}-plan-{self.as_of.isoformat()}.{EXPORT_FORMATS[fmt]}")

    def export_text(self, records: Sequence[dict[str, Any]], fmt: str) -> str:
        """The same writers as `beltplan list --format …`."""
        assert self.fleet is not None
        unit = self.fleet.unit
        model = self.assessment().model
        if fmt == "csv":
            return export.to_csv(records, export.FIELDS)
        if fmt == "json":
            return export.to_json(records, self.as_of, unit,
                                  {"risk_assumptions": model.as_dict()})
        if fmt == "markdown":
            title = f"Cam-drive plan: {self.name} on {self.as_of}"
            return export.to_markdown(records, self.columns(), title,
                                      preface=[summary_text(records)],
                                      footer=[f"_{model.describe()}_", ""])
        raise PlannerError(f"unknown export format {fmt!r}",
                           "choose from: " + ", ".join(EXPORT_FORMATS))

    def export(self, records: Sequence[dict[str, Any]], fmt: str, target: str | Path) -> Path:
        """Write `records` as `fmt` to `target` atomically; never over the fleet file."""
        path = Path(target).expanduser()
        if not path.is_absolute():
            path = self.path.parent / path
        if path.resolve() == self.path.resolve():
            raise PlannerError(f"refusing to write over the fleet file {path}",
                               "Choose another file name for the export.")
        write_output(path, self.export_text(records, fmt).encode("utf-8"))
        return path


def warnings_notice(found: Sequence[Problem], shown: int = 3) -> str:
    """The short notice after a read: how many warnings and whose (`beltplan check` and each
    vehicle's notes say the rest)."""
    n = len(found)
    who = ", ".join(f"{p.vehicle} ({p.field})" if p.vehicle else p.field for p in found[:shown])
    more = f" and {n - shown} more" if n > shown else ""
    return (f"{n} warning{'s' * (n != 1)}: {who}{more}. A fact missing shows as missing-fact, "
            "never ok; `beltplan check` lists each with its fix.")


def status_counts(records: Sequence[dict[str, Any]]) -> list[tuple[str, int]]:
    """(status, count) in the engine's status order, statuses with no vehicle left out."""
    counts = Counter(r["status"] for r in records)
    return [(s.value, counts[s.value]) for s in Status if counts[s.value]]


def summary_text(records: Sequence[dict[str, Any]]) -> str:
    parts = [f"{n} {s}" for s, n in status_counts(records)]
    return f"{len(records)} vehicles: " + (", ".join(parts) if parts else "none")
