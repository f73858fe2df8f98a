"""The survey report PDF: conditions, camera check, each leak with its marked-up photo, charts, cautions."""

from __future__ import annotations

from pathlib import Path

from reportlab.lib.units import mm
from reportlab.platypus import KeepTogether, PageBreak, SimpleDocTemplate, Spacer

from fieldapp.atomic import write_bytes
from fieldapp.store.base import Store
from fieldapp.store.bulk import gc_paused
from sync.pdf_common import MARGIN, PAGE, Grid, bar_chart, fields, grid, numbered_canvas, para
from sync.pdf_leak_parts import (
    Tick,
    caption,
    deadline_table,
    flags,
    leak_fields,
    people_table,
    photo_grid,
    picture,
    timeline_table,
)
from sync.report_model import Progress, SurveyReport, survey_report, words

WIDTH = PAGE[0] - 2 * MARGIN


def certification_block(statement: str) -> KeepTogether:
    """The statement to sign and the lines for name, title, signature and date, kept on one page."""
    lines = grid([["Name", ""], ["Title", ""], ["Signature", ""], ["Date", ""]], [WIDTH * 0.2, WIDTH * 0.5],
                 header=False)
    lines.hAlign = "LEFT"
    lines.setStyle([("TOPPADDING", (0, 0), (-1, -1), 9), ("BOTTOMPADDING", (0, 0), (-1, -1), 9)])
    return KeepTogether([para("Certification", "h2"), para(statement, "body"), Spacer(1, 4), lines])


def _leak_block(store: Store, line, report: SurveyReport, progress: Progress | None = None,
                lead: tuple = ()) -> list:
    """One leak: heading, fields, deadlines and first photo; who did what; more photos; timeline.

    Kept on one page when it fits; a longer one breaks between its pieces, never inside one. ``lead``
    (the section heading before the first leak) is kept with the leak's first piece.
    """
    marks = flags(line)
    parts = [*lead, para(f"{line.tag} - {words(line.component_type)}, {words(line.service)} "
                  f"service - {words(line.state).upper()}" + (f" ({', '.join(marks)})" if marks else ""), "h3")]
    if line.hazard:
        parts.append(para(f"HAZARD: {line.hazard_note or 'flagged hazardous'}. Follow the site's emergency "
                          f"procedures before approaching. {report.site.get('emergency_note', '')}", "hazard"))
    left = [leak_fields(line, report.gwp_set, WIDTH * 0.58), Spacer(1, 3), deadline_table(line, WIDTH * 0.56)]
    if line.late:
        left.append(para(f"Done after the due date: {words(line.late).replace(';', ', ')}", "hazard"))
    if line.photos:
        right = [picture(store, line.photos[0], WIDTH * 0.4, WIDTH * 0.4),
                 para(caption(1, len(line.photos), line.photos[0]), "caption")]
    else:
        right = [para("no photo", "small")]
    row = Grid([[left, right]], colWidths=[WIDTH * 0.58, WIDTH * 0.42])
    row.setStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0)])
    s = report.survey
    people = people_table(line, s["operator"], f"{s['camera_make']} {s['camera_model']} "
                          f"{s['camera_serial']}".strip(), WIDTH)
    # kept together in pieces: a leak with many photos or a long timeline fills more than a page, and one
    # block that size would be split anyway, leaving the heading before it alone at the foot of a page
    out = [KeepTogether(parts + [row, Spacer(1, 3)]),
           KeepTogether([para("Who did what", "small"), people, Spacer(1, 3)])]
    more = photo_grid(store, line, WIDTH, 3, first=2)
    if more:
        out.append(KeepTogether([para("More photos and clips of this leak", "small"), *more, Spacer(1, 3)]))
    out += [KeepTogether([para("Timeline (as `plumebook history` tells it)", "small"), timeline_table(line, WIDTH)]),
            Spacer(1, 8)]
    return [KeepTogether(out), Tick(progress)]


def render(store: Store, report: SurveyReport, progress: Progress | None = None) -> bytes:
    """PDF bytes of a survey report; ``progress(1)`` is called as each leak is prepared and as it is laid out."""
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
        story.append(PageBreak())
        for n, line in enumerate(report.leaks):
            story += _leak_block(store, line, report, progress, (para("Leaks", "h2"),) if n == 0 else ())
            if progress:
                progress(1)
    story += [Spacer(1, 8), certification_block(report.certification), Spacer(1, 6),
              para(f"Made by plumebook at {report.made_at_local or report.made_at} (site time). The fingerprint in "
                   "the footer is the SHA-256 of the records this report was made from.", "small")]
    header = f"plumebook survey report - {site['name']} - {s['started_local'][:10]}"
    with gc_paused():  # layout builds many short-lived objects; one collection afterwards (bench_report)
        doc.build(story, canvasmaker=numbered_canvas(header, report.fingerprint))
    return buffer.getvalue()


def write_survey_pdf(store: Store, survey_id: str, out: Path, progress: Progress | None = None) -> Path:
    """Write the survey report PDF atomically; ``progress(1)`` three times per leak (model, photos, layout)."""
    return write_bytes(out, render(store, survey_report(store, survey_id, progress=progress), progress))
