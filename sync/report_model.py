"""One neutral report model, rendered to PDF and to CSV, so both always agree.

``leak_lines`` turns stored leaks into flat lines (tag, type, dates, deadlines, estimate, CO2e);
``survey_report`` and ``period_report`` gather what each PDF shows; the CSV export writes the same
lines. Every report carries a fingerprint: the SHA-256 of the records it was made from.
"""

from __future__ import annotations

import hashlib
import json
from collections import Counter, defaultdict
from collections.abc import Callable
from dataclasses import asdict, dataclass, field
from datetime import UTC, date, datetime
from typing import Any
from zoneinfo import ZoneInfo

from fieldapp import catalog
from fieldapp.core.estimate import EstimateError, NoFactor, co2e
from fieldapp.core.lifecycle import deadlines, outstanding
from fieldapp.store.base import Store
from fieldapp.store.due import due_list
from fieldapp.store.estimates import emission_report, estimates, leak_rows
from fieldapp.store.reads import REPEAT_COUNT, REPEAT_MIN, facts_for
from sync.report_fields import (
    DEFAULT_LEAK_FIELDS,
    DEFAULT_SITE_FIELDS,
    DEFAULT_SURVEY_FIELDS,
    SITE_LABELS,
    STORE_LACKS,
    ReportTable,
    leak_table,
    site_pairs,
    survey_table,
)

GWP_SET = "ar5"
Progress = Callable[[int], object]  # called with how many items were just done (a progress bar's update)
CAUTIONS = (
    "Programs in plumebook are summaries of published rules, not the rules. Follow the current rule text, "
    "your permit and local codes.",
    "Leak rates are engineering estimates with the basis stated for each; OGI locates leaks, it does not "
    "measure them.",
    "Gas leaks can burn and may carry H2S. Leaks marked HAZARD need the site's emergency procedures before "
    "anyone approaches them.",
)


@dataclass
class LeakLine:
    """One leak, flattened for a report row or a CSV line."""

    leak_id: str
    site: str
    site_id: str
    survey_id: str
    tag: str
    component_type: str
    service: str
    location_note: str
    detected_at: str
    detected_on: str
    state: str
    hazard: bool
    hazard_note: str
    first_attempt_on: str
    repaired_on: str
    resurveyed_on: str
    delay_on: str
    delay_reason: str
    delay_shutdown_on: str
    first_attempt_due: str
    final_repair_due: str
    resurvey_due: str
    delay_limit: str
    late: str
    overdue: str
    basis: str
    factor_row: str
    methane_kg_per_h: float | None
    co2e_kg_per_h_100yr: float | None
    co2e_kg_per_h_20yr: float | None
    estimate_source: str
    photo_sha256: list[str] = field(default_factory=list)
    screening_ppm: float | None = None
    measured_rate: float | None = None
    measured_unit: str = ""
    measured_instrument: str = ""
    repeat_leaker: bool = False
    program_id: str = ""
    detection_method: str = ""
    resurvey_method: str = ""
    resurvey_instrument: str = ""
    first_attempt_by: str = ""
    repaired_by: str = ""
    resurveyed_by: str = ""
    delay_kind: str = ""
    parts_ordered_on: str = ""
    parts_received_on: str = ""
    difficult_to_monitor: bool = False
    unsafe_to_monitor: bool = False
    factor_set: str = ""
    factor_key: str = ""
    factor_value: float | None = None
    factor_unit: str = ""
    factor_terms: str = ""
    photos: list[dict[str, Any]] = field(default_factory=list)
    timeline: list[dict[str, Any]] = field(default_factory=list)
    clips: list[dict[str, Any]] = field(default_factory=list)


def words(code: str | None) -> str:
    """A stored code as a reader's words: 'first_attempt' -> 'first attempt' (empty stays empty)."""
    return str(code or "").replace("_", " ")


def local_time(iso: str | None, zone: str) -> str:
    """An ISO moment in the site's zone, 'YYYY-MM-DD HH:MM (UTC-07:00)'; empty when not given."""
    if not iso:
        return ""
    moment = datetime.fromisoformat(iso)
    if moment.tzinfo is None:  # a camera's EXIF time: its own clock, no zone
        return f"{moment:%Y-%m-%d %H:%M} (camera clock)"
    moment = moment.astimezone(ZoneInfo(zone))
    offset = moment.strftime("%z")
    return f"{moment:%Y-%m-%d %H:%M} (UTC{offset[:3]}:{offset[3:]})"


