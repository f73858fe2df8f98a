"""A leak's record as a PDF (`plumebook report leak`), the survey report's timelines from `history`, every photo.

Sources of the checked values:
- 40 CFR 60.5397a(h)(1) [text, eCFR print quoted in the program file us-nsps-oooo-a.toml]: the first attempt
  at repair no later than 30 calendar days after detection; (h)(2) the repair no later than 30 calendar days
  after the first attempt. Checked with Python's datetime, not with plumebook's date code.
- SHA-256 of each photo: computed here with hashlib (FIPS 180-4) from the bytes handed in, or from the
  stored original file.
- Which events a leak's timeline holds, and their order: `plumebook history --json` (tests/test_desk.py);
  the report must say the same.
- Page layout (nothing outside the margins, no heading last on a page): our own rule, no source.
"""

from __future__ import annotations

import hashlib
import io
import json
import shutil
from datetime import date, datetime, timedelta
from pathlib import Path
from zoneinfo import ZoneInfo

import pytest
from PIL import Image, ImageDraw
from pypdf import PdfReader

from fieldapp.cli import main
from fieldapp.evidence.ingest import add_media, library
from fieldapp.store import ops
from sync.leak_report import leak_report
from sync.pdf_common import PAGE
from sync.pdf_leak import render as render_leak
from sync.pdf_survey import render as render_survey
from sync.pdf_survey import write_survey_pdf
from sync.report_model import CERTIFICATION, TIMELINE_KEYS, survey_report
from tests.conftest import SITE
from tests.test_evidence import mp4
from tests.test_filing_outputs import TODAY, _bottom_text, _check_margins, flat, survey_with_resurvey

SURVEY = {"method": "ogi", "operator": "Ira Quenby (invented)", "qualification": "OGI course (invented)",
          "camera_make": "Make", "camera_model": "M1", "camera_serial": "S-1", "camera_check": "passed",
          "ambient_temp_c": 5, "sky": "clear", "wind_max_m_s": 2}
LEAK_HEADINGS = {"Site", "Leak", "Found in survey", "Component", "State and deadlines", "Who did what", "Timeline",
                 "Photos and clips", "Cautions", "Certification"}


def squeeze(text: str) -> str:
    """Text without any whitespace (a long SHA-256 wraps inside a table cell)."""
    return "".join(text.split())


def photo_bytes(n: int) -> bytes:
    img = Image.new("RGB", (640, 480), (30 + 30 * n, 40, 90))
    ImageDraw.Draw(img).rectangle((100 + 20 * n, 100, 300 + 20 * n, 300), fill=(240, 170, 30))
    out = io.BytesIO()
    img.save(out, "JPEG", quality=85)
    return out.getvalue()


def leak_with_media(store, site, photos: int = 6, clips: int = 1):
    survey, _ = ops.start_survey(store, {**SURVEY, "site_id": site.id, "started_at": "2026-11-30T08:00:00-07:00"})
    leak = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00"},
                        new_component={"tag": "G-6", "type": "valve", "service": "gas"})
    shas = []
    for n in range(photos):
        data = photo_bytes(n)
        add_media(store, leak.id, data, f"view-{n + 1}.jpg", [(0.4, 0.5, "G-6")] if n % 2 == 0 else ())
        shas.append(hashlib.sha256(data).hexdigest())
    clip_shas = []
    for n in range(clips):
        data = mp4(4500 + n)
        add_media(store, leak.id, data, f"clip-{n + 1}.mp4")
        clip_shas.append(hashlib.sha256(data).hexdigest())
    return survey, leak, shas, clip_shas


