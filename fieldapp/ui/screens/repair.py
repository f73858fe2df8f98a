"""Repair: the leak's deadlines (overdue ones marked), and the next action - first attempt, repaired,
delay of repair, resurvey passed or failed, void - each with who and when."""

from __future__ import annotations

from fieldapp import catalog
from fieldapp.core.enums import ActionKind
from fieldapp.core.fields import ValidationError
from fieldapp.core.lifecycle import deadlines, outstanding
from fieldapp.evidence.ingest import ensure, media_for
from fieldapp.store import ops
from fieldapp.store.lookups import leak_action_rows
from fieldapp.store.reads import facts_for
from fieldapp.ui import theme
from fieldapp.ui.forms import Form, Spec
from fieldapp.ui.photo_viewer import PhotoViewer
from fieldapp.ui.screens.form_base import FormScreen
from fieldapp.ui.widgets import Banner, BigButton, Para

NEXT = {  # actions offered in each state, most likely first
    "open": ("first_attempt", "repaired", "delay_of_repair", "voided"),
    "attempted": ("repaired", "first_attempt", "delay_of_repair", "voided"),
    "delayed": ("repaired", "first_attempt", "delay_of_repair", "voided"),  # again: e.g. the part has arrived
    "repaired": ("resurvey_passed", "resurvey_failed", "voided"),
    "closed": (), "void": (),
}


class RepairScreen(FormScreen):
    """Log what was done to a leak."""

    def draft_key(self) -> str:
        return f"repair:{self.app.leak_id}" if self.app.leak_id else ""

    def refresh(self) -> None:
        leak, site, _detected = ops.leak_context(self.store, self.app.leak_id)
        comp = self.store.get("components", leak["component_id"])
        program = catalog.program(site["program_id"])
        # The survey's method stands in for a leak stored before its detection method was kept (schema 8).
        facts = facts_for([{**leak, "timezone": site["timezone"],
                            "survey_method": ops.leak_method(self.store, leak).value}],
                          leak_action_rows(self.store, leak["id"]))[leak["id"]]
        today = self.app.today(site["timezone"])
        self.title = f"{facts.state.value.upper()} - {comp['tag']} - {site['name']}"  # the state first: never cut
        body = self.ids.body
        body.clear_widgets()
        if leak["hazard"]:
            body.add_widget(Banner(text=f"HAZARD: {leak['hazard_note'] or 'flagged hazardous'}. Follow the site's "
                                        f"emergency procedures before approaching. {site['emergency_note']}",
                                   fill=theme.DANGER))
        holidays = catalog.holidays_for(program)
        pending = {d.kind for d in outstanding(program, facts, holidays)}
        lines = []
        for d in deadlines(program, facts, holidays):
            if d.done_on:
                state = f"done {d.done_on}" + ("  (LATE)" if d.due and d.done_on > d.due else "")
            elif d.kind in pending and d.due and today > d.due:
                state = f"[color=#ad0f0a][b]OVERDUE by {(today - d.due).days} day(s)[/b][/color]"
            elif d.kind in pending:
                state = f"{(d.due - today).days} day(s) left" if d.due else "open"
            else:
                state = "not due now"
            lines.append(f"[b]{d.kind.replace('_', ' ')}[/b]: due {d.due or 'at the next shutdown'} - {state}"
                         f"\n    [size=15sp]{d.rule} ({d.citation}; {d.status})[/size]")
        body.add_widget(Para(text=f"{comp['type'].replace('_', ' ')}, {comp['service'].replace('_', ' ')} - found "
                                  f"{facts.detected_on} - {leak['location_note']}"))
        body.add_widget(Para(text="\n".join(lines) or "No deadlines."))
        choices = NEXT[facts.state.value]
        self.ids.actions.clear_widgets()
        if not choices:
            self.form = None
            body.add_widget(Para(text=f"This leak is {facts.state.value}; nothing more to log."))
            self.add_photos(leak)
            return
        self.form = Form([
            Spec("kind", "What was done", "choice", choices, True),
            Spec("done_on", "On (local date)", "date", required=True),
            Spec("actor", "Who", "text", required=True),
            Spec("note", "Note", "text"),
            Spec("reason", "Reason (delay of repair, void)", "text"),
            Spec("planned_on", "Planned repair date (delay)", "date"),
            Spec("shutdown_on", "Next scheduled shutdown (delay)", "date"),
            Spec("instrument", "Resurvey instrument", "text"),
            Spec("method", "Resurvey method", "choice", ("ogi", "method21", "avo")),
            Spec("delay_kind", "Delay route (shutdown, or waiting for parts)", "choice", ("shutdown", "parts")),
            Spec("parts_ordered_on", "Replacement ordered on (parts)", "date"),
            Spec("parts_received_on", "Replacement received on (parts)", "date"),
        ], on_change=self.changed)
        self.form.set_values({"done_on": today.isoformat()})
        body.add_widget(self.form)
        self.add_photos(leak)
        save = BigButton(text="Save")
        save.bind(on_release=lambda *_: self.do_save())
        self.ids.actions.add_widget(save)
        self.say("")
        self.restore_draft()

    def add_photos(self, leak) -> None:
        """All photos of the leak, marked, one at a time with a count."""
        from kivy.uix.image import Image

        body = self.ids.body
        photos = [m for m in media_for(self.store, leak["id"]) if m["media_kind"] == "photo"]
        if photos:
            self.viewer = PhotoViewer()
            for m in photos:
                self.viewer.add(Image(source=str(ensure(self.store, m, "marked")), fit_mode="contain"), show=False)
            self.viewer.carousel.index = 0
            body.add_widget(self.viewer)

    def do_save(self) -> None:
        if missing := self.form.missing():
            self.refuse(missing)
            return
        values = {k: v for k, v in self.form.values().items() if v is not None}
        values["leak_id"] = self.app.leak_id
        try:
            action = ops.add_action(self.store, values, actor=values.get("actor", ""))
        except ValidationError as exc:
            self.refuse(exc.problems)
            return
        self.drop_draft()
        self.refresh()
        self.say(f"Saved: {ActionKind(action.kind).value.replace('_', ' ')} on {action.done_on}.", "ok")
