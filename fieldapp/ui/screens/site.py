"""Site: its leaks with their states, its surveys, and its components (search by tag as you type)."""

from __future__ import annotations

from pathlib import Path

from kivy.lang import Builder
from kivy.properties import StringProperty

from fieldapp.store.lookups import components_by_prefix
from fieldapp.store.reads import list_leaks, list_surveys
from fieldapp.ui import theme
from fieldapp.ui.due_words import coloured
from fieldapp.ui.screens.base import BaseScreen

Builder.load_file(str(Path(__file__).with_name("site_screen.kv")))
PAGE = 200


def component_rows(store, site_id: str, prefix: str, limit: int = PAGE) -> list[dict]:
    """A page of components whose tag starts with ``prefix`` (index on site and tag)."""
    rows = components_by_prefix(store, site_id, prefix, limit)
    out = []
    for r in rows:
        flags = (" - difficult to monitor" if r["difficult_to_monitor"] else "") + (
            " - [color=#ad0f0a]UNSAFE to monitor[/color]" if r["unsafe_to_monitor"] else "")
        out.append({"text": f"[b]{r['tag']}[/b]  {r['type'].replace('_', ' ')}, {r['service'].replace('_', ' ')}"
                            f"\n{r['area']}{flags}", "key": r["id"], "stripe": theme.LINE})
    return out


class SiteScreen(BaseScreen):
    """One site."""

    title = StringProperty("")
    caution = StringProperty("")

    def refresh(self) -> None:
        site = self.store.get("sites", self.app.site_id)
        self.title = site["name"]
        leaks = list_leaks(self.store, site["id"])
        hazards = [x["tag"] for x in leaks if x["hazard"] and x["state"] not in ("closed", "void")]
        self.caution = (f"CAUTION - hazardous leak(s) open: {', '.join(hazards)}. Follow the site's emergency "
                        f"procedures before approaching. {site['emergency_note']}") if hazards else ""
        self.ids.leaks.rows = [{
            "text": f"[b]{x['tag']}[/b]  {x['state'].upper()}"
                    f"{'   ' + coloured('HAZARD', 'overdue') if x['hazard'] else ''}"
                    f"{'   ' + coloured('REPEAT LEAKER', 'overdue') if x['repeat_leaker'] else ''}\n"
                    f"{x['component_type'].replace('_', ' ')} - "
                    f"found {x['detected_on']}",
            "key": x["id"], "stripe": theme.STATE_COLOURS[x["state"]], "on_pick": self.pick_leak,
        } for x in leaks]
        self.ids.surveys.rows = [{
            "text": f"[b]{v['started_at'][:10]}[/b]  {v['method'].upper()} - {v['operator']}\n"
                    f"{v['leak_count']} leak(s){'' if v['ended_at'] else ' - IN PROGRESS'}",
            "key": v["id"], "stripe": theme.ACTION if not v["ended_at"] else theme.LINE, "on_pick": self.pick_survey,
        } for v in list_surveys(self.store, site["id"])]
        self.search(self.ids.search.text)

    def search(self, prefix: str) -> None:
        self.ids.components.rows = component_rows(self.store, self.app.site_id, prefix.strip())

    def pick_leak(self, leak_id: str) -> None:
        self.app.leak_id = leak_id
        self.app.show("repair")

    def pick_survey(self, survey_id: str) -> None:
        survey = self.store.get("surveys", survey_id)
        self.app.survey_id = survey_id
        if not survey["ended_at"]:
            self.app.show("survey_run")

    def do_start_survey(self) -> None:
        self.app.show("survey")
