"""The period summary PDF for filings: per site, surveys done and missed, leaks by outcome, emissions."""

from __future__ import annotations

import io
from pathlib import Path

from reportlab.lib.pagesizes import landscape
from reportlab.lib.units import mm
from reportlab.platypus import CondPageBreak, SimpleDocTemplate, Spacer

from fieldapp.atomic import write_bytes
from fieldapp.store.base import Store
from sync.pdf_common import MARGIN, PAGE, bar_chart, grid, numbered_canvas, para
from sync.pdf_survey import certification_block
from sync.report_model import PeriodReport, SiteSummary, period_report, words

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


SURVEY_HEAD = ("Date of the survey", "Begin time", "End time", "Operator", "Operator training and experience",
               "Instrument", "Daily verification", "Ambient temperature", "Sky conditions", "Maximum wind speed",
               "Deviations from the monitoring plan", "Leaks found")
SURVEY_WIDTHS = (0.08, 0.095, 0.095, 0.075, 0.105, 0.105, 0.075, 0.065, 0.07, 0.065, 0.11, 0.05)
# column heads short enough not to break inside a word; the survey report's record uses the full labels
SHORT_HEAD = {"Ambient temperature": "Ambient temp.", "Sky conditions": "Sky",
              "Maximum wind speed": "Max. wind", "Deviations from the monitoring plan": "Deviations from the plan"}


def _resurvey(line) -> str:
    done = [e for e in line.timeline if e["event"].startswith("resurvey")]
    if not done:
        return "-"
    return "; ".join(f"{e['on']} {e['event'].removeprefix('resurvey ')}" for e in done) + (
        f" ({line.resurvey_method or 'method not recorded'}, {line.resurvey_instrument or 'instrument not recorded'})")


def _site_section(s: SiteSummary) -> list:
    """One site: identifiers, each survey with its record fields, each leak, counts, components not monitored."""
    w = WIDTH
    out: list = [CondPageBreak(60 * mm), para(s.site, "h2"),
                 para(f"Facility / permit id {s.facility_id or 'not recorded'}; latitude, longitude {s.coordinates}; "
                      f"program {s.program_id}.", "body"), para("Surveys in the period", "h3")]
    head = [[SHORT_HEAD.get(h, h) for h in SURVEY_HEAD]]
    body = [[r.get(k, "-") for k in SURVEY_HEAD] for r in s.surveys] or [["none in the period"] + [""] * 11]
    out.append(grid(head + body, [w * x for x in SURVEY_WIDTHS]))
    out.append(para(f"Survey record fields the program lists: {s.record_citation or 'none listed'}", "small"))
    out.append(para("Survey windows missed: " + ("; ".join(s.windows_missed) or "none"),
                    "hazard" if s.windows_missed else "body"))
    out.append(para("Leaks found in the period", "h3"))
    rows = [["Tag", "Component", "Detected", "Method", "First attempt", "Repair", "Resurvey (result, method)",
             "Delay of repair (reason, limit, parts)", "State"]]
    for x in s.leaks:
        delay = "-" if not x.delay_on else (f"{x.delay_on} {x.delay_reason} ({x.delay_kind}); limit "
                                            f"{x.delay_limit or 'not set yet'}" + (
            f"; parts ordered {x.parts_ordered_on or '-'}, received {x.parts_received_on or 'not yet'}"
            if x.delay_kind == "parts" else ""))
        flags = "".join(f", {f}" for f, on in (("difficult to monitor", x.difficult_to_monitor),
                                                ("unsafe to monitor", x.unsafe_to_monitor)) if on)
        rows.append([x.tag, f"{words(x.component_type)}{flags}", x.detected_on, x.detection_method or "-",
                     f"{x.first_attempt_on} {x.first_attempt_by}".strip() or "-",
                     f"{x.repaired_on} {x.repaired_by}".strip() or "-", _resurvey(x), delay,
                     words(x.state) + (" (OVERDUE: " + words(x.overdue).replace(";", ", ") + ")" if x.overdue else "")])
    if len(rows) == 1:
        rows.append(["none"] + [""] * 8)
    out.append(grid(rows, [w * x for x in (0.08, 0.11, 0.08, 0.06, 0.12, 0.12, 0.155, 0.175, 0.1)]))
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
