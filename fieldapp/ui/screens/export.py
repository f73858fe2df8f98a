"""Export: a bundle for the office, and the survey report PDF."""

from __future__ import annotations

from datetime import UTC, datetime

from fieldapp.store.lookups import latest_survey_id
from fieldapp.ui.screens.form_base import FormScreen
from fieldapp.ui.widgets import BigButton, Para


class ExportScreen(FormScreen):
    """Hand the day's records to the office."""

    def refresh(self) -> None:
        from sync.bundle import pending_changes

        self.title = "Send to the office and make reports"
        body = self.ids.body
        body.clear_widgets()
        pending = pending_changes(self.store)
        body.add_widget(Para(text=f"This tablet: device {self.store.device_id}\n{pending} change(s) not yet "
                                  "acknowledged by the office. A bundle holds all of them, with their photos; "
                                  "making it again repeats them, nothing is skipped."))
        self.out_label = Para(text="")
        body.add_widget(self.out_label)
        self.ids.actions.clear_widgets()
        bundle = BigButton(text="Make bundle for the office")
        bundle.bind(on_release=lambda *_: self.do_bundle())
        report = BigButton(text="Make survey report (PDF)")
        report.bind(on_release=lambda *_: self.do_report())
        self.ids.actions.add_widget(bundle)
        self.ids.actions.add_widget(report)
        self.say("")

    def folder(self):
        return self.store.path.parent / "exports"

    def stamp(self) -> str:
        return datetime.fromtimestamp(self.store.wall(), UTC).strftime("%Y%m%d-%H%M%S")

    def do_bundle(self) -> None:
        from sync.bundle import make_device_bundle

        name = f"bundle-{self.store.device_id[:8]}-{self.stamp()}.zip"
        summary = make_device_bundle(self.store, self.folder() / name)
        self.out_label.text = (f"[b]Bundle written:[/b] {summary.path}\n{summary.entries} change(s), "
                               f"{summary.media} media")
        self.say("Bundle ready: copy it to the office computer.", "ok")

    def do_report(self) -> None:
        from sync.pdf_survey import write_survey_pdf

        survey_id = self.app.survey_id or latest_survey_id(self.store)
        if not survey_id:
            self.say("No survey to report yet.", "warn")
            return
        path = write_survey_pdf(self.store, survey_id, self.folder() / f"survey-{self.stamp()}.pdf")
        self.out_label.text = f"[b]Report written:[/b] {path}"
        self.say("Survey report ready.", "ok")
