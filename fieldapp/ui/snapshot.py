"""Render one screen offscreen to a PNG, on the first suitable record of the store."""

from __future__ import annotations

import shutil
from pathlib import Path

from kivy.base import EventLoop
from kivy.core.window import Window


def pick_records(app) -> None:
    """Point the app at the records that show each screen best (busiest site, a hazardous leak...)."""
    store = app.store
    site = store.rows("SELECT s.id FROM sites s LEFT JOIN surveys v ON v.site_id = s.id LEFT JOIN leaks l ON "
                      "l.survey_id = v.id WHERE s.deleted = 0 GROUP BY s.id ORDER BY COUNT(l.id) DESC LIMIT 1")
    if site:
        app.site_id = site[0]["id"]
    survey = store.rows("SELECT id FROM surveys WHERE site_id = ? AND deleted = 0 ORDER BY ended_at IS NOT NULL, "
                        "started_at DESC LIMIT 1", (app.site_id,))
    if survey:
        app.survey_id = survey[0]["id"]
    leak = store.rows("SELECT l.id FROM leaks l WHERE l.deleted = 0 AND NOT EXISTS (SELECT 1 FROM actions a WHERE "
                      "a.leak_id = l.id AND a.kind IN ('resurvey_passed', 'voided')) ORDER BY l.hazard DESC, "
                      "l.detected_at DESC LIMIT 1")
    if leak:
        app.leak_id = leak[0]["id"]


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
