"""The period summary PDF for filings: per site, surveys done and missed, leaks by outcome, emissions."""

from __future__ import annotations

import io
from pathlib import Path

from reportlab.lib.pagesizes import landscape
from reportlab.lib.units import mm
from reportlab.platypus import SimpleDocTemplate, Spacer

from fieldapp.atomic import write_bytes
from fieldapp.store.base import Store
from sync.pdf_common import MARGIN, PAGE, bar_chart, grid, numbered_canvas, para
from sync.report_model import PeriodReport, period_report

LANDSCAPE = landscape(PAGE)
WIDTH = LANDSCAPE[0] - 2 * MARGIN


def render(report: PeriodReport) -> bytes:
    """PDF bytes of a period summary."""
    buffer = io.BytesIO()
    doc = SimpleDocTemplate(buffer, pagesize=LANDSCAPE, leftMargin=MARGIN, rightMargin=MARGIN, topMargin=16 * mm,
                            bottomMargin=16 * mm, title=f"Period summary {report.start} to {report.end}",
                            author="plumebook", subject="LDAR period summary")
    story = [para(f"LDAR period summary - {report.start} to {report.end}", "title"),
             para(f"{len(report.sites)} site(s). Leaks counted by detection date inside the period; states and "
                  f"overdue items as of {report.end}. Emissions: engineering estimates, duration convention "
                  f"'{report.convention}', GWP {report.gwp_set.upper()} (100-year and 20-year).", "body"),
             para(f"Duration rule: {report.duration_rule}.", "body"),
             *(para(f"Not estimated: {line}", "body") for line in report.not_estimated),
             Spacer(1, 6)]
    rows = [["Site", "Program", "Surveys done", "Found", "Repaired", "On delay", "Still open", "Void",
             "CH4 (kg)", "CO2e t 100-yr", "CO2e t 20-yr"]]
    for s in report.sites:
        rows.append([s.site, s.program_id, str(len(s.surveys_done)), str(s.found), str(s.repaired), str(s.delayed),
                     str(s.still_open), str(s.void), f"{s.methane_kg:,.1f}", f"{s.co2e_t_100yr:,.2f}",
                     f"{s.co2e_t_20yr:,.2f}"])
    totals = [sum(getattr(s, k) for s in report.sites) for k in ("found", "repaired", "delayed", "still_open",
                                                                  "void", "methane_kg", "co2e_t_100yr", "co2e_t_20yr")]
    rows.append(["Total", "", str(sum(len(s.surveys_done) for s in report.sites)), *(str(v) for v in totals[:5]),
                 f"{totals[5]:,.1f}", f"{totals[6]:,.2f}", f"{totals[7]:,.2f}"])
    w = WIDTH
    story.append(grid(rows, [w * 0.2, w * 0.12, w * 0.07, w * 0.06, w * 0.07, w * 0.06, w * 0.06, w * 0.05,
                             w * 0.09, w * 0.11, w * 0.11]))
    story += [Spacer(1, 8), bar_chart("Estimated methane by site", {s.site: s.methane_kg for s in report.sites},
                                      "kg", WIDTH, "%.1f")]
    for s in report.sites:
        story.append(para(s.site, "h2"))
        story.append(para("Surveys done: " + (", ".join(s.surveys_done) or "none in the period"), "body"))
        story.append(para("Survey windows missed: " + ("; ".join(s.windows_missed) or "none"),
                          "hazard" if s.windows_missed else "body"))
        story.append(para("Overdue items: " + ("; ".join(s.overdue_items) or "none"),
                          "hazard" if s.overdue_items else "body"))
    story += [para("Cautions", "h2")] + [para(c, "caution") for c in report.cautions]
    story.append(para(f"Made by plumebook at {report.made_at}.", "small"))
    doc.build(story, canvasmaker=numbered_canvas(f"plumebook period summary {report.start} to {report.end}",
                                                 report.fingerprint, LANDSCAPE))
    return buffer.getvalue()


def write_period_pdf(store: Store, start, end, out: Path, site_id: str | None = None) -> Path:
    """Write the period summary PDF atomically."""
    return write_bytes(out, render(period_report(store, start, end, site_id)))