# the fields of a `history` event (fieldapp.store.history.leak_timeline) a report shows, unchanged
TIMELINE_KEYS = ("on", "at", "what", "summary", "actor", "recorded_at", "recorded_local", "device_id", "seq",
                 "backdated", "sha256")
EVENT_WORDS = {"component": "component added", "leak": "leak found", "edit": "edit"}


def timeline_entry(event: dict[str, Any]) -> dict[str, Any]:
    """A `history` event as a report's timeline entry: the same fields, plus ``event`` in words."""
    entry = {k: event.get(k) for k in TIMELINE_KEYS}
    if event["what"] == "action":
        entry["event"] = words(event["new"].get("kind"))
    elif event["what"] == "media":
        entry["event"] = "clip" if event["new"].get("media_kind") == "video" else "photo"
    else:
        entry["event"] = EVENT_WORDS.get(event["what"], words(event["what"]))
        if event["what"] == "edit" and event.get("op") == "delete":
            entry["event"] = "removed"
    return entry


def _d(value: date | None) -> str:
    return value.isoformat() if value else ""


def leak_lines(store: Store, rows: list[dict[str, Any]], as_of: date | None = None,
               recorded_by: date | None = None, progress: Progress | None = None) -> list[LeakLine]:
    """Report lines for leak rows from ``fieldapp.store.estimates.leak_rows``; overdue as of ``as_of``.

    Each line carries its photos and clips and the leak's timeline as `history` tells it
    (``fieldapp.store.history.leak_timelines``, read in one pass for all the rows). ``recorded_by``
    (a UTC day) keeps only the actions, media and events recorded by the end of that day.
    ``progress(n)`` is called as lines are made (one per leak).
    """
    from fieldapp.store.history import leak_timelines

    as_of = as_of or datetime.fromtimestamp(store.wall(), UTC).date()
    if not rows:
        return []
    ids = [r["id"] for r in rows]
    marks = ",".join("?" * len(ids))
    cutoff = f"{recorded_by.isoformat()}T99" if recorded_by else "9999"
    actions = store.rows(f"SELECT * FROM actions WHERE leak_id IN ({marks}) AND recorded_at <= ?", [*ids, cutoff])
    facts = facts_for(rows, actions)
    rates = estimates(store, rows)
    book = catalog.factor_book()
    photos: dict[str, list[dict[str, Any]]] = defaultdict(list)
    clips: dict[str, list[dict[str, Any]]] = defaultdict(list)
    media = store.rows(f"SELECT * FROM media WHERE deleted = 0 AND leak_id IN ({marks}) AND added_at <= ? "
                       "ORDER BY added_at, id", [*ids, cutoff])
    markers: dict[str, list[dict[str, Any]]] = defaultdict(list)
    for m in store.rows("SELECT k.media_id, k.x, k.y, k.label FROM json_each(?) t JOIN markers k ON k.media_id = "
                        "t.value WHERE k.deleted = 0 ORDER BY k.rowid", (json.dumps([m["id"] for m in media]),)):
        markers[m.pop("media_id")].append(m)
    for m in media:
        m["markers"] = markers.get(m["id"], [])
        (photos if m["media_kind"] == "photo" else clips)[m["leak_id"]].append(m)
    stories = leak_timelines(store, ids, recorded_by.isoformat() if recorded_by else None)
    by_leak: dict[str, list[dict[str, Any]]] = defaultdict(list)
    for a in actions:
        by_leak[a["leak_id"]].append(a)
    repeat = {r["id"]: r["seen_in"] >= REPEAT_MIN for r in store.rows(
        f"SELECT l.id, {REPEAT_COUNT} AS seen_in FROM leaks l WHERE l.id IN ({marks})", ids)}
    flags = {r["id"]: r for r in store.rows(
        f"SELECT l.id, c.difficult_to_monitor, c.unsafe_to_monitor FROM leaks l JOIN components c "
        f"ON c.id = l.component_id WHERE l.id IN ({marks})", ids)}
    out = []
    for row in rows:
        f = facts[row["id"]]
        program = catalog.program(row["program_id"])
        due = {d.kind: d for d in deadlines(program, f, catalog.holidays_for(program))}
        late = [d.kind for d in due.values() if d.done_on and d.due and d.done_on > d.due]
        overdue = [d.kind for d in outstanding(program, f, catalog.holidays_for(program)) if d.due and as_of > d.due]
        rate = rates[row["id"]]
        horizons = co2e(rate.methane_kg_per_h, book, GWP_SET) if not isinstance(rate, EstimateError) else {}
        out.append(LeakLine(
            leak_id=row["id"], site=row["site_name"], site_id=row["site_id"], survey_id=row["survey_id"],
            tag=row["tag"], component_type=row["component_type"], service=row["service"],
            location_note=row["location_note"], detected_at=row["detected_at"], detected_on=_d(f.detected_on),
            state=f.state.value, hazard=bool(row["hazard"]), hazard_note=row["hazard_note"],
            first_attempt_on=_d(f.first_attempt_on), repaired_on=_d(f.repaired_on), resurveyed_on=_d(f.resurveyed_on),
            delay_on=_d(f.delay.on if f.delay else None), delay_reason=f.delay.reason if f.delay else "",
            delay_shutdown_on=_d(f.delay.shutdown_on if f.delay else None),
            first_attempt_due=_d(due["first_attempt"].due) if "first_attempt" in due else "",
            final_repair_due=_d(due["final_repair"].due) if "final_repair" in due else "",
            resurvey_due=_d(due["resurvey"].due) if "resurvey" in due else "",
            delay_limit=_d(due["delay_limit"].due) if "delay_limit" in due else "",
            late=";".join(late), overdue=";".join(overdue),
            basis=rate.basis if not isinstance(rate, EstimateError) else "no_factor" if isinstance(rate, NoFactor)
            else "",
            factor_row=str(rate) if isinstance(rate, EstimateError) else rate.factor_row,
            methane_kg_per_h=None if isinstance(rate, EstimateError) else rate.methane_kg_per_h,
            co2e_kg_per_h_100yr=horizons.get(100), co2e_kg_per_h_20yr=horizons.get(20),
            estimate_source="" if isinstance(rate, EstimateError) else rate.source,
            photo_sha256=[m["sha256"] for m in photos.get(row["id"], [])],
            **_extra(row, f, by_leak.get(row["id"], []), photos.get(row["id"], []), rate),
            clips=[_media_entry(m, row["timezone"]) for m in clips.get(row["id"], [])],
            timeline=[timeline_entry(e) for e in stories[row["id"]]["events"]],
            repeat_leaker=repeat.get(row["id"], False),
            difficult_to_monitor=bool(flags[row["id"]]["difficult_to_monitor"]),
            unsafe_to_monitor=bool(flags[row["id"]]["unsafe_to_monitor"]),
        ))
        if progress:
            progress(1)
    return out


