"""Filing-grade outputs: the PDFs read back hold what the rule asks a survey record and an annual report to
hold; pages keep inside their margins; CSV cells round-trip and are not run as formulas; files follow the umask.

Rule sources (verbatim quotes in docs/report-fields.md, eCFR prints of 9/10-9/11/2026):
- 40 CFR 60.5420a(c)(15)(vii)(A)-(I): date, begin and end time, operator with training and experience,
  instrument, ambient temperature, sky conditions, maximum wind speed, deviations or the statement of none;
  per leak the first attempt, the repair with the resurvey and its instrument, delay of repair and parts dates.
- 40 CFR 60.5420b(b)(9)(ii)(A)-(G): per survey in the annual report its date, instrument, deviations, and the
  number and type of components with leaks / not repaired / on delay.
- Site coordinates: 60.5420b(b)(1)(i) asks decimal degrees to five places, NAD83, where a site has no address
  (read 9/10/2026, docs/report-fields.md); the reports show five places.
"""

from __future__ import annotations

import csv
import io
import os
import shutil
import subprocess
from datetime import date
from pathlib import Path

import pytest
from PIL import Image
from pypdf import PdfReader

from fieldapp.store import ops
from fieldapp.store.estimates import leak_rows
from sync.export import LEAK_COLUMNS, export_csv, leak_table
from sync.pdf_common import MARGIN, PAGE
from sync.pdf_period import LANDSCAPE
from sync.pdf_period import render as render_period
from sync.pdf_survey import render as render_survey
from sync.report_model import CERTIFICATION, leak_lines, period_report, survey_report
from sync.tables import unguard

TODAY = date(2026, 12, 1)
MM = 72 / 25.4


def flat(data: bytes) -> str:
    """All page text, whitespace runs as one space (table cells wrap at spaces)."""
    return " ".join(" ".join(p.extract_text() for p in PdfReader(io.BytesIO(data)).pages).split())


def survey_with_resurvey(store):
    return store.rows("SELECT l.survey_id FROM leaks l JOIN actions a ON a.leak_id = l.id "
                      "WHERE a.kind = 'resurvey_passed' GROUP BY l.survey_id ORDER BY COUNT(*) DESC LIMIT 1")[0][
        "survey_id"]


def test_survey_pdf_holds_site_ids_record_fields_people_photos_and_certification(demo_store):
    report = survey_report(demo_store, survey_with_resurvey(demo_store), TODAY)
    text = flat(render_survey(demo_store, report))
    site = report.site
    assert site["facility_id"] and site["facility_id"] in text
    # decimal degrees to five places, as 60.5420b(b)(1)(i) asks (see the module docstring)
    assert f"{site['latitude']:.5f}, {site['longitude']:.5f}" in text
    required = [(label, value) for label, value, req in report.record if req]
    # every field the program lists (us-nsps-oooo-a survey_records.required, 60.5420a(c)(15)(vii)(A)-(H))
    for label in ("Date of the survey", "Begin time", "End time", "Operator", "Operator training and experience",
                  "Instrument model", "Ambient temperature", "Sky conditions", "Maximum wind speed",
                  "Deviations from the monitoring plan", "Daily verification"):
        assert label in [lbl for lbl, _v in required], label
    for label, value in required:
        assert label in text and value in text, (label, value)
    assert "no deviations" in text  # the statement of none, 60.5420a(c)(15)(vii)(G)
    for line in report.leaks:
        assert line.tag in text
        if line.repaired_on:
            assert line.repaired_by and f"repair {line.repaired_by}" in text
        if line.resurveyed_on:
            # the method in the rule's own words (OGI, Method 21, AVO), the instrument as recorded
            words = {"ogi": "OGI", "method21": "Method 21", "avo": "AVO"}[line.resurvey_method]
            assert f"{words} / {line.resurvey_instrument}" in text
        for photo in line.photos:
            assert f"{photo['file']}, taken {photo['taken']}, SHA-256 {photo['sha256'][:16]}" in text
    assert any(x.resurveyed_on for x in report.leaks)
    assert "Certification" in text and CERTIFICATION in text
    for blank in ("Name", "Title", "Signature", "Date"):
        assert blank in text
    assert "+00:00" not in report.made_at_local and report.made_at_local in text  # made-at in site time