def test_report_leak_of_the_demos_repaired_leak_reads_back_whole(demo_store, tmp_path, capsys):
    # TD-0007 (demo_site/scenario.toml): found, first attempt, repaired, resurvey passed, one photo.
    out = tmp_path / "td-0007.pdf"
    assert main(["--db", str(demo_store.path), "report", "leak", "TD-0007", "--out", str(out)]) == 0
    assert capsys.readouterr().out.strip() == str(out)
    text = flat(out.read_bytes())
    leak = demo_store.rows("SELECT l.* FROM leaks l JOIN components c ON c.id = l.component_id "
                           "WHERE c.tag = 'TD-0007'")[0]
    actions = {a["kind"]: a for a in demo_store.rows("SELECT * FROM actions WHERE leak_id = ?", (leak["id"],))}
    assert {"first_attempt", "repaired", "resurvey_passed"} <= set(actions)
    for step, kind in (("first attempt", "first_attempt"), ("repair", "repaired"), ("resurvey", "resurvey_passed")):
        assert f"{step} {actions[kind]['actor']}" in text, step  # who did what
        assert actions[kind]["done_on"] in text
    resurvey = actions["resurvey_passed"]
    assert resurvey["method"] == "ogi" and f"OGI / {resurvey['instrument']}" in text  # the method in the rule's words
    # the deadlines and their citations: 30 calendar days from detection / from the first attempt
    detected = datetime.fromisoformat(leak["detected_at"]).date()
    assert f"first attempt {detected + timedelta(days=30)}" in text  # 40 CFR 60.5397a(h)(1)
    first = date.fromisoformat(actions["first_attempt"]["done_on"])
    assert f"final repair {first + timedelta(days=30)}" in text  # 60.5397a(h)(2)
    assert "60.5397a(h)(1)" in text and "60.5397a(h)(2)" in text and "status: text" in text
    # every photo: caption with file, local capture time and the SHA-256 of the stored original
    media = demo_store.rows("SELECT * FROM media WHERE leak_id = ?", (leak["id"],))
    assert media
    for m in media:
        sha = hashlib.sha256(library(demo_store).original(m["sha256"]).read_bytes()).hexdigest()
        assert f"{m['original_name']}, taken" in text and f"SHA-256 {sha[:16]}" in text
    assert "DEMO-CS-0417" in text and "40.12340, -104.56780" in text  # site identifiers (demo scenario), five places
    assert "Certification" in text and CERTIFICATION in text
    assert all(blank in text for blank in ("Name", "Title", "Signature", "Date"))
    assert "H2S" in text  # the usual caution
    assert text.index("first attempt; actor") < text.index("repaired; actor") < text.index("resurvey passed; actor")


def test_report_leak_as_of_shows_the_record_as_it_stood(store, site, wall, tmp_path):
    survey, _ = ops.start_survey(store, {**SURVEY, "site_id": site.id, "started_at": "2026-11-30T08:00:00-07:00"})
    leak = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00",
                                "screening_ppm": 800}, new_component={"tag": "A-1", "type": "valve", "service": "gas"})
    ops.add_action(store, {"leak_id": leak.id, "kind": "first_attempt", "done_on": "2026-12-01", "actor": "Ann"})
    wall.advance(3 * 86400)  # recorded 2026-12-04 UTC
    ops.add_action(store, {"leak_id": leak.id, "kind": "repaired", "done_on": "2026-12-04", "actor": "Bo"})
    ops.edit(store, "leaks", leak.id, {"screening_ppm": 9000.0}, "Corrector")
    then = flat(render_leak(store, leak_report(store, leak.id, date(2026, 12, 2))))
    assert "ATTEMPTED" in then and "repair Bo" not in then and "800 ppmv" in then and "9000" not in then
    assert "As recorded by the end of 2026-12-02" in then
    now = flat(render_leak(store, leak_report(store, leak.id)))
    assert "REPAIRED" in now and "repair Bo" in now and "9000 ppmv" in now
    assert "screening ppm 800.0 -> 9000.0" in now  # the edit, old and new value, in the timeline
    db = str(store.path)
    assert main(["--db", db, "report", "leak", leak.id, "--as-of", "2026-11-01", "--out", str(tmp_path / "x.pdf")]) == 2
    assert not (tmp_path / "x.pdf").exists()