def _media_entry(m: dict[str, Any], zone: str) -> dict[str, Any]:
    """A photo or clip as a report shows it: file, capture and adding time on the site's clock, SHA-256,
    and what a PDF needs to place its stored copy (id, markers)."""
    return {"sha256": m["sha256"], "file": m["original_name"], "kind": "clip" if m["media_kind"] == "video"
            else m["media_kind"], "taken": local_time(m["captured_at"], zone) or "not recorded",
            "added": local_time(m["added_at"], zone), "added_by": m["added_by"], "media_id": m["id"],
            "seconds": m["duration_s"], "markers": m["markers"]}


def _last(actions: list[dict[str, Any]], *kinds: str) -> dict[str, Any]:
    done = [a for a in sorted(actions, key=lambda a: (a["done_on"], a["seq"], a["id"])) if a["kind"] in kinds]
    return done[-1] if done else {}


def _first_attempt(actions: list[dict[str, Any]], on: date | None) -> dict[str, Any]:
    """The action that counts as the first attempt (a repair or delay on that day counts when none is named)."""
    if on is None:
        return {}
    same = [a for a in actions if a["done_on"] == on.isoformat()
            and a["kind"] in ("first_attempt", "repaired", "delay_of_repair")]
    return sorted(same, key=lambda a: (a["kind"] != "first_attempt", a["seq"], a["id"]))[0] if same else {}


