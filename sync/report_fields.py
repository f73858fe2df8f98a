"""The report fields a program lists (``[annual_report]``): each one's label, column weight and value.

``core.program.REPORT_SURVEY_FIELDS`` and ``REPORT_LEAK_FIELDS`` name what a report may hold; this module
says how each is shown. A field the store does not keep (``STORE_LACKS``) is shown as "not recorded" in
every row where it applies, and named under its table, never dropped.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass, field
from typing import Any

from fieldapp.core.program import CitedValue

NOT_RECORDED = "not recorded"
METHOD_WORDS = {"ogi": "OGI", "method21": "Method 21", "avo": "AVO"}

# name: (column label, relative width)
SURVEY_COLUMNS: dict[str, tuple[str, float]] = {
    "survey_date": ("Date of the survey", 0.8), "method": ("Method", 0.6),
    "instrument": ("Monitoring instrument", 1.2), "operator": ("Operator", 0.9),
    "deviations": ("Deviations from the monitoring plan", 1.6), "leak_count": ("Leaks found", 0.5),
    "leaks_by_type": ("Components with leaks (number, type)", 1.3),
    "not_repaired_by_type": ("Not repaired as required (number, type)", 1.3),
    "on_delay_by_type": ("On delay of repair (number, type, explanation)", 1.8),
    "planned_shutdowns": ("Planned shutdowns in the period", 1.0),
    "compressor_modes": ("Compressor operating modes", 1.2),
    "calibration_records": ("Instrument calibration records", 1.0),
}
LEAK_COLUMNS: dict[str, tuple[str, float]] = {
    "tag": ("Tag", 0.75), "component": ("Component (type, designation)", 1.0), "location": ("Location", 1.0),
    "detected_on": ("Detected (date, method)", 0.8), "instrument_reading": ("Method 21 reading", 0.75),
    "photo_or_tag": ("Photo or tag", 0.7), "first_attempt": ("First attempt", 0.85), "repair": ("Repair", 0.85),
    "resurvey": ("Resurvey (result, method, instrument)", 1.2), "repaired_as_required": ("Repaired as required", 0.85),
    "delay": ("Delay of repair (reason, limit)", 1.3), "parts": ("Parts (on delay list, ordered, arrived)", 1.0),
    "parts_expected_on": ("Part delivery expected", 0.7), "planned_shutdown": ("Planned shutdown", 0.8),
    "state": ("State", 0.8),
}
SITE_LABELS: dict[str, str] = {
    "company": "Company", "site_name": "Facility site name", "facility_id": "Facility / permit id",
    "location": "Site location", "coordinates": "Latitude, longitude (decimal degrees, 5 places)",
    "reporting_period": "Reporting period", "site_kind": "Type of site", "startup_date": "Startup date",
    "well_site_type": "Type of well site", "wellhead_only_since": "Wellhead-only since",
    "equipment_added_back_on": "Major equipment added back on", "well_closure_dates": "Well closure dates",
}
# the well-site types of 60.5420b(b)(9)(i)(C), by site kind (core.enums.SiteKind); a generic well site has none
WELL_SITE_KINDS = {"single_wellhead": "single wellhead only well site", "small_well_site": "small well site",
                   "multi_wellhead": "multi-wellhead only well site",
                   "well_site_major_equipment": "well site with major production and processing equipment"}
# fields plumebook does not keep, and why; shown as "not recorded"
STORE_LACKS = {
    "wellhead_only_since": "plumebook keeps a site's kind, not the date it changed to wellhead only",
    "equipment_added_back_on": "plumebook keeps a site's kind, not the date major equipment was added back",
    "well_closure_dates": "plumebook does not keep well closure dates (cessation of production, closure, notices)",
    "calibration_records": "plumebook keeps the daily verification of the camera, not instrument calibration records",
    "parts_expected_on": "plumebook records when a part was ordered and received, not the delivery date expected",
}

# what a program without [annual_report] gets: plumebook's own choice
DEFAULT_SURVEY_FIELDS = CitedValue(("survey_date", "method", "instrument", "deviations", "leaks_by_type",
                                    "not_repaired_by_type", "on_delay_by_type", "planned_shutdowns"),
                                   "plumebook default: the program file lists no annual_report fields", "company")
DEFAULT_LEAK_FIELDS = CitedValue(("tag", "component", "detected_on", "first_attempt", "repair", "resurvey",
                                  "delay", "state"),
                                 "plumebook default: the program file lists no annual_report fields", "company")


@dataclass
class ReportTable:
    """One table of a report as its program lists it: column labels, widths, rows of text, citation."""

    fields: tuple[str, ...]
    columns: list[str]
    weights: list[float]
    rows: list[list[str]]
    citation: str
    status: str
    not_recorded: list[str] = field(default_factory=list)


def _by_type(lines: Iterable, detail=None) -> str:
    """'valve 2, connector 1' (types in order of count), with ``detail(line)`` per leak when given."""
    lines = list(lines)
    if not lines:
        return "none"
    counts = Counter(x.component_type.replace("_", " ") for x in lines)
    parts = []
    for kind, n in sorted(counts.items(), key=lambda kv: (-kv[1], kv[0])):
        text = f"{kind} {n}"
        if detail:
            text += " (" + "; ".join(detail(x) for x in lines if x.component_type.replace("_", " ") == kind) + ")"
        parts.append(text)
    return ", ".join(parts)


def _designation(line) -> str:
    return " and ".join(w for w, on in (("difficult to monitor", line.difficult_to_monitor),
                                        ("unsafe to monitor", line.unsafe_to_monitor)) if on)


def _not_in_time(line) -> bool:
    return line.state != "void" and bool(line.late or line.overdue)


def survey_cell(name: str, record: dict[str, str], survey: dict[str, Any], lines: list, start: str,
                end: str) -> str:
    """The text of one survey field: ``record`` is the survey's record (label -> text), ``lines`` its leaks."""
    live = [x for x in lines if x.state != "void"]
    delayed = [x for x in live if x.delay_on]
    if name in STORE_LACKS:
        return NOT_RECORDED
    if name == "survey_date":
        return record["Date of the survey"]
    if name == "method":
        return METHOD_WORDS.get(survey["method"], survey["method"])
    if name == "instrument":
        if survey["method"] == "avo":  # 60.5420b(b)(9)(ii)(B): a notation that AVO was used
            return "AVO used (no instrument)"
        made = " ".join(x for x in (survey["camera_make"], survey["camera_model"], survey["camera_serial"]) if x)
        return made or NOT_RECORDED
    if name == "operator":
        return record["Operator"]
    if name == "deviations":
        return record["Deviations from the monitoring plan"]
    if name == "compressor_modes":
        return record["Compressor operating modes"]
    if name == "leak_count":
        return str(survey["leak_count"])
    if name == "leaks_by_type":
        return _by_type(live)
    if name == "not_repaired_by_type":
        return _by_type([x for x in live if _not_in_time(x)], lambda x: x.tag)
    if name == "on_delay_by_type":
        return _by_type(delayed, lambda x: f"{x.tag}: {x.delay_reason or 'no reason recorded'}" + (
            f", {_designation(x)}" if _designation(x) else ""))
    if name == "planned_shutdowns":
        if not delayed:
            return "no component on delay"
        dates = sorted({x.delay_shutdown_on for x in delayed if x.delay_shutdown_on and start <= x.delay_shutdown_on
                        <= end})
        return ", ".join(dates) or "none in the period"
    raise KeyError(name)


