"""Forms built from field specs: inputs with numeric keyboards for numbers, choices as big spinners,
problems shown at their field, and every change reported so drafts can be saved as the user types."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

from kivy.uix.gridlayout import GridLayout
from kivy.uix.textinput import TextInput
from kivy.uix.togglebutton import ToggleButton

from fieldapp.core.fields import FieldProblem
from fieldapp.ui import theme
from fieldapp.ui.widgets import Choice, FieldRow


@dataclass(frozen=True)
class Spec:
    """One field of a form."""

    name: str
    label: str
    kind: str = "text"  # text, number, choice, flag, date, long
    choices: Sequence[str] = ()
    required: bool = False


def label(value: str) -> str:
    """How a stored spelling reads on screen: 'first_attempt' -> 'first attempt'."""
    return str(value).replace("_", " ")


class Form(GridLayout):
    """A grid of FieldRows (one or two columns, by window width)."""

    def __init__(self, specs: Sequence[Spec], on_change: Callable[[], None] | None = None, **kwargs):
        super().__init__(cols=2, spacing=(theme.GAP * 2, theme.GAP), size_hint_y=None, **kwargs)
        self.bind(minimum_height=self.setter("height"))
        self.specs = sorted(specs, key=lambda spec: not spec.required)  # required fields first, order kept
        self.on_change = on_change
        self.rows_by_name: dict[str, FieldRow] = {}
        self.choice_values: dict[str, dict[str, str]] = {}
        self._loading = False
        for spec in self.specs:
            row = FieldRow(label=spec.label, required=spec.required, name=spec.name)
            row.set_widget(self._input(spec))
            self.rows_by_name[spec.name] = row
            self.add_widget(row)

    def _input(self, spec: Spec):
        if spec.kind == "choice":
            labels = [label(c) or Choice.EMPTY for c in spec.choices]
            self.choice_values[spec.name] = {**dict(zip(labels, spec.choices, strict=True)), Choice.EMPTY: ""}
            w = Choice(text=labels[0] if spec.required and labels else Choice.EMPTY, values=labels)
            w.bind(text=lambda *_: self._changed())
            return w
        if spec.kind == "flag":
            w = ToggleButton(text="no", font_size=theme.FONT, background_normal="", background_down="",
                             background_color=(0.86, 0.88, 0.9, 1), color=theme.INK)
            w.bind(state=lambda btn, state: (setattr(btn, "text", "YES" if state == "down" else "no"),
                                             setattr(btn, "background_color", theme.SELECTED if state == "down"
                                                     else (0.86, 0.88, 0.9, 1)), self._changed()))
            return w
        numeric = spec.kind == "number"
        w = TextInput(multiline=False, font_size=theme.FONT, input_filter="float" if numeric else None,
                      input_type="number" if numeric else "text", write_tab=False, padding=(12, 14),
                      hint_text="YYYY-MM-DD" if spec.kind == "date" else "")
        w.bind(text=lambda *_: self._changed())
        return w

    def _changed(self) -> None:
        if not self._loading and self.on_change:
            self.on_change()

    def widget(self, name: str):
        """The input widget of a field."""
        return self.rows_by_name[name].widget

    def values(self) -> dict[str, Any]:
        """Current values by field name (flags as booleans, blanks as None)."""
        out: dict[str, Any] = {}
        for spec in self.specs:
            w = self.widget(spec.name)
            if spec.kind == "flag":
                out[spec.name] = w.state == "down"
            elif spec.kind == "choice":
                out[spec.name] = self.choice_values[spec.name].get(w.text, w.text) or None
            else:
                out[spec.name] = w.text.strip() or None
        return out

    def set_values(self, values: dict[str, Any]) -> None:
        """Fill the form (without reporting changes)."""
        self._loading = True
        try:
            for spec in self.specs:
                if spec.name not in values:
                    continue
                w, value = self.widget(spec.name), values[spec.name]
                if spec.kind == "flag":
                    w.state = "down" if value else "normal"
                elif spec.kind == "choice":
                    w.text = label(value) if value else Choice.EMPTY
                else:
                    w.text = "" if value is None else str(value)
        finally:
            self._loading = False

    def missing(self) -> list[FieldProblem]:
        """A problem for each required field left blank (checked before the record's own checks)."""
        values = self.values()
        return [FieldProblem(s.name, "is required") for s in self.specs
                if s.required and s.kind != "flag" and values.get(s.name) in (None, "")]

    def first_problem_row(self) -> FieldRow | None:
        """The first field (in form order) showing a problem, or None."""
        return next((self.rows_by_name[s.name] for s in self.specs if self.rows_by_name[s.name].problem), None)

    def show_problems(self, problems: Sequence[FieldProblem]) -> list[str]:
        """Show each problem under its field; returns those that belong to no field of this form."""
        for row in self.rows_by_name.values():
            row.problem = ""
        elsewhere = []
        for p in problems:
            row = self.rows_by_name.get(p.field)
            if row is None:
                elsewhere.append(str(p))
            else:
                row.problem = p.message if not row.problem else row.problem + "; " + p.message
        return elsewhere