def _extra(row: dict[str, Any], f, actions: list[dict[str, Any]], media: list[dict[str, Any]], rate) -> dict:
    """The record fields of a leak beyond its dates: who did what, with which method, parts dates, photos."""
    zone = row["timezone"]
    resurvey = _last(actions, "resurvey_passed", "resurvey_failed")
    factor = {} if isinstance(rate, EstimateError) else {
        "factor_set": rate.factor_set, "factor_key": rate.factor_key, "factor_value": rate.factor_value,
        "factor_unit": rate.factor_unit, "factor_terms": rate.factor_terms}
    return {
        "screening_ppm": row["screening_ppm"], "measured_rate": row["measured_rate"],
        "measured_unit": row["measured_unit"], "measured_instrument": row["measured_instrument"],
        "program_id": row["program_id"],
        "detection_method": words(row.get("detection_method") or row["survey_method"]),
        "resurvey_method": words(resurvey.get("method") or (f.resurvey_method.value if f.resurvey_method else "")),
        "resurvey_instrument": resurvey.get("instrument", ""), "resurveyed_by": resurvey.get("actor", ""),
        "first_attempt_by": _first_attempt(actions, f.first_attempt_on).get("actor", ""),
        "repaired_by": _last(actions, "repaired").get("actor", ""),
        "delay_kind": words(f.delay.kind.value) if f.delay else "",
        "parts_ordered_on": _d(f.delay.parts_ordered_on) if f.delay else "",
        "parts_received_on": _d(f.delay.parts_received_on) if f.delay else "",
        "photos": [_media_entry(m, zone) for m in media],
        **factor,
    }


def fingerprint(*parts: Any) -> str:
    """SHA-256 of the canonical JSON of the records a report was made from."""
    return hashlib.sha256(json.dumps(parts, sort_keys=True, default=str).encode()).hexdigest()


CERTIFICATION = (
    "I certify that, based on information and belief formed after reasonable inquiry, the statements and "
    "information in this report are true, accurate and complete.")
# (label, how to show it) of each survey record field a program may list (core.program.SURVEY_RECORD_FIELDS)
RECORD_LABELS = {
    "started_at": "Begin time", "ended_at": "End time", "operator": "Operator",
    "qualification": "Operator training and experience", "camera_make": "Instrument make",
    "camera_model": "Instrument model", "camera_serial": "Instrument serial", "camera_check": "Daily verification",
    "camera_check_note": "Daily verification note", "ambient_temp_c": "Ambient temperature", "sky": "Sky conditions",
    "wind_speed_m_s": "Wind speed", "wind_max_m_s": "Maximum wind speed", "areas": "Areas planned",
    "areas_done": "Areas covered", "deviations": "Deviations from the monitoring plan",
    "compressor_modes": "Compressor operating modes",
}


def record_fields(survey: dict[str, Any], required: tuple[str, ...], zone: str) -> list[tuple[str, str, bool]]:
    """The survey's record as (label, value, required by the program) rows, the date first, then every field."""
    def value(name: str) -> str:
        if name in ("started_at", "ended_at"):
            return local_time(survey[name], zone) or "not recorded"
        if name in ("ambient_temp_c", "wind_speed_m_s", "wind_max_m_s"):
            from fieldapp.core.weather_units import report_text

            text = report_text(survey, name)
            return "not recorded" if text == "-" else text
        if name in ("areas", "areas_done"):
            items = survey[name] if isinstance(survey[name], list | tuple) else json.loads(survey[name] or "[]")
            return "; ".join(items) or "none recorded"
        if name == "deviations":
            return survey["deviations"] or ("none: the crew stated there were no deviations from the monitoring plan"
                                             if survey["no_deviations"] else "not stated")
        if name == "camera_check":
            return words(survey["camera_check"])
        return str(survey[name] or "") or "not recorded"

    rows = [("Date of the survey", local_time(survey["started_at"], zone)[:10], True),
            ("Method", words(survey["method"]).upper(), True)]
    order = list(required) + [n for n in RECORD_LABELS if n not in required]
    return rows + [(RECORD_LABELS[n], value(n), n in required) for n in order]


def site_identifiers(site: dict[str, Any]) -> list[tuple[str, str]]:
    """Facility / permit id and coordinates as label/value pairs.

    Coordinates in decimal degrees to five places: 40 CFR 60.5420b(b)(1)(i) asks "an accuracy
    and precision of five (5) decimals of a degree" (docs/report-fields.md)."""
    lat, lon = site.get("latitude"), site.get("longitude")
    coords = (f"{lat:.5f}, {lon:.5f}" if lat is not None and lon is not None else "not recorded")
    return [("Facility / permit id", site.get("facility_id") or "not recorded"),
            ("Latitude, longitude (decimal degrees)", coords),
            ("Datum", site.get("datum") or "not recorded"), ("Site kind", words(site["kind"])),
            ("Operator", site["operator"] or "not recorded"), ("Location", site["location"] or "-"),
            ("Time zone", site["timezone"])]


