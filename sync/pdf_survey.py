"""The survey report PDF: conditions, camera check, each leak with its marked-up photo, charts, cautions."""

from __future__ import annotations

from pathlib import Path

from reportlab.lib.units import mm
from reportlab.platypus import Image, KeepTogether, PageBreak, SimpleDocTemplate, Spacer, Table

from fieldapp.atomic import write_bytes
from fieldapp.evidence.ingest import ensure
from fieldapp.store.base import Store
from sync.pdf_common import MARGIN, PAGE, bar_chart, fields, grid, numbered_canvas, para
from sync.report_model import SurveyReport, survey_report, words

WIDTH = PAGE[0] - 2 * MARGIN


def when(iso: str) -> str:
    """'2026-10-22T09:00:00-06:00' as '2026-10-22 09:00 (UTC-06:00)'."""
    if not iso:
        return "-"
    return f"{iso[:10]} {iso[11:16]} (UTC{iso[19:] or '+00:00'})"


def _due(due: str, done: str, kind: str, overdue: str):
    """The due date; OVERDUE in red bold when this deadline is overdue and not done."""
    if kind in overdue.split(";") and not done:
        return para(f"{due or '-'}  OVERDUE", "alert")
    return due or "-"


def _num(value: float | None, digits: int = 4) -> str:
    return "-" if value is None else f"{value:.{digits}g}"


def certification_block(statement: str) -> KeepTogether:
    """The statement to sign and the lines for name, title, signature and date, kept on one page."""
    lines = grid([["Name", ""], ["Title", ""], ["Signature", ""], ["Date", ""]], [WIDTH * 0.2, WIDTH * 0.5],
                 header=False)
    lines.hAlign = "LEFT"
    lines.setStyle([("TOPPADDING", (0, 0), (-1, -1), 9), ("BOTTOMPADDING", (0, 0), (-1, -1), 9)])
    return KeepTogether([para("Certification", "h2"), para(statement, "body"), Spacer(1, 4), lines])


def _people(line, surveyor: str, instrument: str) -> list[list]:
    rows = [["step", "by", "method / instrument", "date"],
            ["detection", surveyor or "-", f"{line.detection_method or '-'} / {instrument or '-'}",
             line.detected_on or "-"],
            ["first attempt", line.first_attempt_by or "-", "-", line.first_attempt_on or "-"],
            ["repair", line.repaired_by or "-", "-", line.repaired_on or "-"],
            ["resurvey", line.resurveyed_by or "-",
             f"{line.resurvey_method or '-'} / {line.resurvey_instrument or '-'}", line.resurveyed_on or "-"]]
    if line.delay_on:
        rows.append(["delay of repair", f"route: {line.delay_kind or '-'}", line.delay_reason or "-",
                     f"from {line.delay_on}, limit {line.delay_limit or 'not set yet'}"])
        if line.delay_kind == "parts":
            rows.append(["parts", "-", f"ordered {line.parts_ordered_on or '-'}",
                         f"received {line.parts_received_on or 'not yet'}"])
    return rows


def _photo(store: Store, line) -> list:
    media = store.rows("SELECT * FROM media WHERE leak_id = ? AND deleted = 0 AND media_kind = 'photo' "
                       "ORDER BY added_at LIMIT 1", (line.leak_id,))
    if not media:
        return [para("no photo", "small")]
    img = Image(str(ensure(store, media[0], "marked")))
    scale = (WIDTH * 0.4) / img.imageWidth
    img.drawWidth, img.drawHeight = img.imageWidth * scale, img.imageHeight * scale
    out: list = [img]
    for n, p in enumerate(line.photos, 1):
        out.append(para(f"Photo {n} of {len(line.photos)}: {p['file'] or 'unnamed'}, taken {p['taken']}, "
                        f"SHA-256 {p['sha256'][:16]}", "caption"))
    return out


