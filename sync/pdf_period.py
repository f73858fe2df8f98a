"""The period summary PDF for filings: per site, surveys done and missed, leaks by outcome, emissions."""

from __future__ import annotations

import io
from pathlib import Path

from reportlab.lib.pagesizes import landscape
from reportlab.lib.units import mm
from reportlab.platypus import CondPageBreak, KeepTogether, SimpleDocTemplate, Spacer

from fieldapp.atomic import write_bytes
from fieldapp.store.base import Store
from sync.pdf_common import MARGIN, PAGE, bar_chart, fields, grid, numbered_canvas, para
from sync.pdf_flow import HeadWithRows, column_table
from sync.pdf_survey import certification_block
from sync.report_fields import ReportTable
from sync.report_model import PeriodReport, SiteSummary, period_report

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
    rows = [["Site", "Program", "Surveys done", "Found", "Repaired, resurvey confirmed",
             "Repaired, resurvey pending", "On delay", "Still open", "Void", "CH4 (kg)", "CO2e t 100-yr",
             "CO2e t 20-yr"]]
    for s in report.sites:
        rows.append([s.site, s.program_id, str(len(s.surveys_done)), str(s.found), str(s.confirmed),
                     str(s.not_confirmed), str(s.delayed), str(s.still_open), str(s.void), f"{s.methane_kg:,.1f}",
                     f"{s.co2e_t_100yr:,.2f}", f"{s.co2e_t_20yr:,.2f}"])
    keys = ("found", "confirmed", "not_confirmed", "delayed", "still_open", "void", "methane_kg", "co2e_t_100yr",
            "co2e_t_20yr")
    totals = [sum(getattr(s, k) for s in report.sites) for k in keys]
    rows.append(["Total", "", str(sum(len(s.surveys_done) for s in report.sites)), *(str(v) for v in totals[:6]),
                 f"{totals[6]:,.1f}", f"{totals[7]:,.2f}", f"{totals[8]:,.2f}"])
    w = WIDTH
    story.append(grid(rows, [w * 0.17, w * 0.11, w * 0.06, w * 0.05, w * 0.08, w * 0.08, w * 0.06, w * 0.06,
                             w * 0.05, w * 0.08, w * 0.1, w * 0.1]))
    story += [Spacer(1, 8), bar_chart("Estimated methane by site", {s.site: s.methane_kg for s in report.sites},
                                      "kg", WIDTH, "%.1f")]
    for s in report.sites:
        story += _site_section(s)
    story += [para("Cautions", "h2")] + [para(c, "caution") for c in report.cautions]
    story += [Spacer(1, 6), certification_block(report.certification), Spacer(1, 4),
              para(f"Made by plumebook at {report.made_at_local or report.made_at}.", "small")]
    doc.build(story, canvasmaker=numbered_canvas(f"plumebook period summary {report.start} to {report.end}",
                                                 report.fingerprint, LANDSCAPE))
    return buffer.getvalue()


def _table(title: str, table: ReportTable | None, empty: str, what: str) -> list:
    """A heading, the table the program lists (split across pages, header repeated), its citation under it."""
    if table is None:
        return []
    notes = [f"{what} the program lists ({table.status}): {table.citation or 'no citation given'}"]
    notes += [f"Not recorded: {missing}." for missing in table.not_recorded]
    grid_ = column_table(table.columns, table.weights, table.rows, WIDTH, empty, notes)
    return [HeadWithRows([para(title, "h3")], grid_)]


def _site_section(s: SiteSummary) -> list:
    """One site: identifiers, the surveys and leaks in the columns its program lists, counts, not monitored."""
    out: list = [CondPageBreak(60 * mm), para(s.site, "h2"),
                 KeepTogether([fields(s.site_fields, WIDTH),
                               para(f"Program {s.program_id}. Report fields per site: {s.site_citation}", "small")])]
    out += _table("Surveys in the period", s.survey_table, "none in the period", "Report fields per survey")
    out += _table("Survey records", s.record_table, "none in the period", "Survey record fields")
    out.append(para("Survey windows missed: " + ("; ".join(s.windows_missed) or "none"),
                    "hazard" if s.windows_missed else "body"))
    out += _table("Leaks found in the period", s.leak_table, "none", "Report fields per leak")
    by_type = ", ".join(f"{t} {n}" for t, n in s.leaks_by_type.items()) or "none"
    out.append(para(f"Components with leaks, by type: {by_type}. Repairs confirmed by a resurvey: {s.confirmed}; "
                    f"repaired, resurvey not yet done: {s.not_confirmed}; on delay of repair: {s.delayed}; "
                    f"still open: {s.still_open}.", "body"))
    out.append(para("Overdue items: " + ("; ".join(s.overdue_items) or "none"),
                    "hazard" if s.overdue_items else "body"))
    out.append(para("Difficult- or unsafe-to-monitor components (own written schedule): " + (
        "; ".join(f"{c['tag']} {c['type']} ({c['flag']})" for c in s.not_monitored) or "none"), "body"))
    return out


def write_period_pdf(store: Store, start, end, out: Path, site_id: str | None = None, progress=None) -> Path:
    """Write the period summary PDF atomically; ``progress(1)`` as each leak of the site(s) is read."""
    return write_bytes(out, render(period_report(store, start, end, site_id, progress=progress)))
