"""The leak record PDF: everything plumebook holds about one leak, for an auditor.

Site identifiers, the leak's fields, its component, its state and every deadline with the rule it
comes from, who did what, the whole timeline (as `plumebook history` tells it), every photo with its
caption and every clip, the cautions and a certification block.
"""

from __future__ import annotations

import io
from datetime import date
from pathlib import Path

from reportlab.lib.units import mm
from reportlab.platypus import SimpleDocTemplate, Spacer

from fieldapp.atomic import write_bytes
from fieldapp.store.base import Store
from sync.leak_report import LeakReport, leak_report
from sync.pdf_common import MARGIN, PAGE, fields, grid, numbered_canvas, para
from sync.pdf_leak_parts import (
    Tick,
    flags,
    leak_fields,
    method_words,
    people_table,
    photo_grid,
    timeline_table,
)
from sync.pdf_survey import certification_block
from sync.report_model import Progress, words

WIDTH = PAGE[0] - 2 * MARGIN


def _deadlines(report: LeakReport):
    rows = [["deadline", "due", "done", "standing", "rule and citation"]]
    for d in report.deadlines:
        standing = para(d["standing"], "alert") if d["standing"].startswith("OVERDUE") else d["standing"]
        rows.append([d["deadline"], d["due"], d["done"], standing,
                     f"{d['rule']} ({d['citation']}; status: {d['status']})"])
    return grid(rows, [WIDTH * 0.13, WIDTH * 0.11, WIDTH * 0.11, WIDTH * 0.2, WIDTH * 0.45])


def render(store: Store, report: LeakReport, progress: Progress | None = None) -> bytes:
    """PDF bytes of a leak record; ``progress(1)`` as each photo is placed and when the pages are laid out."""
    line, site, prog, comp = report.line, report.site, report.program, report.component
    buffer = io.BytesIO()
    doc = SimpleDocTemplate(buffer, pagesize=PAGE, leftMargin=MARGIN, rightMargin=MARGIN, topMargin=16 * mm,
                            bottomMargin=16 * mm, title=f"Leak record {line.tag} {site['name']}",
                            author="plumebook", subject="LDAR leak record")
    stood = (f"As recorded by the end of {report.recorded_by} (UTC); deadlines judged on that day."
             if report.recorded_by else f"As recorded now; deadlines judged on {report.as_of}.")
    marks = flags(line)
    story: list = [para(f"Leak record - {line.tag} at {site['name']}", "title"),
                   para(f"{words(line.component_type)}, {words(line.service)} service, found {line.detected_on}; "
                        f"state: {words(line.state).upper()}" + (f" ({', '.join(marks)})" if marks else "")
                        + f". {stood} Leak id {report.leak_id}.", "body")]
    if line.hazard:
        story.append(para(f"HAZARD: {line.hazard_note or 'flagged hazardous'}. The leak may be large, near "
                          "ignition or carry H2S: follow the site's emergency procedures before anyone approaches "
                          "it.", "hazard"))
    story += [para("Site", "h2"), fields(report.identifiers, WIDTH),
              para(f"Program: {prog['title']} ({prog['id']}) - {prog['rule']}", "body"), para(prog["notice"], "small"),
              para("Leak", "h2"), leak_fields(line, report.gwp_set, WIDTH),
              fields([("Detection method", method_words(line.detection_method)),
                      ("Hazard", "yes" if line.hazard else "no"),
                      ("Repeat leaker", "yes" if line.repeat_leaker else "no"), ("Program", line.program_id)], WIDTH),
              para("Found in survey", "h2"), fields(report.survey, WIDTH),
              para("Component", "h2"),
              fields([("Tag", comp.get("tag") or "-"), ("Type", words(comp.get("type"))),
                      ("Service", words(comp.get("service"))), ("Area", comp.get("area") or "-"),
                      ("Equipment", comp.get("equipment") or "-"),
                      ("Monitoring", ", ".join(w for w, k in (("difficult to monitor", "difficult_to_monitor"),
                                                              ("unsafe to monitor", "unsafe_to_monitor"))
                                               if comp.get(k)) or "routine"),
                      ("Component id", comp.get("id") or "-")], WIDTH),
              para("State and deadlines", "h2"), _deadlines(report),
              para(f"State: {words(line.state)}. Each deadline with the rule it comes from; status says how the "
                   "program file holds the value (text: read in the rule text).", "small")]
    if line.late:
        story.append(para(f"Done after the due date: {words(line.late).replace(';', ', ')}", "hazard"))
    story += [para("Who did what", "h2"), people_table(line, report.surveyor, report.instrument, WIDTH),
              para("Timeline", "h2"),
              para("Every record of this leak, its component, actions, photos, clips and edits, as "
                   "`plumebook history` shows them; times on the site's clock.", "small"),
              timeline_table(line, WIDTH)]
    pictures = photo_grid(store, line, WIDTH, 2, progress=progress)
    story += [para("Photos and clips", "h2")] + (pictures or [para("No photo or clip is stored for this leak.",
                                                                   "body")])
    story += [para("Cautions", "h2")] + [para(c, "caution") for c in report.cautions]
    story += [Spacer(1, 8), certification_block(report.certification), Spacer(1, 6),
              para(f"Made by plumebook at {report.made_at_local} (site time). The fingerprint in the footer is the "
                   "SHA-256 of the records this leak record was made from.", "small"), Tick(progress)]
    header = f"plumebook leak record - {line.tag} - {site['name']}"
    doc.build(story, canvasmaker=numbered_canvas(header, report.fingerprint))
    return buffer.getvalue()


def steps(store: Store, leak_id: str) -> int:
    """How many times ``write_leak_pdf`` calls ``progress``: the model, each photo, the layout."""
    found = store.rows("SELECT COUNT(*) AS n FROM media WHERE leak_id = ? AND deleted = 0 AND media_kind = 'photo'",
                       (leak_id,))
    return 2 + found[0]["n"]


def write_leak_pdf(store: Store, leak_id: str, out: Path, as_of: date | None = None,
                   progress: Progress | None = None) -> Path:
    """Write the leak record PDF atomically."""
    return write_bytes(out, render(store, leak_report(store, leak_id, as_of, progress), progress))
