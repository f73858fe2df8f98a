"""The demo's output folder: every output the project can make for the scenario."""

from __future__ import annotations

from datetime import UTC, date, datetime
from pathlib import Path

from fieldapp.atomic import write_text
from fieldapp.store.base import Store
from fieldapp.store.due import due_list
from sync.demo_sync import round_trip
from sync.export import export_csv
from sync.pdf_period import write_period_pdf
from sync.pdf_survey import write_survey_pdf
from sync.tables import DUE_COLUMNS, due_rows, to_csv


def write_demo_outputs(store: Store, folder: Path) -> Path:
    """Write the due list, the CSV export, a survey report, a period summary and a signed sync round trip."""
    folder.mkdir(parents=True, exist_ok=True)
    as_of = datetime.fromtimestamp(store.wall(), UTC).date()
    items, _problems = due_list(store, as_of)
    write_text(folder / "due.csv", to_csv(due_rows(items, as_of), DUE_COLUMNS))
    export_csv(store, folder / "csv")
    latest = store.rows("SELECT v.id FROM surveys v JOIN leaks l ON l.survey_id = v.id GROUP BY v.id "
                        "ORDER BY COUNT(l.id) DESC, v.started_at DESC LIMIT 1")
    if latest:
        write_survey_pdf(store, latest[0]["id"], folder / "survey-report.pdf")
    write_period_pdf(store, date(as_of.year, 1, 1), as_of, folder / "period-summary.pdf")
    write_text(folder / "sync-round-trip.txt", "\n".join(round_trip(store, folder)) + "\n")
    return folder
