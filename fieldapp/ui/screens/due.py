"""Due: the supervisor's view across sites, overdue first, filtered by site and kind."""

from __future__ import annotations

from pathlib import Path

from kivy.lang import Builder
from kivy.properties import ListProperty

from fieldapp.store.due import due_list
from fieldapp.store.reads import list_sites
from fieldapp.ui import theme
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
            late = i.overdue(today)
            days = i.days_left(today)
            when = f"OVERDUE {-days} day(s)" if late else (f"due in {days} day(s)" if days is not None else "open")
            what = f"{i.method.upper()} survey" if i.kind == "survey" else f"{i.kind.replace('_', ' ')} {i.tag}"
            rows.append({"text": f"[b]{when}[/b] - {what}{'  REPEAT LEAKER' if i.repeat_leaker else ''}\n"
                                 f"{i.site_name} - by {i.due}",
                         "key": i.leak_id or i.site_id, "stripe": theme.DANGER if late else theme.ACTION,
                         "on_pick": (self.open_leak if i.leak_id else self.open_site)})
        self.ids.due_items.rows = rows
        late = sum(1 for i in items if i.overdue(today))
        self.say(f"{late} overdue, {len(items) - late} due - as of {today}" + (
            "; " + "; ".join(problems) if problems else ""), "error" if late else "ok")

    def open_leak(self, leak_id: str) -> None:
        self.app.leak_id = leak_id
        self.app.show("repair")

    def open_site(self, site_id: str) -> None:
        self.app.site_id = site_id
        self.app.show("site")
