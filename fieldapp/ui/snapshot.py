"""Render one screen offscreen to a PNG, on the first suitable record of the store."""

from __future__ import annotations

import shutil
from pathlib import Path

from kivy.base import EventLoop
from kivy.core.window import Window

from fieldapp.store.lookups import busiest_site_id, current_survey_id, most_pressing_leak_id


def pick_records(app) -> None:
    """Point the app at the records that show each screen best (busiest site, a hazardous leak...)."""
    store = app.store
    app.site_id = busiest_site_id(store) or app.site_id
    app.survey_id = current_survey_id(store, app.site_id) or app.survey_id
    app.leak_id = most_pressing_leak_id(store) or app.leak_id


def settle(frames: int = 20) -> None:
    """Let layout and textures settle."""
    for _ in range(frames):
        EventLoop.idle()


def render_screen(app, name: str, out: Path) -> Path:
    """Build the app offscreen, show screen ``name``, and write a PNG of the window to ``out``."""
    app._run_prepare()
    pick_records(app)
    if name != "start":
        app.show(name)
    settle()
    out.parent.mkdir(parents=True, exist_ok=True)
    written = Window.screenshot(str(out))
    shutil.move(written, out)
    app.stop()
    return out
