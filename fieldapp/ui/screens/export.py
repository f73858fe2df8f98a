"""Export: a bundle for the office, the survey report PDF, and what the office sends back (its
acknowledgement, sites, inventory and program files), received with a file picker.

The screen says where every file went and names the tablet by a short name, not its raw id.
"""

from __future__ import annotations

from datetime import UTC, datetime
from pathlib import Path

from fieldapp.core.fields import ValidationError
from fieldapp.store.lookups import latest_survey_id
from fieldapp.ui.screens.form_base import FormScreen
from fieldapp.ui.widgets import BigButton, Para, QuietButton


def short_name(device_id: str) -> str:
    """A tablet's short name for people: 'tablet 3F9A-21C0' from the last 8 hex digits of its id (the
    random part of a UUIDv7; its first digits are the time it was made, shared by tablets set up together)."""
    hex_digits = device_id.replace("-", "").upper()
    return f"tablet {hex_digits[-8:-4]}-{hex_digits[-4:]}"


class ExportScreen(FormScreen):
    """Hand the day's records to the office and take in what it sends back."""

    def refresh(self) -> None:
        from sync.bundle import acked_seq, pending_changes

        self.title = "Send to the office, receive from it, make reports"
        body = self.ids.body
        body.clear_widgets()
        pending = pending_changes(self.store)
        acked = acked_seq(self.store)
        body.add_widget(Para(text=f"[b]This tablet: {short_name(self.store.device_id)}[/b]   "
                                  f"[size=15sp](device id {self.store.device_id})[/size]\n"
                                  f"{pending} change(s) not yet acknowledged by the office ("
                                  + (f"it has acknowledged this tablet's first {acked}" if acked else
                                     "it has acknowledged none yet") + "). A bundle holds all of "
                                  "them, with their photos; making it again repeats them, nothing is skipped."))
        body.add_widget(Para(text=f"[b]Files are written to:[/b] {self.folder()}\n"
                                  f"[b]Bundles from the office are looked for in:[/b] {self.inbox()}\n"
                                  "(any folder can be picked)"))
        self.out_label = Para(text="")
        body.add_widget(self.out_label)
        self.ids.actions.clear_widgets()
        receive = QuietButton(text="Receive from office")
        receive.bind(on_release=lambda *_: self.do_receive())
        bundle = BigButton(text="Make bundle for the office")
        bundle.bind(on_release=lambda *_: self.do_bundle())
        report = BigButton(text="Make survey report (PDF)")
        report.bind(on_release=lambda *_: self.do_report())
        for button in (receive, bundle, report):
            self.ids.actions.add_widget(button)
        self.say("")

    def folder(self) -> Path:
        """Where bundles and reports are written."""
        return self.store.path.parent / "exports"

    def inbox(self) -> Path:
        """Where the picker opens to look for the office's bundles (created if missing)."""
        folder = self.store.path.parent / "from-office"
        folder.mkdir(parents=True, exist_ok=True)
        return folder

    def stamp(self) -> str:
        return datetime.fromtimestamp(self.store.wall(), UTC).strftime("%Y%m%d-%H%M%S")

    def do_bundle(self) -> None:
        from sync.bundle import make_device_bundle

        name = f"bundle-{self.store.device_id[:8]}-{self.stamp()}.zip"
        summary = make_device_bundle(self.store, self.folder() / name)
        self.out_label.text = (f"[b]Bundle written:[/b] {summary.path}\n{summary.entries} change(s), "
                               f"{summary.media} media")
        self.say(f"Bundle ready in {self.folder()}: copy it to the office computer.", "ok")

    def do_report(self) -> None:
        from sync.pdf_survey import write_survey_pdf

        survey_id = self.app.survey_id or latest_survey_id(self.store)
        if not survey_id:
            self.say("No survey to report yet.", "warn")
            return
        path = write_survey_pdf(self.store, survey_id, self.folder() / f"survey-{self.stamp()}.pdf")
        self.out_label.text = f"[b]Report written:[/b] {path}"
        self.say(f"Survey report ready in {self.folder()}.", "ok")

    def do_receive(self) -> None:
        from fieldapp.ui.file_picker import pick_file

        pick_file(self.inbox(), self.receive, patterns=["*.zip", "*.ZIP"], title="Receive a bundle from the office")

    def receive(self, path: str | Path | None) -> None:
        """Check and apply one bundle from the office (all or nothing), and say what it changed."""
        from sync.merge import merge_many

        if not path:
            return
        try:
            [result] = merge_many(self.store, [path])
        except ValidationError as exc:
            self.out_label.text = f"[b]Refused, nothing changed:[/b] {exc}"
            self.say("The bundle was refused; nothing changed.", "error")
            return
        notes = "".join(f"\n- {n}" for n in result.notes)
        self.out_label.text = (f"[b]Received:[/b] {Path(path).name} - {result.new_entries} new change(s), "
                               f"{result.rows} record(s) updated, {result.conflicts} conflict(s){notes}")
        self.refresh_counts()
        self.say("Office bundle applied.", "ok")

    def refresh_counts(self) -> None:
        """Show the acknowledged count again after a receive (keeps the result line)."""
        text = self.out_label.text
        self.refresh()
        self.out_label.text = text