def _resurvey(line) -> str:
    done = [e for e in line.timeline if e["event"].startswith("resurvey")]
    if not done:
        return "-"
    return "; ".join(f"{e['on']} {e['event'].removeprefix('resurvey ')}" for e in done) + (
        f" ({METHOD_WORDS.get(line.resurvey_method, line.resurvey_method) or 'method not recorded'}, "
        f"{line.resurvey_instrument or 'instrument not recorded'})")


def _as_required(line) -> str:
    if line.state == "void":
        return "void: not counted"
    if line.late or line.overdue:
        late = [f"{k.replace('_', ' ')} late" for k in line.late.split(";") if k]
        overdue = [f"{k.replace('_', ' ')} overdue" for k in line.overdue.split(";") if k]
        return "no: " + ", ".join(late + overdue)
    return "yes" if line.state == "closed" else "not yet due"


def leak_cell(name: str, line, tagged: bool) -> str:
    """The text of one leak field for a report line (``sync.report_model.LeakLine``)."""
    parts_route = line.delay_kind == "parts"
    if name == "parts_expected_on":
        return NOT_RECORDED if parts_route else "-"
    if name == "tag":
        return line.tag
    if name == "component":
        flag = _designation(line)
        return line.component_type.replace("_", " ") + (f", {flag}" if flag else "")
    if name == "location":
        return line.location_note or NOT_RECORDED
    if name == "detected_on":
        return f"{line.detected_on} {METHOD_WORDS.get(line.detection_method.replace(' ', ''), line.detection_method)}"
    if name == "instrument_reading":
        if line.screening_ppm is not None:
            return f"{line.screening_ppm:g} ppm"
        return NOT_RECORDED if line.detection_method.replace(" ", "") == "method21" else "none (not Method 21)"
    if name == "photo_or_tag":
        shown = [f"photo ({len(line.photo_sha256)})" if line.photo_sha256 else "", "tag" if tagged else ""]
        return ", ".join(s for s in shown if s) or "none recorded"
    if name == "first_attempt":
        return f"{line.first_attempt_on} {line.first_attempt_by}".strip() or "-"
    if name == "repair":
        return f"{line.repaired_on} {line.repaired_by}".strip() or "-"
    if name == "resurvey":
        return _resurvey(line)
    if name == "repaired_as_required":
        return _as_required(line)
    if name == "delay":
        if not line.delay_on:
            return "-"
        return f"{line.delay_on} {line.delay_reason} ({line.delay_kind}); limit {line.delay_limit or 'not set yet'}"
    if name == "parts":
        if not parts_route:
            return "-"
        return (f"on list {line.delay_on}; ordered {line.parts_ordered_on or NOT_RECORDED}; "
                f"arrived {line.parts_received_on or 'not yet'}")
    if name == "planned_shutdown":
        return line.delay_shutdown_on or "-"
    if name == "state":
        overdue = line.overdue.replace("_", " ").replace(";", ", ")
        return line.state.replace("_", " ") + (f" (OVERDUE: {overdue})" if overdue else "")
    raise KeyError(name)