@dataclass
class SurveyReport:
    """What the survey PDF shows."""

    site: dict[str, Any]
    program: dict[str, Any]
    survey: dict[str, Any]
    leaks: list[LeakLine]
    by_type: dict[str, int]
    methane_by_type: dict[str, float]
    cautions: tuple[str, ...]
    fingerprint: str
    made_at: str
    as_of: str = ""
    gwp_set: str = GWP_SET
    record: list[tuple[str, str, bool]] = field(default_factory=list)
    record_citation: str = ""
    identifiers: list[tuple[str, str]] = field(default_factory=list)
    components_by_type: dict[str, int] = field(default_factory=dict)
    not_monitored: list[dict[str, str]] = field(default_factory=list)
    by_state: dict[str, int] = field(default_factory=dict)
    made_at_local: str = ""
    certification: str = CERTIFICATION


def tag_cautions(store: Store, site_ids: set[str]) -> tuple[str, ...]:
    """One caution per tag that two devices created at one of these sites, until it is resolved."""
    from sync.merge import tag_collisions

    return tuple(f"DUPLICATE TAG {c['tag']} at {c['site']}: {len(c['component_ids'])} components carry it (created "
                 "on different devices). Their records are kept apart until someone resolves it with "
                 "`plumebook resolve join` or `plumebook resolve retag`."
                 for c in tag_collisions(store) if c["site_id"] in site_ids)


def survey_report(store: Store, survey_id: str, as_of: date | None = None,
                  progress: Progress | None = None) -> SurveyReport:
    """The report model of one survey; deadlines are marked overdue as of ``as_of`` (default today, UTC)."""
    as_of = as_of or datetime.fromtimestamp(store.wall(), UTC).date()
    survey = store.get("surveys", survey_id)
    site = store.get("sites", survey["site_id"])
    program = catalog.program(site["program_id"])
    lines = leak_lines(store, leak_rows(store, survey_id=survey_id), as_of, progress=progress)
    tz = ZoneInfo(site["timezone"])
    survey = {**survey, "started_local": datetime.fromisoformat(survey["started_at"]).astimezone(tz).isoformat(),
              "ended_local": datetime.fromisoformat(survey["ended_at"]).astimezone(tz).isoformat()
              if survey["ended_at"] else ""}
    by_type = Counter(line.component_type for line in lines)
    methane: dict[str, float] = defaultdict(float)
    for line in lines:
        if line.methane_kg_per_h is not None and line.state != "void":
            methane[line.component_type] += line.methane_kg_per_h
    prog = {"id": program.id, "title": program.title, "rule": program.rule, "notice": program.notice}
    required = tuple(program.survey_records.value) if program.survey_records else ()
    comps = store.rows("SELECT tag, type, difficult_to_monitor, unsafe_to_monitor FROM components WHERE site_id = ? "
                       "AND deleted = 0 ORDER BY tag", (site["id"],))
    made = store.now_text()
    return SurveyReport(
        site, prog, survey, lines, dict(sorted(by_type.items())), dict(sorted(methane.items())),
        CAUTIONS + tag_cautions(store, {site["id"]}), fingerprint(site, survey, [asdict(x) for x in lines]), made,
        as_of.isoformat(), record=record_fields(survey, required, site["timezone"]),
        record_citation=program.survey_records.citation if program.survey_records else "",
        identifiers=site_identifiers(site),
        components_by_type=dict(sorted(Counter(words(c["type"]) for c in comps).items())),
        not_monitored=[{"tag": c["tag"], "type": words(c["type"]),
                        "flag": " and ".join(w for w, k in (("difficult to monitor", "difficult_to_monitor"),
                                                            ("unsafe to monitor", "unsafe_to_monitor")) if c[k])}
                       for c in comps if c["difficult_to_monitor"] or c["unsafe_to_monitor"]],
        by_state=dict(sorted(Counter(words(x.state) for x in lines).items())),
        made_at_local=local_time(made, site["timezone"]))