def test_survey_report_shows_delay_parts_dates_and_components_not_monitored(demo_store):
    parts = demo_store.rows("SELECT l.survey_id FROM leaks l JOIN actions a ON a.leak_id = l.id "
                            "WHERE a.delay_kind = 'parts' LIMIT 1")
    assert parts, "the demo holds a delay waiting for parts"
    report = survey_report(demo_store, parts[0]["survey_id"], TODAY)
    text = flat(render_survey(demo_store, report))
    line = next(x for x in report.leaks if x.delay_kind == "parts")
    assert line.parts_ordered_on and f"ordered {line.parts_ordered_on}" in text
    assert line.delay_reason in text
    assert sum(report.components_by_type.values()) > 0
    for c in report.not_monitored:
        assert c["tag"] in text and c["flag"] in text


def test_overdue_is_set_in_bold_red(demo_store):
    """An overdue deadline reads OVERDUE in bold red type (our own display choice; no source)."""
    from reportlab.lib.colors import toColor

    from sync.pdf_common import ALERT

    report = survey_report(demo_store, demo_store.rows(
        "SELECT v.id FROM surveys v JOIN leaks l ON l.survey_id = v.id JOIN components c ON c.id = l.component_id "
        "WHERE c.tag = 'TD-0051'")[0]["id"], TODAY)
    assert any(x.overdue for x in report.leaks)
    fonts: list[str] = []
    fills: list[tuple[float, ...]] = []
    for page in PdfReader(io.BytesIO(render_survey(demo_store, report))).pages:
        page.extract_text(visitor_text=lambda text, _cm, _tm, font, _size: fonts.append(
            font.get("/BaseFont", "") if "OVERDUE" in text and font else ""))
        content = page.get_contents().get_data().decode("latin-1")
        at = content.find("OVERDUE) Tj")  # a deadline cell, not the note "marked OVERDUE as of"
        if at >= 0:  # the fill colour set last before the word is drawn
            fills.append(tuple(float(v) for v in content[:content.rfind(" rg", 0, at)].split()[-3:]))
    assert "/Helvetica-Bold" in fonts
    red = toColor(ALERT)
    assert fills and all(max(abs(a - b) for a, b in zip(f, (red.red, red.green, red.blue), strict=True)) < 1e-3
                         for f in fills)


def test_period_pdf_lists_every_survey_and_every_leak_in_words(demo_store):
    report = period_report(demo_store, date(2025, 1, 1), TODAY)
    text = flat(render_period(report))
    surveys = demo_store.rows("SELECT id FROM surveys WHERE deleted = 0")
    assert sum(len(s.surveys) for s in report.sites) == len(surveys)
    for site in report.sites:
        assert site.site in text and site.facility_id in text
        for survey in site.surveys:
            assert survey["Begin time"] in text and survey["Operator"] in text
        for leak in site.leaks:
            assert leak.tag in text
    assert sum(len(s.leaks) for s in report.sites) == 22
    assert "first_attempt" not in text and "resurvey_passed" not in text  # words, not codes
    assert "Repaired, resurvey confirmed" in text and "Repaired, resurvey pending" in text
    assert CERTIFICATION in text


# --- layout ----------------------------------------------------------------------------------------------------

def _pages(pdf: bytes, tmp: Path, dpi: int = 50) -> list[Path]:
    (tmp / "r.pdf").write_bytes(pdf)
    subprocess.run(["pdftoppm", "-r", str(dpi), "-png", str(tmp / "r.pdf"), str(tmp / "p")], check=True)
    return sorted(tmp.glob("p-*.png"))


def _white(img: Image.Image, box: tuple[int, int, int, int]) -> bool:
    lo, _hi = img.crop(box).convert("L").getextrema()
    return lo >= 250


def _check_margins(pdf: bytes, tmp: Path, page: tuple[float, float], dpi: int = 50) -> int:
    """Every rendered page: side margins blank; above the header, below the footer and between the header
    rule / footer and the text frame blank (the header and footer lines are the only marks in the margin)."""
    paths = _pages(pdf, tmp, dpi)
    px = dpi / 72
    for path in paths:
        img = Image.open(path)
        w, h = img.size
        side = int((MARGIN - 1.5 * MM) * px)
        assert _white(img, (0, 0, side, h)), f"{path.name}: drawn in the left margin"
        assert _white(img, (w - side, 0, w, h)), f"{path.name}: drawn in the right margin"
        assert _white(img, (0, 0, w, int(6 * MM * px))), f"{path.name}: drawn above the header"
        assert _white(img, (0, h - int(6 * MM * px), w, h)), f"{path.name}: drawn below the footer"
        assert _white(img, (0, int(12.5 * MM * px), w, int(15.5 * MM * px))), f"{path.name}: top margin"
        assert _white(img, (0, h - int(15.5 * MM * px), w, h - int(12 * MM * px))), f"{path.name}: bottom margin"
    assert abs(Image.open(paths[0]).size[0] - page[0] * px) <= 2
    return len(paths)


