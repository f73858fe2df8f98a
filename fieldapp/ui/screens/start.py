"""Start: every site with its next survey window and its open and overdue leaks, overdue first."""

from __future__ import annotations

from collections import defaultdict
from pathlib import Path

from kivy.lang import Builder
from kivy.properties import StringProperty

from fieldapp.store.due import due_list
from fieldapp.store.reads import list_sites
from fieldapp.ui import theme
from fieldapp.ui.screens.base import BaseScreen

Builder.load_file(str(Path(__file__).with_name("start_screen.kv")))


def site_rows(store, today) -> list[dict]:
    """One row per site: name, next window, open and overdue counts; sites with overdue items first."""
    items, _problems = due_list(store, today)
    windows: dict[str, list] = defaultdict(list)
    overdue: dict[str, int] = defaultdict(int)
    open_leaks: dict[str, set] = defaultdict(set)
    for item in items:
        if item.kind == "survey":
            windows[item.site_id].append(item)
        else:
            open_leaks[item.site_id].add(item.leak_id)
        if item.overdue(today):
            overdue[item.site_id] += 1
    rows = []
    for site in list_sites(store):
        sid = site["id"]
        nxt = sorted(windows[sid], key=lambda i: i.due)
        window = f"next {nxt[0].method.upper()} survey by {nxt[0].due}" if nxt else "no survey window"
        late = overdue[sid]
        flag = f"   [color=#ad0f0a][b]{late} OVERDUE[/b][/color]" if late else ""
        rows.append({
            "text": f"[b]{site['name']}[/b]{flag}\n{site['kind'].replace('_', ' ')} - {window} - "
                    f"{len(open_leaks[sid])} open leak(s)",
            "key": sid, "stripe": theme.DANGER if late else theme.OK, "sort": (not late, site["name"]),
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
        late = sum(1 for r in rows if "OVERDUE" in r["text"])
        self.summary = f"{len(rows)} site(s), {late} with overdue items - {today}"

    def pick(self, site_id: str) -> None:
        self.app.site_id = site_id
        self.app.show("site")
