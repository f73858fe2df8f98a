"""Due: the supervisor's view across sites, overdue first, filtered by site and kind."""

from __future__ import annotations

from pathlib import Path

from kivy.lang import Builder
from kivy.properties import ListProperty

from fieldapp.store.due import due_list
from fieldapp.store.reads import list_sites
from fieldapp.ui import theme
from fieldapp.ui.due_words import flags, standing
from fieldapp.ui.screens.base import BaseScreen

Builder.load_file(str(Path(__file__).with_name("due_screen.kv")))

ALL_SITES, ALL_KINDS = "all sites", "all kinds"
KINDS = (ALL_KINDS, "survey", "first_attempt", "final_repair", "resurvey", "re_repair", "delay_limit")


class DueScreen(BaseScreen):
    """Everything due, from the same due list as `plumebook due`."""

    kinds = ListProperty(KINDS)
    sites: dict[str, str] = {}

    def refresh(self) -> None:
        self.sites = {s["name"]: s["id"] for s in list_sites(self.store)}
        self.ids.site_filter.values = (ALL_SITES, *self.sites)
        self.fill()

    def fill(self) -> None:
        if self.store is None:
            return
        today = self.app.today()
        site_id = self.sites.get(self.ids.site_filter.text)
        items, problems = due_list(self.store, today, site_id)
        if self.ids.kind_filter.text != ALL_KINDS:
            items = [i for i in items if i.kind == self.ids.kind_filter.text]
        rows = []
        for i in items:
            urgency = i.urgency(today)
            what = f"{i.method.upper()} survey" if i.kind == "survey" else f"{i.kind.replace('_', ' ')} {i.tag}"
            marks = flags(i)
            rows.append({"text": f"{standing(i, today)} - [b]{what}[/b]{'   ' + marks if marks else ''}\n"
                                 f"{i.site_name}",
                         "key": i.leak_id or i.site_id, "stripe": theme.URGENCY_COLOURS[urgency],
                         "on_pick": (self.open_leak if i.leak_id else self.open_site)})
        self.ids.due_items.rows = rows
        late = sum(1 for i in items if i.urgency(today) == "overdue")
        soon = sum(1 for i in items if i.urgency(today) == "due_soon")
        hazards = sum(1 for i in items if i.hazard)
        self.say(f"{late} overdue, {soon} due soon, {len(items) - late - soon} later"
                 + (f", {hazards} on hazardous leaks" if hazards else "") + f" - as of {today}" + (
            "; " + "; ".join(problems) if problems else ""), "error" if late else ("warn" if soon else "ok"))

    def open_leak(self, leak_id: str) -> None:
        self.app.leak_id = leak_id
        self.app.show("repair")

    def open_site(self, site_id: str) -> None:
        self.app.site_id = site_id
        self.app.show("site")
