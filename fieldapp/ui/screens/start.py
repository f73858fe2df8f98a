"""Start: every site with its next survey window and its open and overdue leaks, overdue first."""

from __future__ import annotations

from collections import defaultdict
from pathlib import Path

from kivy.lang import Builder
from kivy.properties import StringProperty

from fieldapp.store.due import due_list
from fieldapp.store.reads import list_sites
from fieldapp.ui import theme
from fieldapp.ui.due_words import coloured, standing
from fieldapp.ui.screens.base import BaseScreen

Builder.load_file(str(Path(__file__).with_name("start_screen.kv")))


def site_rows(store, today) -> list[dict]:
    """One row per site: name, next window, open leaks, overdue and due-soon counts; overdue sites first,
    then sites with something due soon. Every state is a word as well as a colour."""
    items, _problems = due_list(store, today)
    windows: dict[str, list] = defaultdict(list)
    counts: dict[str, dict[str, int]] = defaultdict(lambda: defaultdict(int))
    open_leaks: dict[str, set] = defaultdict(set)
    hazards: dict[str, set] = defaultdict(set)
    for item in items:
        if item.kind == "survey":
            windows[item.site_id].append(item)
        else:
            open_leaks[item.site_id].add(item.leak_id)
            if item.hazard:
                hazards[item.site_id].add(item.leak_id)
        counts[item.site_id][item.urgency(today)] += 1
    rows = []
    for site in list_sites(store):
        sid = site["id"]
        nxt = sorted(windows[sid], key=lambda i: i.due)
        window = f"{nxt[0].method.upper()} survey {standing(nxt[0], today)}" if nxt else "no survey window"
        late, soon = counts[sid]["overdue"], counts[sid]["due_soon"]
        urgency = "overdue" if late else ("due_soon" if soon else "later")
        flag = "   ".join(x for x in (
            coloured(f"{late} OVERDUE", "overdue") if late else "",
            coloured(f"{soon} DUE SOON", "due_soon") if soon else "",
            coloured(f"{len(hazards[sid])} HAZARD", "overdue") if hazards[sid] else "") if x)
        rows.append({
            "text": f"[b]{site['name']}[/b]   {flag or 'nothing due soon'}\n{site['kind'].replace('_', ' ')} - "
                    f"{window} - {len(open_leaks[sid])} open leak(s)",
            "key": sid, "stripe": theme.DANGER if late else (theme.SOON if soon else theme.OK),
            "sort": (("overdue", "due_soon", "later").index(urgency), site["name"]), "urgency": urgency,
        })
    rows.sort(key=lambda r: r.pop("sort"))
    return rows


class StartScreen(BaseScreen):
    """The list of sites."""

    summary = StringProperty("")

    def refresh(self) -> None:
        today = self.app.today()
        rows = site_rows(self.store, today)
        for row in rows:
            row["on_pick"] = self.pick
        self.ids.sites.rows = rows
        late = sum(1 for r in rows if r["urgency"] == "overdue")
        soon = sum(1 for r in rows if r["urgency"] == "due_soon")
        self.summary = f"{len(rows)} site(s): {late} with overdue items, {soon} with items due soon - {today}"

    def pick(self, site_id: str) -> None:
        self.app.site_id = site_id
        self.app.show("site")
