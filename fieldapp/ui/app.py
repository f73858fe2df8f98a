"""The plumebook tablet app: one ScreenManager over the same store functions the CLI uses."""

from __future__ import annotations

import os
from datetime import UTC, date, datetime
from pathlib import Path

from fieldapp.ui import quiet_log

quiet_log.quiet(os.environ.get("PLUMEBOOK_VERBOSE") == "1")
quiet_log.install()

from kivy.app import App  # noqa: E402  (after the log set-up)
from kivy.core.window import Window  # noqa: E402
from kivy.uix.screenmanager import NoTransition, ScreenManager, SlideTransition  # noqa: E402

from fieldapp.core.dates import local_date  # noqa: E402
from fieldapp.store.base import Store  # noqa: E402
from fieldapp.ui import theme  # noqa: E402
from fieldapp.ui.camera import PhotoSource, default_sources  # noqa: E402
from fieldapp.ui.screens import SCREENS  # noqa: E402

SCREEN_NAMES = tuple(SCREENS)


class PlumebookApp(App):
    """Holds the open store and what the technician is working on (site, survey, leak)."""

    title = "plumebook"

    def __init__(self, db_path: Path | str, sources: list[PhotoSource] | None = None, animate: bool = True,
                 **kwargs):
        super().__init__(**kwargs)
        self.db_path = Path(db_path)
        self.sources = sources
        self.animate = animate
        self.store: Store | None = None
        self.site_id = ""
        self.survey_id = ""
        self.leak_id = ""
        self.history: list[str] = []

    def build(self):
        Window.clearcolor = theme.BG
        self.store = Store(self.db_path, actor=os.environ.get("PLUMEBOOK_ACTOR", ""))
        if not self.store.actor.strip():  # the journal never names nobody (`plumebook config actor`)
            from fieldapp.store.prefs import default_actor

            self.store.actor = default_actor(self.store)
        from kivy.clock import Clock

        from fieldapp.evidence.ingest import library

        # leftover temp files of a killed write: swept after the first frame, not before it
        Clock.schedule_once(lambda _dt: library(self.store).clean_temp(), 1.0)
        if self.sources is None:
            self.sources = default_sources(self.db_path.parent)
        self.manager = ScreenManager(transition=SlideTransition(duration=0.15) if self.animate else NoTransition())
        for name, cls in SCREENS.items():
            self.manager.add_widget(cls(name=name))
        self.manager.current = "start"
        self.manager.get_screen("start").refresh()
        return self.manager

    def today(self, tz: str | None = None) -> date:
        """Today on the site's calendar (UTC when no site)."""
        now = datetime.fromtimestamp(self.store.wall(), UTC)
        return local_date(now, tz) if tz else now.date()

    def now_text(self, tz: str) -> str:
        """This moment on the site's clock, ISO 8601 with its offset (what survey and leak times store)."""
        from zoneinfo import ZoneInfo

        return datetime.fromtimestamp(self.store.wall(), UTC).astimezone(ZoneInfo(tz)).isoformat(timespec="seconds")

    def show(self, name: str, remember: bool = True) -> None:
        """Go to a screen (refreshing it)."""
        if remember and self.manager.current != name:
            self.history.append(self.manager.current)
        screen = self.manager.get_screen(name)
        screen.refresh()
        self.manager.current = name

    def go_back(self) -> None:
        """Back to the previous screen."""
        self.show(self.history.pop() if self.history else "start", remember=False)

    def on_pause(self):
        self.flush_drafts()
        return True

    def on_stop(self):
        self.flush_drafts()

    def flush_drafts(self) -> None:
        """Save every open form's draft now."""
        for screen in self.manager.screens:
            if hasattr(screen, "save_draft"):
                screen.save_draft()


def run_app(db_path: Path | str, screen: str = "start", screenshot: Path | None = None) -> int:
    """Open the app (or render one screen offscreen to a PNG and exit)."""
    app = PlumebookApp(db_path, animate=screenshot is None)
    if screenshot is None:
        app.run()
        return 0
    from fieldapp.ui.snapshot import render_screen

    written = render_screen(app, screen, Path(screenshot))
    print(f"screenshot written: {written}")
    return 0
