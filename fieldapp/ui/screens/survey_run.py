"""Survey in progress: areas to check off, leaks found so far, add a leak, end with the deviations
from the monitoring plan (or the statement that there were none)."""

from __future__ import annotations

from kivy.uix.gridlayout import GridLayout
from kivy.uix.togglebutton import ToggleButton

from fieldapp.core.fields import ValidationError
from fieldapp.core.weather_units import CONDITION_FIELDS, shown
from fieldapp.store import ops
from fieldapp.store.lookups import survey_leaks
from fieldapp.store.prefs import unit_system
from fieldapp.ui import theme
from fieldapp.ui.due_words import coloured
from fieldapp.ui.forms import Form, Spec
from fieldapp.ui.screens.form_base import FormScreen
from fieldapp.ui.widgets import BigButton, Para, QuietButton


def conditions_text(survey: dict, system: str) -> str:
    """The survey's conditions in a unit system, with what was typed when it was another unit."""
    parts = []
    for name, kind, what in (("ambient_temp_c", "temperature", "air"), ("wind_speed_m_s", "speed", "wind"),
                             ("wind_max_m_s", "speed", "max wind")):
        text = shown(survey.get(name), kind, system)
        if text:
            entered, unit_field, _kind = CONDITION_FIELDS[name]
            typed = f"{survey.get(entered):g} {survey.get(unit_field)}" if survey.get(entered) is not None else ""
            parts.append(f"{what} {text}" + (f" (typed {typed})" if typed and not text.endswith(
                str(survey.get(unit_field))) else ""))
    return "[b]Conditions:[/b] " + (", ".join(parts) or "not recorded") + (f", {survey['sky']}" if survey.get(
        "sky") else "")


class SurveyRunScreen(FormScreen):
    """The survey being done."""

    def draft_key(self) -> str:
        return f"survey-end:{self.app.survey_id}" if self.app.survey_id else ""

    def draft_payload(self) -> dict:
        return {**self.form.values(), "areas_done": self.areas_done()}

    def areas_done(self) -> list[str]:
        return [b.area for b in self.area_buttons if b.state == "down"]

    def refresh(self) -> None:
        survey = self.store.get("surveys", self.app.survey_id)
        site = self.store.get("sites", survey["site_id"])
        self.app.site_id = site["id"]
        self.title = f"Surveying {site['name']} - {survey['method'].upper()}"
        body = self.ids.body
        body.clear_widgets()
        body.add_widget(Para(text=conditions_text(survey, unit_system(self.store).key)))
        body.add_widget(Para(text="[b]Areas covered - tap each when done[/b]"))
        grid = GridLayout(cols=3, spacing=theme.GAP, size_hint_y=None)
        grid.bind(minimum_height=grid.setter("height"))
        self.area_buttons = []
        for area in survey["areas"] or ["whole site"]:
            b = ToggleButton(text=area, size_hint_y=None, height=theme.TOUCH, font_size=theme.FONT,
                             background_normal="", background_down="", background_color=(0.86, 0.88, 0.9, 1),
                             color=theme.INK, state="down" if area in survey["areas_done"] else "normal")
            b.area = area
            self._style_area(b)
            b.bind(state=self._area_toggled)
            self.area_buttons.append(b)
            grid.add_widget(b)
        body.add_widget(grid)
        leaks = survey_leaks(self.store, survey["id"])
        hazard = "  " + coloured("HAZARD", "overdue")
        text = "\n".join(f"- {r['tag']} ({r['type'].replace('_', ' ')}){hazard if r['hazard'] else ''}"
                         for r in leaks) or "No leaks recorded yet."
        body.add_widget(Para(text=f"[b]Leaks found: {len(leaks)}[/b]\n{text}"))
        self.form = Form([Spec("deviations", "Deviations from the monitoring plan", "text"),
                          Spec("no_deviations", "There were no deviations", "flag")], on_change=self.changed)
        body.add_widget(self.form)
        self.ids.actions.clear_widgets()
        add = BigButton(text="Add a leak")
        add.bind(on_release=lambda *_: self.do_add_leak())
        end = QuietButton(text="End survey", size_hint_x=0.5)
        end.bind(on_release=lambda *_: self.do_end())
        self.ids.actions.add_widget(end)
        self.ids.actions.add_widget(add)
        draft = self.restore_draft()
        if draft:
            for b in self.area_buttons:
                b.state = "down" if b.area in draft.get("areas_done", []) else b.state

    @staticmethod
    def _style_area(button) -> None:
        done = button.state == "down"
        button.background_color = theme.SELECTED if done else (0.86, 0.88, 0.9, 1)
        button.text = f"{button.area}  DONE" if done else button.area

    def _area_toggled(self, button, _state) -> None:
        self._style_area(button)
        self.changed()

    def do_add_leak(self) -> None:
        self.save_draft()
        self.app.leak_id = ""
        self.app.show("leak")

    def do_end(self) -> None:
        values = self.form.values()
        site = self.store.get("sites", self.app.site_id)
        changes = {"ended_at": self.app.now_text(site["timezone"]),
                   "areas_done": self.areas_done(), "deviations": values["deviations"] or "",
                   "no_deviations": values["no_deviations"]}
        try:
            ops.end_survey(self.store, self.app.survey_id, changes)
        except ValidationError as exc:
            self.refuse(exc.problems, "Not ended")
            return
        self.drop_draft()
        self.app.show("site", remember=False)
        self.app.manager.get_screen("site").say("Survey ended and saved.", "ok")