def _bottom_text(pdf: bytes) -> list[str]:
    """Per page, the lowest line of text inside the text frame (above the footer)."""
    out = []
    for page in PdfReader(io.BytesIO(pdf)).pages:
        pieces: list[tuple[float, str]] = []

        def visit(text, cm, tm, _font, _size, pieces=pieces):
            if text.strip():
                pieces.append((cm[1] * tm[4] + cm[3] * tm[5] + cm[5], text.strip()))

        page.extract_text(visitor_text=visit)
        inside = [p for p in pieces if p[0] > 16 * MM - 2]
        low = min(y for y, _t in inside)
        out.append(" ".join(t for y, t in inside if abs(y - low) < 1))
    return out


def _headings_survey(report) -> set[str]:
    names = {"Survey record", "Summary", "Components in the site inventory", "Cautions", "Leaks", "Certification"}
    return names | {f"{x.tag} -" for x in report.leaks}


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="poppler-utils not installed")
def test_survey_pages_stay_inside_margins_and_no_heading_ends_a_page(demo_store, tmp_path):
    report = survey_report(demo_store, survey_with_resurvey(demo_store), TODAY)
    pdf = render_survey(demo_store, report)
    assert _check_margins(pdf, tmp_path, PAGE) >= 3
    heads = _headings_survey(report)
    for n, last in enumerate(_bottom_text(pdf), 1):
        assert not any(last == h or last.startswith(h) and h.endswith("-") for h in heads), (n, last)


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="poppler-utils not installed")
def test_period_pages_stay_inside_margins_and_no_site_heading_ends_a_page(demo_store, tmp_path):
    report = period_report(demo_store, date(2025, 1, 1), TODAY)
    pdf = render_period(report)
    assert _check_margins(pdf, tmp_path, LANDSCAPE) >= 2
    heads = {s.site for s in report.sites} | {"Surveys in the period", "Leaks found in the period", "Cautions",
                                              "Certification"}
    for n, last in enumerate(_bottom_text(pdf), 1):
        assert last not in heads, (n, last)


def _page_lines(pdf: bytes) -> list[list[tuple[float, str]]]:
    """Per page, the lines of text inside the text frame (between header rule and footer), top first."""
    out = []
    for page in PdfReader(io.BytesIO(pdf)).pages:
        top = float(page.mediabox.height) - 16 * MM
        pieces: list[tuple[float, str]] = []

        def visit(text, cm, tm, _font, _size, pieces=pieces):
            if text.strip():
                pieces.append((round(cm[1] * tm[4] + cm[3] * tm[5] + cm[5], 1), text.strip()))

        page.extract_text(visitor_text=visit)
        rows: dict[float, list[str]] = {}
        for y, t in pieces:
            if 16 * MM - 2 < y < top + 2:
                rows.setdefault(y, []).append(t)
        out.append([(y, " ".join(rows[y])) for y in sorted(rows, reverse=True)])
    return out


@pytest.mark.parametrize("end", [TODAY, date(2026, 11, 1)])
def test_period_pages_are_filled_unless_a_site_section_or_the_document_ends(demo_store, end):
    """A page whose content goes on over the page is at least 75 % full; only the last page of a site section
    (the next page starts with a site heading or the cautions) or of the document may end earlier. Our own
    layout criterion (no source): a long leak table splits with its header row repeated instead of moving
    whole to the next page."""
    report = period_report(demo_store, date(2025, 1, 1), end)
    pages = _page_lines(render_period(report))
    frame = LANDSCAPE[1] - 32 * MM
    starts = tuple(s.site for s in report.sites) + ("Cautions", "Certification")
    assert len(pages) >= 3
    for n, (page, following) in enumerate(zip(pages, pages[1:], strict=False), 1):
        used = (LANDSCAPE[1] - 16 * MM - page[-1][0]) / frame
        opens_section = following[0][1].startswith(starts)
        assert used >= 0.75 or opens_section, (n, round(used, 2), following[0][1])


# --- CSV -------------------------------------------------------------------------------------------------------

TRICKY = ('=HYPERLINK("http://example.invalid","x")', "+1 555 0100", "-3 dB below the flange", "@SUM(A1)",
          'line one\nline "two", with a comma', "'quoted already")