@dataclass
class SiteSummary:
    """One site's figures for a period."""

    site: str
    site_id: str
    program_id: str
    surveys_done: list[str]
    windows_missed: list[str]
    found: int
    repaired: int
    delayed: int
    still_open: int
    void: int
    overdue_items: list[str]
    methane_kg: float
    co2e_t_100yr: float
    co2e_t_20yr: float
    surveys: list[dict[str, str]] = field(default_factory=list)
    leaks: list[LeakLine] = field(default_factory=list)
    confirmed: int = 0
    not_confirmed: int = 0
    leaks_by_type: dict[str, int] = field(default_factory=dict)
    not_monitored: list[dict[str, str]] = field(default_factory=list)
    facility_id: str = ""
    coordinates: str = ""
    record_citation: str = ""
    survey_table: ReportTable | None = None
    record_table: ReportTable | None = None
    leak_table: ReportTable | None = None
    site_fields: list[tuple[str, str]] = field(default_factory=list)
    site_citation: str = ""


def _record_table(program, site: dict[str, Any], pairs: list[tuple[dict[str, str], dict[str, Any]]]) -> ReportTable:
    """The survey records the program lists (``survey_records.required``), the date first; at a compressor
    station also the compressor modes when the program asks for them (``leak_records.compressor_modes_at_stations``)."""
    required = tuple(program.survey_records.value) if program.survey_records else ()
    modes = (program.leak_records or {}).get("compressor_modes_at_stations")
    if site["kind"] == "compressor_station" and modes and modes.value and "compressor_modes" not in required:
        required += ("compressor_modes",)
    labels = ["Date of the survey", *(RECORD_LABELS[n] for n in required)]
    wide = {"deviations": 1.6, "qualification": 1.6, "compressor_modes": 1.5}
    weights = [1.05] + [wide.get(n, 1.0) for n in required]
    rows = [[record[label] for label in labels] for record, _row in pairs]
    cited = program.survey_records
    return ReportTable(("survey_date", *required), labels, weights, rows, cited.citation if cited else "",
                       cited.status if cited else "")


def _survey_pairs(store: Store, site: dict[str, Any], start: date, end: date) -> list[tuple[dict[str, str], dict]]:
    """Each survey of the site in the period: (its record fields in words by label, the stored row)."""
    rows = store.rows("SELECT v.*, (SELECT COUNT(*) FROM leaks l WHERE l.survey_id = v.id AND l.deleted = 0) AS "
                      "leak_count FROM surveys v WHERE v.site_id = ? AND v.deleted = 0 AND substr(v.started_at, 1, 10) "
                      "BETWEEN ? AND ? ORDER BY v.started_at", (site["id"], start.isoformat(), end.isoformat()))
    out = []
    for r in rows:
        record = {label: value for label, value, _req in record_fields(r, (), site["timezone"])}
        record["Instrument"] = f"{r['camera_make']} {r['camera_model']} {r['camera_serial']}".strip() or "not recorded"
        record["Leaks found"] = str(r["leak_count"])
        record["survey_id"] = r["id"]
        out.append((record, r))
    return out


def _tagged(store: Store, lines: list[LeakLine]) -> dict[str, bool]:
    """Which of these leaks carry a physical tag (60.5397a/b(h)(4)(ii): a photo or a tag)."""
    ids = [x.leak_id for x in lines]
    if not ids:
        return {}
    return {r["id"]: bool(r["tag_attached"]) for r in store.rows(
        f"SELECT id, tag_attached FROM leaks WHERE id IN ({','.join('?' * len(ids))})", ids)}


@dataclass
class PeriodReport:
    """What the period summary PDF shows."""

    start: date
    end: date
    convention: str
    sites: list[SiteSummary]
    cautions: tuple[str, ...]
    fingerprint: str
    made_at: str
    gwp_set: str = GWP_SET
    duration_rule: str = ""
    not_estimated: tuple[str, ...] = ()
    certification: str = CERTIFICATION
    made_at_local: str = ""