def _leak_block(store: Store, line, report: SurveyReport) -> list:
    flags = [w for w, on in (("difficult to monitor", line.difficult_to_monitor),
                             ("unsafe to monitor", line.unsafe_to_monitor),
                             ("repeat leaker", line.repeat_leaker)) if on]
    parts = [para(f"{line.tag} - {words(line.component_type)}, {words(line.service)} "
                  f"service - {words(line.state).upper()}" + (f" ({', '.join(flags)})" if flags else ""), "h3")]
    if line.hazard:
        parts.append(para(f"HAZARD: {line.hazard_note or 'flagged hazardous'}. Follow the site's emergency "
                          f"procedures before approaching. {report.site.get('emergency_note', '')}", "hazard"))
    info = fields([
        ("Location", line.location_note), ("Detected", when(line.detected_at)),
        ("Screening", f"{_num(line.screening_ppm)} ppmv" if line.screening_ppm is not None else "-"),
        ("Measured", f"{_num(line.measured_rate)} {line.measured_unit} ({line.measured_instrument or '-'})"
         if line.measured_rate is not None else "-"),
        ("Estimate", f"{_num(line.methane_kg_per_h)} kg CH4/h ({words(line.basis)})"),
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
    ], [WIDTH * 0.14, WIDTH * 0.22, WIDTH * 0.2])
    left = [info, Spacer(1, 3), dates]
    if line.late:
        left.append(para(f"Done after the due date: {words(line.late).replace(';', ', ')}", "hazard"))
    row = Table([[left, _photo(store, line)]], colWidths=[WIDTH * 0.58, WIDTH * 0.42])
    row.setStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0)])
    s = report.survey
    people = grid(_people(line, s["operator"], f"{s['camera_make']} {s['camera_model']} {s['camera_serial']}".strip()),
                  [WIDTH * 0.16, WIDTH * 0.26, WIDTH * 0.34, WIDTH * 0.24])
    history = grid([["date", "event", "by", "detail"]] + [[e["on"], e["event"], e["by"] or "-", e["detail"] or "-"]
                                                         for e in line.timeline],
                   [WIDTH * 0.12, WIDTH * 0.14, WIDTH * 0.22, WIDTH * 0.52])
    parts += [row, Spacer(1, 3), para("Who did what", "small"), people, Spacer(1, 3), para("Timeline", "small"),
              history, Spacer(1, 8)]
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
             fields(report.identifiers, WIDTH),
             para(f"Program: {prog['title']} ({prog['id']}) - {prog['rule']}", "body"),
             para(prog["notice"], "small"),
             para(f"Deadlines marked OVERDUE as of {report.as_of}.", "small"), Spacer(1, 4)]
    story += [para("Survey record", "h2"),
              grid([["field", "value", "program lists it"]] + [[label, value, "yes" if req else "-"]
                                                               for label, value, req in report.record],
                   [WIDTH * 0.3, WIDTH * 0.55, WIDTH * 0.15]),
              para(f"Fields the program lists: {report.record_citation or 'the program lists none'}", "small")]
    story += [para("Summary", "h2"),
              para(f"{len(report.leaks)} leak(s) recorded; states: " + ", ".join(
                  f"{st} {n}" for st, n in report.by_state.items()) if report.leaks else "No leaks recorded.",
                   "body"), Spacer(1, 4),
              bar_chart("Leaks by state", report.by_state, "count", WIDTH, "%.0f"),
              Spacer(1, 4),
              bar_chart("Estimated methane by component type", report.methane_by_type, "kg/h", WIDTH, "%.3g"),
              para("Estimated rates are engineering estimates; the basis of each is given with the leak.", "small"),
              para("Components in the site inventory", "h2"),
              para("OGI surveys cover the areas listed in the record; the inventory below is what those areas hold. "
                   "Components flagged difficult or unsafe to monitor follow their own written schedule and are "
                   "listed with their flag.", "small"),
              grid([["component type", "count"]] + [[t, str(n)] for t, n in report.components_by_type.items()]
                   + [["total", str(sum(report.components_by_type.values()))]], [WIDTH * 0.4, WIDTH * 0.15]),
              Spacer(1, 4),
              grid([["difficult- / unsafe-to-monitor tag", "type", "flag"]]
                   + ([[c["tag"], c["type"], c["flag"]] for c in report.not_monitored] or [["none", "-", "-"]]),
                   [WIDTH * 0.3, WIDTH * 0.25, WIDTH * 0.45])]
    story += [para("Cautions", "h2")] + [para(c, "caution") for c in report.cautions]
    if report.leaks:
        story += [PageBreak(), para("Leaks", "h2")]
        for line in report.leaks:
            story += _leak_block(store, line, report)
    story += [Spacer(1, 8), certification_block(report.certification), Spacer(1, 6),
              para(f"Made by plumebook at {report.made_at_local or report.made_at} (site time). The fingerprint in "
                   "the footer is the SHA-256 of the records this report was made from.", "small")]
    header = f"plumebook survey report - {site['name']} - {s['started_local'][:10]}"
    doc.build(story, canvasmaker=numbered_canvas(header, report.fingerprint))
    return buffer.getvalue()


def write_survey_pdf(store: Store, survey_id: str, out: Path) -> Path:
    """Write the survey report PDF atomically."""
    return write_bytes(out, render(store, survey_report(store, survey_id)))
