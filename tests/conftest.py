"""Shared fixtures: a fresh store and a demo store on tmp_path, with a controllable wall clock."""

from __future__ import annotations

import os
import tempfile
from datetime import UTC, datetime

# Kivy reads these at import; set before any test module imports it (see ../shared/reference/kivy-headless.md).
_kivy_home = tempfile.mkdtemp(prefix="plumebook-kivy-")
for key, value in {
    "KIVY_NO_ARGS": "1", "KIVY_NO_CONFIG": "1", "KIVY_NO_FILELOG": "1", "KIVY_NO_CONSOLELOG": "1",
    "KIVY_WINDOW": "sdl2", "SDL_VIDEODRIVER": "offscreen", "KCFG_GRAPHICS_WIDTH": "1280",
    "KCFG_GRAPHICS_HEIGHT": "800", "XDG_CONFIG_HOME": _kivy_home, "KIVY_HOME": _kivy_home,
}.items():
    os.environ.setdefault(key, value)
os.environ["PLUMEBOOK_PROGRAMS"] = os.path.join(_kivy_home, "no-user-programs")

import pytest  # noqa: E402

from fieldapp.store.base import Store  # noqa: E402

DEMO_NOW = datetime(2026, 12, 1, 18, 0, tzinfo=UTC)


class Wall:
    """A wall clock the test moves by hand."""

    def __init__(self, start: datetime = DEMO_NOW):
        self.t = start.timestamp()

    def __call__(self) -> float:
        return self.t

    def advance(self, seconds: float) -> None:
        self.t += seconds


@pytest.fixture
def wall() -> Wall:
    return Wall()


@pytest.fixture
def store(tmp_path, wall) -> Store:
    """A fresh, empty store file."""
    s = Store(tmp_path / "fresh.db", actor="tester", wall=wall)
    yield s
    s.close()


@pytest.fixture
def demo_store(tmp_path, wall) -> Store:
    """A store holding the demo scenario, loaded as of 2026-12-01."""
    from fieldapp import demo

    s = Store(tmp_path / "demo.db", actor="tester", wall=wall)
    demo.load(s)
    yield s
    s.close()


SITE = {
    "name": "Test pad", "kind": "well_site", "program_id": "us-nsps-oooo-a", "timezone": "America/Denver",
    "methane_mole_fraction": 0.8, "startup_date": "2026-01-10",
}


@pytest.fixture
def site(store):
    """One well site under OOOOa in the fresh store."""
    from fieldapp.store import ops

    return ops.add_site(store, SITE)

import logging  # noqa: E402

logging.getLogger("PIL").setLevel(logging.WARNING)
