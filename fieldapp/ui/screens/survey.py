"""Survey setup: who, which camera, the daily camera check, and the conditions; the program decides
which fields are required, and the survey cannot start without them."""

from __future__ import annotations

import json

from fieldapp import catalog
from fieldapp.core.enums import CameraCheck, SurveyMethod
from fieldapp.core.fields import ValidationError
from fieldapp.core.weather_units import CONDITION_FIELDS, SYSTEMS, from_celsius, from_m_s, to_celsius, to_m_s
from fieldapp.store import ops
from fieldapp.store.drafts import load_draft
from fieldapp.store.lookups import last_survey
from fieldapp.store.prefs import set_unit_system, unit_system
from fieldapp.ui.forms import Form, Spec
from fieldapp.ui.screens.form_base import FormScreen
from fieldapp.ui.widgets import Choice, FieldRow

SKY = ("clear", "partly cloudy", "overcast", "haze", "fog", "light rain", "light snow")
FIELDS = [
    ("method", "Method", "choice", tuple(m.value for m in SurveyMethod)),
    ("operator", "Operator (who surveys)", "text", ()),
    ("qualification", "Qualification / training", "text", ()),
    ("camera_make", "Camera make", "text", ()),
    ("camera_model", "Camera model", "text", ()),
    ("camera_serial", "Camera serial", "text", ()),
    ("camera_check", "Daily camera check", "choice", tuple(c.value for c in CameraCheck)),
    ("camera_check_note", "What the check showed (gas, distance, delta-T)", "text", ()),
    ("ambient_temp_c", "Ambient temperature ({t})", "number", ()),
    ("wind_speed_m_s", "Wind speed ({s})", "number", ()),
    ("wind_max_m_s", "Maximum wind ({s})", "number", ()),
    ("sky", "Sky conditions", "choice", SKY),
    ("areas", "Areas to cover (separate with ;)", "text", ()),
    ("compressor_modes", "Compressor modes (stations only)", "text", ()),
]


class SurveyScreen(FormScreen):
    """Start a survey at the current site."""

    def draft_key(self) -> str:
        return f"survey-setup:{self.app.site_id}" if self.app.site_id else ""

    def draft_payload(self) -> dict:
        return {**self.form.values(), "units": self.units.key} if self.form else {}

    def refresh(self) -> None:
        site = self.store.get("sites", self.app.site_id)
        program = catalog.program(site["program_id"])
        self.required = set(program.required_survey_fields) | {"method", "operator"}
        self.title = f"New survey - {site['name']}"
        self.units = unit_system(self.store)
        body = self.ids.body
        body.clear_widgets()
        self.form = None  # a new form for this visit: nothing carried over from another site
        self.units_row = FieldRow(label="Units this tablet types conditions in", name="units")
        self.units_choice = Choice(text=self.units.label, values=[u.label for u in SYSTEMS.values()])
        self.units_choice.bind(text=lambda _w, text: self.change_units(text))
        self.units_row.set_widget(self.units_choice)
        body.add_widget(self.units_row)
        self.build_form()
        self.form.set_values({"method": "ogi", "camera_check": "not_done"})
        self.set_actions("Start survey", self.do_start)
        self.say("")
        draft = load_draft(self.store, self.draft_key())
        if draft and draft.get("units") in SYSTEMS and draft["units"] != self.units.key:
            self.units = SYSTEMS[draft["units"]]  # the draft's numbers are in the units they were typed in
            self.build_form()
        if not self.restore_draft():
            last = last_survey(self.store, site["id"])
            if last:  # the crew and camera rarely change between visits
                self.form.set_values({k: last[k] for k in ("operator", "qualification", "camera_make",
                                                           "camera_model", "camera_serial")})
                self.form.set_values({"areas": "; ".join(json.loads(last["areas"]))})
            self.mark_pristine()  # prefilled, not typed: leaves no draft

    def build_form(self) -> None:
        """The form, its condition fields labelled in the current units (typed values kept)."""
        old = self.form.values() if self.form is not None else None
        if self.form is not None:
            self.ids.body.remove_widget(self.form)
        t, sp = self.units.temperature, self.units.speed
        self.form = Form([Spec(n, label.format(t=t, s=sp), kind, choices, n in self.required)
                          for n, label, kind, choices in FIELDS], on_change=self.changed)
        if old is not None:
            self.form.set_values(old)
        self.ids.body.add_widget(self.form)
        self.units_choice.text = self.units.label

    def change_units(self, text: str) -> None:
        """Switch this tablet's units; numbers already typed are converted, so they keep their meaning."""
        chosen = next((u for u in SYSTEMS.values() if u.label == text), None)
        if chosen is None or chosen.key == self.units.key:
            return
        values = self.form.values()
        converted = {}
        for name, kind in (("ambient_temp_c", "temperature"), ("wind_speed_m_s", "speed"),
                           ("wind_max_m_s", "speed")):
            try:
                number = float(values[name])
            except (TypeError, ValueError):
                continue
            if kind == "temperature":
                number = from_celsius(to_celsius(number, self.units.temperature), chosen.temperature)
            else:
                number = from_m_s(to_m_s(number, self.units.speed), chosen.speed)
            converted[name] = f"{number:.1f}"
        self.units = set_unit_system(self.store, chosen.key)
        self.build_form()
        self.form.set_values(converted)
        self.changed()

    def entered(self, values: dict) -> dict:
        """The typed conditions as entered values with their units (the store keeps the canonical ones)."""
        out = dict(values)
        for canonical, (entered, unit_field, kind) in CONDITION_FIELDS.items():
            if canonical in out:
                out[entered] = out.pop(canonical)
                out[unit_field] = self.units.temperature if kind == "temperature" else self.units.speed
        return out

    def do_start(self) -> None:
        if missing := self.form.missing():
            self.refuse(missing, "Not started")
            return
        values = self.entered({k: v for k, v in self.form.values().items() if v is not None})
        values["site_id"] = self.app.site_id
        values["started_at"] = self.app.now_text(self.store.get("sites", self.app.site_id)["timezone"])
        try:
            survey, warnings = ops.start_survey(self.store, values, actor=values.get("operator", ""))
        except ValidationError as exc:
            self.refuse(exc.problems, "Not started")
            return
        self.drop_draft()
        self.form.show_problems([])
        self.app.survey_id = survey.id
        self.app.show("survey_run")
        if warnings:
            self.app.manager.get_screen("survey_run").say("Check conditions: " + "; ".join(warnings), "warn")
