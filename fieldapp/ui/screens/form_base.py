"""Screens that are one form: a body that scrolls, a banner, the actions at the bottom, and a draft
saved as the user types (restored when the screen opens again, even after the app was killed)."""

from __future__ import annotations

from pathlib import Path

from kivy.clock import Clock
from kivy.lang import Builder
from kivy.properties import StringProperty

from fieldapp.store.drafts import clear_draft, load_draft, save_draft
from fieldapp.ui.screens.base import BaseScreen

Builder.load_file(str(Path(__file__).with_name("form_screen.kv")))


class FormScreen(BaseScreen):
    """Base of the survey, leak and repair screens."""

    title = StringProperty("")
    form = None
    _pending = None

    def draft_key(self) -> str:
        """The drafts table key of this form (per site, survey or leak)."""
        return ""

    def draft_payload(self) -> dict:
        """What to keep of the form."""
        return self.form.values() if self.form else {}

    def changed(self) -> None:
        """Called on every change: save the draft shortly (coalescing fast typing)."""
        if self._pending is not None:
            self._pending.cancel()
        self._pending = Clock.schedule_once(lambda *_: self.save_draft(), 0.4)

    def save_draft(self) -> None:
        """Save the draft now."""
        if self._pending is not None:
            self._pending.cancel()
            self._pending = None
        if self.app is None or self.form is None:  # the app is shutting down
            return
        key = self.draft_key()
        if key and self.store is not None:
            payload = self.draft_payload()
            if payload != getattr(self, "_pristine", None):  # nothing typed yet: nothing to keep
                save_draft(self.store, key, payload)

    def mark_pristine(self) -> None:
        """Remember the form as first shown, so an untouched form leaves no draft."""
        self._pristine = self.draft_payload()

    def restore_draft(self) -> dict | None:
        """Fill the form from its draft, if any; returns the draft."""
        key = self.draft_key()
        self.mark_pristine()
        draft = load_draft(self.store, key) if key else None
        if draft and self.form is not None:
            self.form.set_values(draft)
            self.say("Restored the unsaved entries of this form.", "warn")
        return draft

    def drop_draft(self) -> None:
        """Forget the draft (after the record was saved)."""
        if self._pending is not None:
            self._pending.cancel()
            self._pending = None
        if self.draft_key():
            clear_draft(self.store, self.draft_key())

    def refuse(self, problems, what: str = "Not saved") -> None:
        """Show a refused save: each problem at its field (highlighted), the first one scrolled into view,
        and the banner naming the fields."""
        rest = self.form.show_problems(problems) if self.form is not None else [str(p) for p in problems]
        first = self.form.first_problem_row() if self.form is not None else None
        named = [self.form.rows_by_name[p.field].label for p in problems
                 if self.form is not None and p.field in self.form.rows_by_name]
        text = f"{what}: " + "; ".join(
            ([f"check {', '.join(dict.fromkeys(named))}"] if named else []) + rest)
        self.say(text, "error")
        if first is not None:
            Clock.schedule_once(lambda *_: self.scroll_to_field(first), 0)

    def scroll_to_field(self, row) -> None:
        """Bring a field into view (the scroll view of the form body)."""
        scroller = self.ids.get("scroller")
        if scroller is not None and row.parent is not None:
            scroller.scroll_to(row, padding=20, animate=False)

    def set_actions(self, primary: str, action, cancel: bool = True) -> None:
        """The bottom bar: an optional Cancel (back) and the screen's main action."""
        from fieldapp.ui.widgets import BigButton, QuietButton

        self.ids.actions.clear_widgets()
        if cancel:
            back = QuietButton(text="Cancel", size_hint_x=0.3)
            back.bind(on_release=lambda *_: self.app.go_back())
            self.ids.actions.add_widget(back)
        main = BigButton(text=primary)
        main.bind(on_release=lambda *_: action())
        self.ids.actions.add_widget(main)

    def on_leave(self, *args):
        self.save_draft()
