"""One form screen for every form: fields from a `FormSpec`, problems shown in place.

Typed text is converted (dates, numbers) here; everything else is checked by the spec's
`submit`, which for edits builds the candidate text with `planner.edit` and parses it with the
loader's rules. A `PlannerError` from it is shown in the form, each problem with its fix, and
the fields it names are marked; the form stays open.
"""

from __future__ import annotations

from typing import Any

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.widgets import Button, Input, Label, Select, Static

from planner.errors import PlannerError
from planner.tui.forms import FormField, FormProblem, FormSpec, convert, shown_value
from planner.tui.look import ACCENT, field_text, literal
from planner.tui.screens.modal import Popup


class FormScreen(Popup[Any]):
    """A modal form; dismisses with what `spec.submit` returned, or None when cancelled."""

    def __init__(self, spec: FormSpec) -> None:
        super().__init__()
        self.spec = spec
        self.attempts = 0  # how many times apply ran (tests wait on it)

    def compose(self) -> ComposeResult:
        with Vertical(classes="panel") as panel:
            panel.border_title = self.spec.title
            panel.border_subtitle = "enter: apply · esc: cancel"
            if self.spec.intro:
                yield Static(self.spec.intro, classes="intro", markup=False)
            with VerticalScroll(classes="scroll"):
                for f in self.spec.fields:
                    with Horizontal(classes="field", id=f"row-{f.name}"):
                        yield Label(f.label, classes="name")
                        yield self._widget(f)
                    if f.help:
                        yield Static(Text(f.help), classes="field-help", markup=False)
                if self.spec.quick:
                    with Horizontal(classes="quick"):
                        for k, (words, _) in enumerate(self.spec.quick):
                            yield Button(words, id=f"quick-{k}", compact=True)
            yield Static(id="problems", classes="problems", markup=False)
            with Horizontal(classes="buttons"):
                yield Button("Cancel", id="cancel", compact=True)
                yield Button(self.spec.apply_words, id="apply", variant="primary", compact=True)

    def _widget(self, f: FormField) -> Input | Select:
        if f.kind == "choice":
            initial = shown_value(f)
            return Select([(field_text(words), value) for value, words in f.choices],
                          value=initial if initial else Select.NULL,
                          prompt=f.placeholder or "(not set)", allow_blank=not f.required,
                          id=f"f-{f.name}", compact=True, disabled=f.disabled)
        return Input(shown_value(f), placeholder=f.placeholder, id=f"f-{f.name}",
                     compact=True, disabled=f.disabled)

    def on_mount(self) -> None:
        for f in self.spec.fields:
            if not f.disabled:
                self.query_one(f"#f-{f.name}").focus()
                break

    # -- reading and checking -------------------------------------------------------------
    def raw_values(self) -> dict[str, Any]:
        raw: dict[str, Any] = {}
        for f in self.spec.fields:
            widget = self.query_one(f"#f-{f.name}")
            if isinstance(widget, Select):
                raw[f.name] = None if widget.value is Select.NULL else widget.value
            else:
                raw[f.name] = widget.value  # type: ignore[attr-defined]
        return raw

    def set_raw(self, name: str, text: str) -> None:
        widget = self.query_one(f"#f-{name}")
        if isinstance(widget, Input):
            widget.value = text

    def action_apply(self) -> None:
        self.attempts += 1
        self._clear_problems()
        values: dict[str, Any] = {}
        problems: list[FormProblem] = []
        for f in self.spec.fields:
            try:
                values[f.name] = convert(f, self.raw_values()[f.name])
            except ValueError as exc:
                problems.append(FormProblem(f.name, str(exc)))
        if problems:
            self._show(problems)
            return
        try:
            result = self.spec.submit(values)
        except PlannerError as err:
            self._show([FormProblem.from_problem(p) for p in err.problems] or
                       [FormProblem(None, err.title, err.message)])
            return
        self.dismiss(result)

    # -- showing problems -----------------------------------------------------------------
    def _clear_problems(self) -> None:
        for widget in self.query(".field > Input"):
            widget.remove_class("-invalid")
        box = self.query_one("#problems", Static)
        box.remove_class("-shown")
        box.update("")

    def _show(self, problems: list[FormProblem]) -> None:
        labels = {f.name: f.label for f in self.spec.fields}
        text = literal("Not applied:\n", "bold")
        for k, p in enumerate(problems):
            if k:
                text.append("\n")
            text.append("• ")
            if p.vehicle and p.vehicle != self.spec.subject:
                text.append(literal(f"vehicle {p.vehicle}, "))
            if p.field:
                text.append(literal(labels.get(p.field, p.field), "bold"))
                text.append(": ")
            text.append(literal(p.message))
            if p.hint:
                text.append("\n  fix: ", style=ACCENT)
                text.append(literal(p.hint))
            if p.field in labels:
                widget = self.query_one(f"#f-{p.field}")
                widget.add_class("-invalid")
        box = self.query_one("#problems", Static)
        box.update(text)
        box.add_class("-shown")
        first = next((p.field for p in problems if p.field in labels), None)
        if first:
            self.query_one(f"#f-{first}").focus()

    # -- events ---------------------------------------------------------------------------
    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.action_apply()

    def on_select_changed(self, event: Select.Changed) -> None:
        if self.spec.changed is not None and event.select.id:
            name = event.select.id.removeprefix("f-")
            value = None if event.value is Select.NULL else event.value
            self.spec.changed(name, value, self)

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        ident = event.button.id or ""
        if ident == "apply":
            self.action_apply()
        elif ident == "cancel":
            self.dismiss(None)
        elif ident.startswith("quick-"):
            _, fill = self.spec.quick[int(ident.removeprefix("quick-"))]
            for name, text in fill.items():
                self.set_raw(name, text)
                self.query_one(f"#f-{name}").focus()  # enter now applies
