"""The survey report PDF: conditions, camera check, each leak with its marked-up photo, charts, cautions."""

from __future__ import annotations

from pathlib import Path

from reportlab.lib.units import mm
from reportlab.platypus import Image, KeepTogether, PageBreak, SimpleDocTemplate, Spacer

from fieldapp.atomic import write_bytes
from fieldapp.core.weather_units import report_text
from fieldapp.evidence.ingest import ensure
from fieldapp.store.base import Store
from sync.pdf_common import MARGIN, PAGE, bar_chart, fields, grid, numbered_canvas, para
from sync.report_model import SurveyReport, survey_report

WIDTH = PAGE[0] - 2 * MARGIN


def when(iso: str) -> str:
    """'2026-10-22T09:00:00-06:00' as '2026-10-22 09:00 (UTC-06:00)'."""
    if not iso:
        return "-"
    return f"{iso[:10]} {iso[11:16]} (UTC{iso[19:] or '+00:00'})"


def _due(due: str, done: str, kind: str, overdue: str) -> str:
    return f"{due or '-'}  OVERDUE" if kind in overdue.split(";") and not done else (due or "-")


def _num(value: float | None, digits: int = 4) -> str:
    return "-" if value is None else f"{value:.{digits}g}"


def _leak_block(store: Store, line, report: SurveyReport) -> list:
    parts = [para(f"{line.tag} - {line.component_type.replace('_', ' ')}, {line.service.replace('_', ' ')} "
                  f"service - {line.state.upper()}", "h3")]
    if line.hazard:
        parts.append(para(f"HAZARD: {line.hazard_note or 'flagged hazardous'}. Follow the site's emergency "
                          f"procedures before approaching. {report.site.get('emergency_note', '')}", "hazard"))
    info = fields([
        ("Location", line.location_note), ("Detected", when(line.detected_at)),
        ("Estimate", f"{_num(line.methane_kg_per_h)} kg CH4/h ({line.basis.replace('_', ' ')})"),
        ("CO2e", f"{_num(line.co2e_kg_per_h_100yr)} kg/h 100-yr, {_num(line.co2e_kg_per_h_20yr)} kg/h 20-yr "
                 f"({report.gwp_set.upper()})"),
        ("Basis", line.factor_row), ("Source", line.estimate_source),
    ], WIDTH * 0.58)
    dates = grid([
        ["", "due", "done"],
        ["first attempt", _due(line.first_attempt_due, line.first_attempt_on, "first_attempt", line.overdue),
         line.first_attempt_on or "-"],
        ["final repair", _due(line.final_repair_due, line.repaired_on, "final_repair", line.overdue),
         line.repaired_on or "-"],
        ["resurvey", _due(line.resurvey_due, line.resurveyed_on, "resurvey", line.overdue), line.resurveyed_on or "-"],
        ["delay of repair", _due(line.delay_limit, "", "delay_limit", line.overdue),
         f"{line.delay_on} {line.delay_reason}".strip() or "-"],
    ], [WIDTH * 0.14, WIDTH * 0.17, WIDTH * 0.11])
    photo = None
    media = store.rows("SELECT * FROM media WHERE leak_id = ? AND deleted = 0 AND media_kind = 'photo' "
                       "ORDER BY added_at LIMIT 1", (line.leak_id,))
    if media:
        path = ensure(store, media[0], "marked")
        img = Image(str(path))
        scale = (WIDTH * 0.4) / img.imageWidth
        img.drawWidth, img.drawHeight = img.imageWidth * scale, img.imageHeight * scale
        photo = img
    from reportlab.platypus import Table

    left = [info, Spacer(1, 3), dates]
    if line.late:
        left.append(para(f"Done after the due date: {line.late.replace('_', ' ')}", "hazard"))
    row = Table([[left, photo or para("no photo", "small")]], colWidths=[WIDTH * 0.58, WIDTH * 0.42])
    row.setStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0)])
    parts += [row, Spacer(1, 6)]
    return [KeepTogether(parts)]


def render(store: Store, report: SurveyReport) -> bytes:
    """PDF bytes of a survey report."""
    import io

    s, site, prog = report.survey, report.site, report.program
    buffer = io.BytesIO()
    doc = SimpleDocTemplate(buffer, pagesize=PAGE, leftMargin=MARGIN, rightMargin=MARGIN, topMargin=16 * mm,
                            bottomMargin=16 * mm, title=f"Survey report {site['name']} {s['started_local'][:10]}",
                            author="plumebook", subject="LDAR survey report")
    story = [para(f"Leak survey report - {site['name']}", "title"),
             para(f"{site['kind'].replace('_', ' ')}, operated by {site['operator'] or '-'}; {site['location']}",
                  "body"),
             para(f"Program: {prog['title']} ({prog['id']}) - {prog['rule']}", "body"),
             para(prog["notice"], "small"),
             para(f"Deadlines marked OVERDUE as of {report.as_of}.", "small"), Spacer(1, 4)]
    story += [para("Survey", "h2"), fields([
        ("Method", s["method"].upper()), ("Started / ended", f"{when(s['started_local'])} / {when(s['ended_local'])}"),
        ("Operator", s["operator"]), ("Qualification", s["qualification"]),
        ("Camera", f"{s['camera_make']} {s['camera_model']} serial {s['camera_serial']}"),
        ("Daily camera check", f"{s['camera_check'].upper()}: {s['camera_check_note']}"),
        ("Ambient temperature", report_text(s, "ambient_temp_c")),
        ("Wind (speed / max)", f"{report_text(s, 'wind_speed_m_s')} / {report_text(s, 'wind_max_m_s')}"),
        ("Sky", s["sky"]), ("Areas covered", "; ".join(s["areas_done"]) or "-"),
        ("Areas planned", "; ".join(s["areas"]) or "-"),
        ("Deviations from plan", s["deviations"] or ("none (stated)" if s["no_deviations"] else "not stated")),
    ], WIDTH)]
    story += [para("Summary", "h2"),
              para(f"{len(report.leaks)} leak(s) recorded; states: " + ", ".join(
                  f"{st} {sum(1 for x in report.leaks if x.state == st)}"
                  for st in sorted({x.state for x in report.leaks})) if report.leaks else "No leaks recorded.",
                   "body"), Spacer(1, 4),
              bar_chart("Leaks by component type", {k.replace("_", " "): v for k, v in report.by_type.items()},
                        "count", WIDTH, "%.0f"),
              Spacer(1, 4),
              bar_chart("Estimated methane by component type", report.methane_by_type, "kg/h", WIDTH, "%.3g"),
              para("Estimated rates are engineering estimates; the basis of each is given with the leak.", "small")]
    story += [para("Cautions", "h2")] + [para(c, "caution") for c in report.cautions]
    if report.leaks:
        story += [PageBreak(), para("Leaks", "h2")]
        for line in report.leaks:
            story += _leak_block(store, line, report)
    story += [Spacer(1, 8), para(f"Made by plumebook at {report.made_at}. The fingerprint in the footer is the "
                                 "SHA-256 of the records this report was made from.", "small")]
    header = f"plumebook survey report - {site['name']} - {s['started_local'][:10]}"
    doc.build(story, canvasmaker=numbered_canvas(header, report.fingerprint))
    return buffer.getvalue()


def write_survey_pdf(store: Store, survey_id: str, out: Path) -> Path:
    """Write the survey report PDF atomically."""
    return write_bytes(out, render(store, survey_report(store, survey_id)))