def test_report_leak_refuses_ambiguous_unknown_and_bad_out_with_one_line(store, tmp_path, capsys):
    for name in ("East pad (invented)", "West pad (invented)"):
        site = ops.add_site(store, {**SITE, "name": name})
        survey, _ = ops.start_survey(store, {**SURVEY, "site_id": site.id, "started_at": "2026-11-30T08:00:00-07:00"})
        ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00"},
                     new_component={"tag": "V-9", "type": "valve", "service": "gas"})
    db, out = str(store.path), str(tmp_path / "v9.pdf")
    assert main(["--db", db, "report", "leak", "V-9", "--out", out]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "leak" in err and "matches 2 open leaks" in err
    assert "V-9@2026-11-30 at East pad (invented)" in err and "V-9@2026-11-30 at West pad (invented)" in err
    assert not Path(out).exists()
    assert main(["--db", db, "report", "leak", "V-9", "--site", "West pad (invented)", "--out", out]) == 0
    assert "West pad (invented)" in flat(Path(out).read_bytes())
    capsys.readouterr()
    assert main(["--db", db, "report", "leak", "NO-SUCH", "--out", out]) == 2
    assert "leak" in capsys.readouterr().err
    assert main(["--db", db, "report", "leak", "V-9", "--site", "East pad (invented)", "--out", str(tmp_path)]) == 2
    assert "out" in capsys.readouterr().err


def test_report_survey_takes_site_at_date_or_id(demo_store, tmp_path, capsys):
    survey = demo_store.get("surveys", survey_with_resurvey(demo_store))
    site = demo_store.get("sites", survey["site_id"])
    day = datetime.fromisoformat(survey["started_at"]).astimezone(ZoneInfo(site["timezone"]))
    db = str(demo_store.path)
    assert main(["--db", db, "report", "survey", f"{site['name']}@{day.date()}", "--out", str(tmp_path / "a.pdf")]) == 0
    assert main(["--db", db, "report", "survey", survey["id"], "--out", str(tmp_path / "b.pdf")]) == 0
    assert flat((tmp_path / "a.pdf").read_bytes()).count("Leak survey report") == 1
    capsys.readouterr()
    assert main(["--db", db, "report", "survey", f"{site['name']}@2020-01-01", "--out", str(tmp_path / "c.pdf")]) == 2
    assert "survey" in capsys.readouterr().err and not (tmp_path / "c.pdf").exists()


def test_survey_report_timelines_are_the_history_events(demo_store, capsys):
    report = survey_report(demo_store, survey_with_resurvey(demo_store), TODAY)
    text = squeeze(flat(render_survey(demo_store, report)))
    for line in report.leaks:
        assert main(["--db", str(demo_store.path), "history", line.leak_id, "--json"]) == 0
        events = json.loads(capsys.readouterr().out)["events"]
        assert events and [{k: e[k] for k in TIMELINE_KEYS} for e in events] == \
            [{k: t[k] for k in TIMELINE_KEYS} for t in line.timeline]
        for e in events:
            assert squeeze(e["summary"]) in text, e["summary"]


def test_survey_report_draws_every_photo_with_caption_and_lists_clips(store, site, tmp_path):
    survey, leak, shas, clip_shas = leak_with_media(store, site)
    report = survey_report(store, survey.id, TODAY)
    (line,) = report.leaks
    assert [p["sha256"] for p in line.photos] == shas and [c["sha256"] for c in line.clips] == clip_shas
    pdf = render_survey(store, report)
    text = flat(pdf)
    for n, sha in enumerate(shas, 1):
        assert f"Photo {n} of 6: view-{n}.jpg, taken" in text and f"SHA-256 {sha[:16]}" in text
    assert f"Clip 1 of 1: clip-1.mp4, 4.5 s, taken not recorded, SHA-256 {clip_shas[0][:16]}" in text
    images = sum(len(page.images) for page in PdfReader(io.BytesIO(pdf)).pages)
    assert images == 6  # one picture per photo; the clip is listed, not drawn
    for sha in shas:  # originals untouched
        assert hashlib.sha256(library(store).original(sha).read_bytes()).hexdigest() == sha


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="poppler-utils not installed")
def test_many_photos_stay_inside_margins_and_no_heading_ends_a_page(store, site, tmp_path):
    survey, leak, _shas, _clips = leak_with_media(store, site, photos=6)
    report = survey_report(store, survey.id, TODAY)
    pdf = render_survey(store, report)
    (tmp_path / "s").mkdir()
    assert _check_margins(pdf, tmp_path / "s", PAGE) >= 3
    heads = {"Survey record", "Summary", "Components in the site inventory", "Cautions", "Leaks", "Certification",
             "G-6 -"}
    for n, last in enumerate(_bottom_text(pdf), 1):
        assert not any(last == h or last.startswith(h) and h.endswith("-") for h in heads), (n, last)
    record = render_leak(store, leak_report(store, leak.id))
    (tmp_path / "k").mkdir()
    assert _check_margins(record, tmp_path / "k", PAGE) >= 2
    for n, last in enumerate(_bottom_text(record), 1):
        assert last not in LEAK_HEADINGS, (n, last)


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="poppler-utils not installed")
def test_leak_record_of_the_demo_stays_inside_margins(demo_store, tmp_path):
    leak = demo_store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                           "WHERE c.tag = 'TD-0051'")[0]  # the demo's hazardous, overdue leak
    pdf = render_leak(demo_store, leak_report(demo_store, leak["id"], TODAY))
    assert _check_margins(pdf, tmp_path, PAGE) >= 2
    assert all(last not in LEAK_HEADINGS for last in _bottom_text(pdf))
    text = flat(pdf)
    assert "HAZARD" in text and "OVERDUE since" in text


def test_survey_report_progress_is_called_three_times_per_leak(demo_store, tmp_path):
    survey_id = survey_with_resurvey(demo_store)
    calls: list[int] = []
    write_survey_pdf(demo_store, survey_id, tmp_path / "s.pdf", calls.append)
    leaks = demo_store.rows("SELECT COUNT(*) AS n FROM leaks WHERE survey_id = ? AND deleted = 0", (survey_id,))
    assert sum(calls) == 3 * leaks[0]["n"] > 0
