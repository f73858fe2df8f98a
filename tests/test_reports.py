"""PDF reports and CSV export from one report model: the PDF text holds the records, the CSV agrees."""

from __future__ import annotations

import csv
import io
from datetime import date

from pypdf import PdfReader

from fieldapp.cli import main
from sync.export import LEAK_COLUMNS, export_csv, leak_table
from sync.pdf_period import render as render_period
from sync.pdf_survey import render as render_survey
from sync.report_model import period_report, survey_report

TODAY = date(2026, 12, 1)


def pdf_text(data: bytes) -> str:
    return "\n".join(page.extract_text() for page in PdfReader(io.BytesIO(data)).pages)


def busiest_survey(store):
    return store.rows("SELECT v.id FROM surveys v JOIN leaks l ON l.survey_id = v.id GROUP BY v.id "
                      "ORDER BY COUNT(*) DESC, v.started_at DESC LIMIT 1")[0]["id"]


def test_survey_pdf_holds_tags_dates_conditions_and_cautions(demo_store):
    report = survey_report(demo_store, busiest_survey(demo_store), TODAY)
    text = pdf_text(render_survey(demo_store, report))
    for line in report.leaks:
        assert line.tag in text
        assert line.detected_on in text
        if line.first_attempt_due:
            assert line.first_attempt_due in text
    assert report.survey["operator"] in text and report.survey["camera_serial"] in text
    assert "Daily verification passed" in " ".join(text.split()) and "follow the current rule text" in text.lower()
    assert "HAZARD" in text  # TD-0051 carries the hazard flag in the demo
    assert "OVERDUE" in text
    assert report.fingerprint in text.replace("\n", "")
    pages = len(PdfReader(io.BytesIO(render_survey(demo_store, report))).pages)
    assert f"page 1 of {pages}" in text


def test_period_pdf_holds_per_site_totals(demo_store):
    report = period_report(demo_store, date(2026, 1, 1), TODAY)
    text = pdf_text(render_period(report))
    for site in report.sites:
        assert site.site.split()[0] in text
        assert f"{site.methane_kg:,.1f}" in text
    total = sum(s.methane_kg for s in report.sites)
    assert f"{total:,.1f}" in text
    assert "overdue" in text.lower()
    # the duration rule is stated (fieldapp.core.emissions, rule to_repair)
    assert "Duration rule: hours counted from the detection day to the day of the repair" in " ".join(text.split())


def test_csv_matches_the_report_model_and_reads_back(demo_store, tmp_path):
    paths = export_csv(demo_store, tmp_path / "out")
    assert [p.name for p in paths] == ["leaks.csv", "surveys.csv", "actions.csv", "components.csv", "legend.csv"]
    with open(tmp_path / "out" / "leaks.csv", encoding="utf-8", newline="") as fh:
        reader = csv.DictReader(fh)
        assert tuple(reader.fieldnames) == LEAK_COLUMNS
        rows = list(reader)
    model = {r["leak_id"]: r for r in leak_table(demo_store)}
    # 22 since the demo gained an AVO-found leak on the OOOOb pad (issue 11).
    assert len(rows) == len(model) == 22
    for row in rows:
        expected = model[row["leak_id"]]
        assert row["tag"] == expected["tag"] and row["state"] == expected["state"]
        assert row["first_attempt_due"] == expected["first_attempt_due"]
        if expected["methane_kg_per_h"] is not None:
            assert abs(float(row["methane_kg_per_h"]) - expected["methane_kg_per_h"]) <= 1e-5 * expected[
                "methane_kg_per_h"]
        date.fromisoformat(row["detected_on"])  # ISO 8601
    survey_report_lines = survey_report(demo_store, busiest_survey(demo_store), TODAY).leaks
    for line in survey_report_lines:
        assert model[line.leak_id]["final_repair_due"] == line.final_repair_due


def test_report_commands_and_demo_outputs(demo_store, tmp_path, capsys):
    out = tmp_path / "s.pdf"
    assert main(["--db", str(demo_store.path), "report", "survey", busiest_survey(demo_store), "--out", str(out)]) == 0
    assert out.read_bytes().startswith(b"%PDF")
    assert main(["--db", str(demo_store.path), "report", "period", "--from", "2026-12-01", "--to", "2026-01-01",
                 "--out", str(out)]) == 2
    assert "to: must not be before" in capsys.readouterr().err
    assert main(["--db", str(demo_store.path), "export", "csv", "--out", str(tmp_path / "c"),
                 "--site", "Orrel Mesa Pad 2"]) == 0
    text = (tmp_path / "c" / "leaks.csv").read_text()
    assert "OM2-0015" in text and "TD-0051" not in text
