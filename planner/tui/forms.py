"""Form machinery without Textual: field specs, typed-text conversion, problems.

A form is a list of `FormField`s and a `submit(values)` that returns the result (for edits:
the new fleet-file text, already parsed by the loader's rules) or raises `PlannerError`.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from rich.text import Text

from planner.dates import parse_day
from planner.errors import Problem
from planner.safetext import shown

KINDS = ("text", "date", "distance", "number", "months", "choice", "list")


@dataclass(frozen=True)
class FormField:
    name: str                  # the fleet-file key it sets
    label: str
    kind: str = "text"
    value: Any = None          # initial value, as the model holds it
    required: bool = False
    choices: tuple[tuple[str, str], ...] = ()  # (value, words) for kind "choice"
    help: str = ""
    placeholder: str = ""
    disabled: bool = False


@dataclass
class FormSpec:
    title: str
    fields: list[FormField]
    submit: Callable[[dict[str, Any]], Any]
    intro: Text | None = None
    apply_words: str = "Apply"
    subject: str | None = None  # the vehicle the form is about (problems elsewhere say so)
    quick: list[tuple[str, dict[str, str]]] = field(default_factory=list)
    changed: Callable[[str, Any, Any], None] | None = None


@dataclass(frozen=True)
class FormProblem:
    field: str | None
    message: str
    hint: str = ""
    vehicle: str | None = None

    @classmethod
    def from_problem(cls, p: Problem) -> FormProblem:
        names = [part for part in p.path if isinstance(part, str)]
        return cls(names[-1] if names else None, p.message, p.hint, p.vehicle)


_NUMBER = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)$")


def _number(text: str) -> float:
    cleaned = text.replace(",", "").replace("_", "").replace(" ", "")
    if not _NUMBER.match(cleaned):
        raise ValueError(f"{text!r} is not a number")
    return float(cleaned)


def convert(f: FormField, raw: Any) -> Any:
    """Typed text to the value the model wants; ValueError says what to type instead."""
    if f.kind == "choice":
        value = raw if raw not in ("", None) else None
    else:
        original = _typed_value(f)
        if raw == shown(original) != original:  # shown escaped, left untouched
            raw = original
        text = (raw or "").strip()
        value = None if text == "" else _convert_text(f, text)
    if value is None and f.required:
        raise ValueError("required")
    return value


def _convert_text(f: FormField, text: str) -> Any:
    if f.kind == "date":
        return parse_day(text)
    if f.kind == "distance":
        number = _number(text)
        return int(number) if number.is_integer() else number
    if f.kind == "number":
        return _number(text)
    if f.kind == "months":
        number = _number(text)
        if not number.is_integer():
            raise ValueError(f"{text!r} is not a whole number of months")
        return int(number)
    if f.kind == "list":
        return [part.strip() for part in text.split(",") if part.strip()] or None
    return text


def shown_value(f: FormField) -> str:
    """The initial value as the user would type it; a line end, tab, control or format
    character from the file as a visible escape (`safetext.shown`): an input shows one line,
    and `convert` gives the file's own text back while the escaped text is left as it is."""
    return shown(_typed_value(f))


def _typed_value(f: FormField) -> str:
    v = f.value
    if v is None:
        return ""
    if hasattr(v, "value") and isinstance(v.value, str):
        return v.value
    if isinstance(v, dt.date):
        return v.isoformat()
    if isinstance(v, float) and f.kind in ("distance", "months") and v.is_integer():
        return str(int(v))
    if isinstance(v, (list, tuple)):
        return ", ".join(str(x) for x in v)
    return str(v)


def choices(words: tuple[str, ...]) -> tuple[tuple[str, str], ...]:
    return tuple((w, w) for w in words)
