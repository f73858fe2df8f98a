"""CSV export for filings: leaks.csv, surveys.csv, actions.csv, components.csv.

UTF-8, a header row, ISO 8601 dates, booleans as true/false, and the stable column orders below
(also documented in DEVELOPERS.md). leaks.csv is written from the same report model as the PDFs.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import asdict
from datetime import date
from pathlib import Path

from fieldapp.atomic import write_bytes
from fieldapp.store.base import Store
from fieldapp.store.estimates import leak_rows
from sync.report_model import GWP_SET, leak_lines
from sync.tables import to_csv

LEAK_COLUMNS = (
    "leak_id", "site", "site_id", "survey_id", "tag", "component_type", "service", "location_note", "detected_at",
    "detected_on", "state", "hazard", "first_attempt_on", "first_attempt_due", "repaired_on", "final_repair_due",
    "resurveyed_on", "resurvey_due", "delay_on", "delay_reason", "delay_shutdown_on", "delay_limit", "late", "overdue",
    "basis", "factor_row", "methane_kg_per_h", "co2e_kg_per_h_100yr", "co2e_kg_per_h_20yr", "gwp_set",
    "estimate_source", "factor_set", "factor_key", "factor_value", "factor_unit", "factor_terms",
    "screening_ppm", "measured_rate",
    "measured_unit", "measured_instrument",
    "hazard_note", "repeat_leaker", "program_id", "detection_method", "first_attempt_by", "repaired_by",
    "resurvey_method", "resurvey_instrument", "resurveyed_by", "delay_kind", "parts_ordered_on", "parts_received_on",
    "difficult_to_monitor", "unsafe_to_monitor", "photo_sha256",
)
# What the words in the files mean (legend.csv): column, value, meaning.
LEGEND = (
    ("state", "open", "found, no repair step recorded yet"),
    ("state", "attempted", "a first attempt at repair was made; not yet repaired"),
    ("state", "repaired", "repaired; the resurvey that confirms the repair is not yet recorded"),
    ("state", "closed", "repaired and confirmed by a passed resurvey"),
    ("state", "delayed", "on delay of repair"),
    ("state", "void", "entered by mistake and voided (kept for the record)"),
    ("status", "text", "value read in the published rule or table text named in its citation"),
    ("status", "memory", "value recalled from memory, not yet checked against the published text"),
    ("status", "summary", "value from a secondary summary of the rule, not the rule text"),
    ("status", "company", "value set by the company's own program file"),
    ("basis", "leaker_factor", "published leaker emission factor for the component type and service"),
    ("basis", "correlation", "Method 21 screening value through a published correlation equation"),
    ("basis", "pegged", "screening value at the instrument limit: the published pegged rate"),
    ("basis", "default_zero", "screening value of 0 ppmv: the published default-zero rate"),
    ("basis", "measured", "rate measured and entered by the user"),
    ("factor_set", "", "empty for a measured rate (no factor table) or when not estimated"),
    ("factor_key", "measurement", "a measured rate: factor_value and factor_unit hold the rate as entered"),
    ("factor_value", "", "the table row's value; for a correlation, the TOC rate the equation gives at the screening "
                         "value (factor_terms holds a, b and SV); for a measurement, the measured rate"),
    ("basis", "no_factor", "no published factor shipped for this component and service: not estimated"),
    ("photo_sha256", "", "SHA-256 of each original photo, ';'-separated; the originals are kept byte for byte"),
    ("(any text)", "'", "a text starting with = + - @ tab, CR or ' is written with one extra leading apostrophe "
                        "so a spreadsheet shows it as text; remove that one apostrophe to read the value"),
)
SURVEY_COLUMNS = (
    "survey_id", "site", "site_id", "method", "started_at", "ended_at", "operator", "qualification", "camera_make",
    "camera_model", "camera_serial", "camera_check", "camera_check_note", "ambient_temp_c", "wind_speed_m_s",
    "wind_max_m_s", "sky", "areas", "areas_done", "deviations", "no_deviations", "leak_count", "compressor_modes",
)
ACTION_COLUMNS = ("action_id", "leak_id", "site", "tag", "kind", "done_on", "actor", "reason", "planned_on",
                  "shutdown_on", "instrument", "note", "recorded_at")
COMPONENT_COLUMNS = ("component_id", "site", "site_id", "tag", "type", "service", "area", "equipment",
                     "difficult_to_monitor", "unsafe_to_monitor")


def _within(day: str, start: date | None, end: date | None) -> bool:
    return (start is None or day >= start.isoformat()) and (end is None or day <= end.isoformat())


def leak_table(store: Store, start: date | None = None, end: date | None = None, site_id: str | None = None,
               as_of: date | None = None):
    """leaks.csv rows (dicts in LEAK_COLUMNS order); ``overdue`` as of ``as_of`` (default: today)."""
    lines = [x for x in leak_lines(store, leak_rows(store, site_id), as_of) if _within(x.detected_on, start, end)]
    return [{**{k: v for k, v in asdict(x).items() if k in LEAK_COLUMNS}, "gwp_set": GWP_SET} for x in lines]


def survey_table(store: Store, start: date | None = None, end: date | None = None, site_id: str | None = None):
    """surveys.csv rows."""
    where = "AND v.site_id = ?" if site_id else ""
    rows = store.rows(
        "SELECT v.*, v.id AS survey_id, s.name AS site, (SELECT COUNT(*) FROM leaks l WHERE l.survey_id = v.id "
        f"AND l.deleted = 0) AS leak_count FROM surveys v JOIN sites s ON s.id = v.site_id WHERE v.deleted = 0 {where} "
        "ORDER BY s.name, v.started_at", (site_id,) if site_id else ())
    out = []
    for r in rows:
        if _within(r["started_at"][:10], start, end):
            r["areas"], r["areas_done"] = _list(r["areas"]), _list(r["areas_done"])
            r["no_deviations"] = bool(r["no_deviations"])
            out.append(r)
    return out


def _list(text: str) -> str:
    import json

    return "; ".join(json.loads(text or "[]"))


def action_table(store: Store, start: date | None = None, end: date | None = None, site_id: str | None = None):
    """actions.csv rows."""
    where = "AND s.id = ?" if site_id else ""
    rows = store.rows(
        "SELECT a.*, a.id AS action_id, s.name AS site, c.tag FROM actions a JOIN leaks l ON l.id = a.leak_id "
        "JOIN components c ON c.id = l.component_id JOIN surveys v ON v.id = l.survey_id "
        f"JOIN sites s ON s.id = v.site_id WHERE l.deleted = 0 {where} ORDER BY s.name, c.tag, a.done_on, a.seq",
        (site_id,) if site_id else ())
    return [r for r in rows if _within(r["done_on"], start, end)]


def component_table(store: Store, site_id: str | None = None):
    """components.csv rows (live components)."""
    where = "AND c.site_id = ?" if site_id else ""
    rows = store.rows(
        "SELECT c.*, c.id AS component_id, s.name AS site FROM components c JOIN sites s ON s.id = c.site_id "
        f"WHERE c.deleted = 0 {where} ORDER BY s.name, c.tag", (site_id,) if site_id else ())
    for r in rows:
        r["difficult_to_monitor"] = bool(r["difficult_to_monitor"])
        r["unsafe_to_monitor"] = bool(r["unsafe_to_monitor"])
    return rows


def export_csv(store: Store, folder: Path, start: date | None = None, end: date | None = None,
               site_id: str | None = None, bom: bool = False,
               progress: Callable[[int, int], None] | None = None) -> list[Path]:
    """Write the four CSV files and legend.csv into ``folder`` (each atomically); returns their paths.

    ``bom`` starts each file with the UTF-8 byte order mark (for spreadsheets that otherwise guess a
    legacy code page and garble ° and §). ``progress(done, total)`` is called as each file is built."""
    legend = [dict(zip(("column", "value", "meaning"), row, strict=True)) for row in LEGEND]
    build = {
        "leaks.csv": lambda: to_csv(leak_table(store, start, end, site_id), LEAK_COLUMNS),
        "surveys.csv": lambda: to_csv(survey_table(store, start, end, site_id), SURVEY_COLUMNS),
        "actions.csv": lambda: to_csv(action_table(store, start, end, site_id), ACTION_COLUMNS),
        "components.csv": lambda: to_csv(component_table(store, site_id), COMPONENT_COLUMNS),
        "legend.csv": lambda: to_csv(legend, ("column", "value", "meaning")),
    }
    files = {}
    for name, make in build.items():
        files[name] = make()
        if progress:
            progress(len(files), len(build) + 1)
    encoding = "utf-8-sig" if bom else "utf-8"
    paths = [write_bytes(folder / name, text.encode(encoding)) for name, text in files.items()]
    if progress:
        progress(len(build) + 1, len(build) + 1)
    return paths
