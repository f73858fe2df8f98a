"""What every screen shares: the app and its store, a message banner, and refresh()."""

from __future__ import annotations

from kivy.app import App
from kivy.uix.screenmanager import Screen

import fieldapp.ui.widgets  # noqa: F401  (loads the shared kv rules first)
from fieldapp.ui import theme


class BaseScreen(Screen):
    """A screen of the tablet app."""

    @property
    def app(self):
        return App.get_running_app()

    @property
    def store(self):
        return self.app.store if self.app is not None else None

    def refresh(self) -> None:
        """Reload what the screen shows from the store."""

    def say(self, text: str, kind: str = "ok") -> None:
        """Show a message in the screen's banner (ids.banner), coloured by kind."""
        banner = self.ids.get("banner")
        if banner is None:
            return
        banner.text = text
        banner.fill = {"ok": theme.OK, "warn": theme.SOON, "error": theme.DANGER}[kind]
        banner.shown = bool(text)
