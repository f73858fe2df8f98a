"""Survey setup: who, which camera, the daily camera check, and the conditions; the program decides
which fields are required, and the survey cannot start without them."""

from __future__ import annotations

import json

from fieldapp import catalog
from fieldapp.core.enums import CameraCheck, SurveyMethod
from fieldapp.core.fields import ValidationError
from fieldapp.store import ops
from fieldapp.store.lookups import last_survey
from fieldapp.ui.forms import Form, Spec
from fieldapp.ui.screens.form_base import FormScreen

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
    ("ambient_temp_c", "Ambient temperature (°C)", "number", ()),
    ("wind_speed_m_s", "Wind speed (m/s)", "number", ()),
    ("wind_max_m_s", "Maximum wind (m/s)", "number", ()),
    ("sky", "Sky conditions", "choice", SKY),
    ("areas", "Areas to cover (separate with ;)", "text", ()),
]


class SurveyScreen(FormScreen):
    """Start a survey at the current site."""

    def draft_key(self) -> str:
        return f"survey-setup:{self.app.site_id}" if self.app.site_id else ""

    def refresh(self) -> None:
        site = self.store.get("sites", self.app.site_id)
        program = catalog.program(site["program_id"])
        required = set(program.required_survey_fields) | {"method", "operator"}
        self.title = f"New survey - {site['name']}"
        self.ids.body.clear_widgets()
        self.form = Form([Spec(n, label, kind, choices, n in required) for n, label, kind, choices in FIELDS],
                         on_change=self.changed)
        self.form.set_values({"method": "ogi", "camera_check": "not_done"})
        self.ids.body.add_widget(self.form)
        self.set_actions("Start survey", self.do_start)
        self.say("")
        if not self.restore_draft():
            last = last_survey(self.store, site["id"])
            if last:  # the crew and camera rarely change between visits
                self.form.set_values({k: last[k] for k in ("operator", "qualification", "camera_make",
                                                               "camera_model", "camera_serial")})
                self.form.set_values({"areas": "; ".join(json.loads(last["areas"]))})
            self.mark_pristine()  # prefilled, not typed: leaves no draft

    def do_start(self) -> None:
        if missing := self.form.missing():
            self.refuse(missing, "Not started")
            return
        values = {k: v for k, v in self.form.values().items() if v is not None}
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