def period_report(store: Store, start: date, end: date, site_id: str | None = None,
                  convention: str = "detection", progress: Progress | None = None) -> PeriodReport:
    """Per site: surveys done and missed, leaks found / repaired / delayed / open, overdue, emissions."""
    book = catalog.factor_book()
    where = "AND id = ?" if site_id else ""
    sites = store.rows(f"SELECT * FROM sites WHERE deleted = 0 {where} ORDER BY name", (site_id,) if site_id else ())
    lines = [x for x in leak_lines(store, leak_rows(store, site_id), end, progress=progress)
             if start.isoformat() <= x.detected_on <= end.isoformat()]
    emissions, skipped = emission_report(store, start, end, end, convention, site_id)
    due, _problems = due_list(store, end, site_id)
    summaries = []
    tagged = _tagged(store, lines)
    for site in sites:
        mine = [x for x in lines if x.site_id == site["id"]]
        program = catalog.program(site["program_id"])
        annual = program.annual_report
        site_listed = annual.site_fields if annual and annual.site_fields else DEFAULT_SITE_FIELDS
        coordinates = dict(site_identifiers(site))["Latitude, longitude (decimal degrees)"]
        pairs = _survey_pairs(store, site, start, end)
        surveys = [r["started_at"][:10] + " " + r["method"] for r in store.rows(
            "SELECT started_at, method FROM surveys WHERE site_id = ? AND deleted = 0 AND substr(started_at, 1, 10) "
            "BETWEEN ? AND ? ORDER BY started_at", (site["id"], start.isoformat(), end.isoformat()))]
        overdue = [f"{words(i.kind)} {i.tag or words(i.method)} due {i.due}" for i in due
                   if i.site_id == site["id"] and i.overdue(end)]
        missed = [f"{words(i.method)} survey due by {i.due}" for i in due
                  if i.site_id == site["id"] and i.kind == "survey" and i.overdue(end)]
        total = emissions.by_site.get(site["name"])
        kg = total.methane_kg if total else 0.0
        h = co2e(kg, book, GWP_SET)
        summaries.append(SiteSummary(
            site["name"], site["id"], site["program_id"], surveys, missed, len(mine),
            sum(1 for x in mine if x.state in ("repaired", "closed")), sum(1 for x in mine if x.state == "delayed"),
            sum(1 for x in mine if x.state in ("open", "attempted")), sum(1 for x in mine if x.state == "void"),
            overdue, kg, h[100] / 1000, h[20] / 1000, surveys=[record for record, _row in pairs], leaks=mine,
            confirmed=sum(1 for x in mine if x.state == "closed"),
            not_confirmed=sum(1 for x in mine if x.state == "repaired"),
            leaks_by_type=dict(sorted(Counter(words(x.component_type) for x in mine if x.state != "void").items())),
            not_monitored=[{"tag": c["tag"], "type": words(c["type"]), "flag": " and ".join(
                w for w, k in (("difficult to monitor", "difficult_to_monitor"), ("unsafe to monitor",
                                                                                  "unsafe_to_monitor")) if c[k])}
                for c in store.rows("SELECT * FROM components WHERE site_id = ? AND deleted = 0 AND "
                                    "(difficult_to_monitor = 1 OR unsafe_to_monitor = 1) ORDER BY tag",
                                    (site["id"],))],
            record_citation=program.survey_records.citation if program.survey_records else "",
            survey_table=survey_table(annual.survey_fields if annual else DEFAULT_SURVEY_FIELDS, pairs, mine,
                                      start.isoformat(), end.isoformat()),
            record_table=_record_table(program, site, pairs),
            leak_table=leak_table(annual.leak_fields if annual else DEFAULT_LEAK_FIELDS, mine, tagged),
            facility_id=site.get("facility_id") or "", coordinates=coordinates,
            site_fields=site_pairs(  # the facility id and coordinates identify the site whatever the program lists
                [*(n for n in ("facility_id", "coordinates") if n not in site_listed.value), *site_listed.value],
                site, start.isoformat(), end.isoformat(), coordinates),
            site_citation=f"{site_listed.citation} ({site_listed.status})" + "".join(
                f". Not recorded: {SITE_LABELS[n].lower()}: {STORE_LACKS[n]}" for n in site_listed.value
                if n in STORE_LACKS)))
    made = store.now_text()
    zone = sites[0]["timezone"] if sites and len({x["timezone"] for x in sites}) == 1 else "UTC"
    return PeriodReport(start, end, convention, summaries, CAUTIONS + tag_cautions(store, {s["id"] for s in sites}),
                        fingerprint([asdict(s) for s in summaries], [asdict(x) for x in lines]), made,
                        duration_rule=emissions.rule_text, not_estimated=tuple(skipped),
                        made_at_local=local_time(made, zone))