def _leaks_with_tricky_text(store, site):
    survey, _ = ops.start_survey(store, {"site_id": site.id, "method": "ogi", "operator": "=cmd|' /C calc'!A0",
                                         "qualification": "-q", "started_at": "2026-11-30T08:00:00-07:00",
                                         "camera_make": "m", "camera_model": "x", "camera_check": "passed",
                                         "ambient_temp_c": 5, "sky": "clear", "wind_max_m_s": 2})
    for n, note in enumerate(TRICKY):
        ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00",
                             "location_note": note, "hazard": True, "hazard_note": f"@note {n}\r\nsecond line"},
                     new_component={"tag": f"Q-{n}", "type": "valve", "service": "gas"})


def test_csv_round_trip_equals_the_model_with_newlines_quotes_and_formula_cells(store, site, tmp_path):
    _leaks_with_tricky_text(store, site)
    export_csv(store, tmp_path / "out")
    with open(tmp_path / "out" / "leaks.csv", encoding="utf-8", newline="") as fh:
        reader = csv.DictReader(fh)
        assert tuple(reader.fieldnames) == LEAK_COLUMNS
        rows = {r["leak_id"]: r for r in reader}
    model = {x.leak_id: x for x in leak_lines(store, leak_rows(store))}
    assert len(rows) == len(model) == len(TRICKY)
    for leak_id, row in rows.items():
        line = model[leak_id]
        for col in LEAK_COLUMNS:
            value = getattr(line, col, None)
            if isinstance(value, str):
                assert unguard(row[col]) == value, col
                if value.startswith(('=', '+', '-', '@', "'")):
                    assert row[col].startswith("'"), (col, row[col])  # shown as text by a spreadsheet
                else:
                    assert row[col] == value
    assert {m.location_note for m in model.values()} == set(TRICKY)
    table = leak_table(store)
    assert {r["location_note"] for r in table} == set(TRICKY)


def test_csv_columns_cover_the_leak_record_and_bom_option(demo_store, tmp_path):
    paths = export_csv(demo_store, tmp_path / "plain")
    assert "legend.csv" in [p.name for p in paths]
    assert not (tmp_path / "plain" / "leaks.csv").read_bytes().startswith(b"\xef\xbb\xbf")
    export_csv(demo_store, tmp_path / "bom", bom=True)
    raw = (tmp_path / "bom" / "leaks.csv").read_bytes()
    assert raw.startswith(b"\xef\xbb\xbf")
    rows = list(csv.DictReader(io.StringIO(raw.decode("utf-8-sig"), newline="")))
    for col in ("screening_ppm", "measured_rate", "measured_unit", "measured_instrument", "hazard_note",
                "repeat_leaker", "program_id", "detection_method", "resurvey_method", "delay_kind",
                "parts_ordered_on", "parts_received_on", "photo_sha256"):
        assert col in rows[0]
    assert any(r["parts_ordered_on"] for r in rows) and any(r["resurvey_method"] == "ogi" for r in rows)
    assert all(len(h) == 64 for r in rows for h in r["photo_sha256"].split(";") if h)
    leaker = [r for r in rows if r["basis"] == "leaker_factor"]
    assert leaker and all(f"= {float(r['factor_value']):g} {r['factor_unit']}" in r["factor_row"] for r in leaker)
    # the row in words, not codes; every estimated leak, whatever its basis, fills table/key/value/unit
    assert not any(code in r["factor_row"] for r in rows for code in ("screening_range", "non_compressor", "/gas/"))
    estimated = [r for r in rows if r["basis"] not in ("no_factor", "")]
    assert {r["basis"] for r in estimated} - {"leaker_factor"}, "the demo should hold a non-factor estimate"
    assert all(r["factor_key"] and r["factor_value"] and r["factor_unit"] for r in estimated)
    legend = (tmp_path / "plain" / "legend.csv").read_text(encoding="utf-8")
    assert "memory" in legend and "closed" in legend


@pytest.mark.parametrize(("mask", "expected"), [(0o022, 0o644), (0o027, 0o640)])
def test_outputs_follow_the_umask_and_keys_stay_private(demo_store, tmp_path, mask, expected):
    from sync.bundle import make_device_bundle
    from sync.pdf_survey import write_survey_pdf
    from sync.trust import key_folder

    old = os.umask(mask)
    try:
        paths = export_csv(demo_store, tmp_path / "csv")
        paths.append(write_survey_pdf(demo_store, survey_with_resurvey(demo_store), tmp_path / "s.pdf"))
        make_device_bundle(demo_store, tmp_path / "b.zip")
        paths.append(tmp_path / "b.zip")
    finally:
        os.umask(old)
    for path in paths:
        assert os.stat(path).st_mode & 0o777 == expected, path
    key = key_folder(demo_store) / "device.key"
    assert key.exists() and os.stat(key).st_mode & 0o777 == 0o600