def _lacking(names: tuple[str, ...], columns: dict[str, tuple[str, float]]) -> list[str]:
    return [f"{columns[n][0]}: {STORE_LACKS[n]}" for n in names if n in STORE_LACKS]


def survey_table(fields: CitedValue, surveys: list[tuple[dict[str, str], dict[str, Any]]], lines: list,
                 start: str, end: str) -> ReportTable:
    """The per-survey table: ``surveys`` holds (record by label, stored survey row) pairs."""
    names = tuple(fields.value)
    rows = [[survey_cell(n, record, row, [x for x in lines if x.survey_id == row["id"]], start, end) for n in names]
            for record, row in surveys]
    return ReportTable(names, [SURVEY_COLUMNS[n][0] for n in names], [SURVEY_COLUMNS[n][1] for n in names], rows,
                       fields.citation, fields.status, _lacking(names, SURVEY_COLUMNS))


def leak_table(fields: CitedValue, lines: list, tagged: dict[str, bool]) -> ReportTable:
    """The per-leak table; ``tagged`` says which leaks carry a physical tag."""
    names = tuple(fields.value)
    rows = [[leak_cell(n, x, tagged.get(x.leak_id, False)) for n in names] for x in lines]
    return ReportTable(names, [LEAK_COLUMNS[n][0] for n in names], [LEAK_COLUMNS[n][1] for n in names], rows,
                       fields.citation, fields.status, _lacking(names, LEAK_COLUMNS))


DEFAULT_SITE_FIELDS = CitedValue(("company", "site_name", "facility_id", "coordinates", "site_kind", "startup_date"),
                                 "plumebook default: the program file lists no annual_report site fields", "company")


def site_pairs(names: Iterable[str], site: dict[str, Any], start: str, end: str,
               coordinates: str) -> list[tuple[str, str]]:
    """The site items the program lists, as (label, value); a kept value that is empty says "not recorded"."""
    kind = site.get("kind") or ""
    values = {
        "company": site.get("operator"), "site_name": site.get("name"), "facility_id": site.get("facility_id"),
        "location": site.get("location"),
        "coordinates": f"{coordinates} ({site.get('datum') or 'datum not recorded'})"
        if coordinates != NOT_RECORDED else None,
        "reporting_period": f"{start} to {end}", "site_kind": kind.replace("_", " "),
        "startup_date": site.get("startup_date"),
        "well_site_type": WELL_SITE_KINDS.get(kind, None if kind == "well_site" else "not a well site"),
    }
    return [(SITE_LABELS[n], str(values.get(n) or NOT_RECORDED)) for n in names]
