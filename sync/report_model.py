"""One neutral report model, rendered to PDF and to CSV, so both always agree.

``leak_lines`` turns stored leaks into flat lines (tag, type, dates, deadlines, estimate, CO2e);
``survey_report`` and ``period_report`` gather what each PDF shows; the CSV export writes the same
lines. Every report carries a fingerprint: the SHA-256 of the records it was made from.
"""

from __future__ import annotations

import hashlib
import json
from collections import Counter, defaultdict
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
from fieldapp.store.reads import facts_for

GWP_SET = "ar5"
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


def _d(value: date | None) -> str:
    return value.isoformat() if value else ""


def leak_lines(store: Store, rows: list[dict[str, Any]], as_of: date | None = None) -> list[LeakLine]:
    """Report lines for leak rows from ``fieldapp.store.estimates.leak_rows``; overdue as of ``as_of``."""
    as_of = as_of or datetime.fromtimestamp(store.wall(), UTC).date()
    if not rows:
        return []
    ids = [r["id"] for r in rows]
    marks = ",".join("?" * len(ids))
    actions = store.rows(f"SELECT * FROM actions WHERE leak_id IN ({marks})", ids)
    facts = facts_for(rows, actions)
    rates = estimates(store, rows)
    book = catalog.factor_book()
    photos: dict[str, list[str]] = defaultdict(list)
    for m in store.rows(f"SELECT leak_id, sha256 FROM media WHERE deleted = 0 AND media_kind = 'photo' "
                        f"AND leak_id IN ({marks}) ORDER BY added_at", ids):
        photos[m["leak_id"]].append(m["sha256"])
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
            photo_sha256=photos.get(row["id"], []),
        ))
    return out


def fingerprint(*parts: Any) -> str:
    """SHA-256 of the canonical JSON of the records a report was made from."""
    return hashlib.sha256(json.dumps(parts, sort_keys=True, default=str).encode()).hexdigest()


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


def tag_cautions(store: Store, site_ids: set[str]) -> tuple[str, ...]:
    """One caution per tag that two devices created at one of these sites, until it is resolved."""
    from sync.merge import tag_collisions

    return tuple(f"DUPLICATE TAG {c['tag']} at {c['site']}: {len(c['component_ids'])} components carry it (created "
                 "on different devices). Their records are kept apart until someone resolves it with "
                 "`plumebook resolve join` or `plumebook resolve retag`."
                 for c in tag_collisions(store) if c["site_id"] in site_ids)


def survey_report(store: Store, survey_id: str, as_of: date | None = None) -> SurveyReport:
    """The report model of one survey; deadlines are marked overdue as of ``as_of`` (default today, UTC)."""
    as_of = as_of or datetime.fromtimestamp(store.wall(), UTC).date()
    survey = store.get("surveys", survey_id)
    site = store.get("sites", survey["site_id"])
    program = catalog.program(site["program_id"])
    lines = leak_lines(store, leak_rows(store, survey_id=survey_id), as_of)
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
    return SurveyReport(site, prog, survey, lines, dict(sorted(by_type.items())), dict(sorted(methane.items())),
                        CAUTIONS + tag_cautions(store, {site["id"]}),
                        fingerprint(site, survey, [asdict(x) for x in lines]), store.now_text(), as_of.isoformat())


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


def period_report(store: Store, start: date, end: date, site_id: str | None = None,
                  convention: str = "detection") -> PeriodReport:
    """Per site: surveys done and missed, leaks found / repaired / delayed / open, overdue, emissions."""
    book = catalog.factor_book()
    where = "AND id = ?" if site_id else ""
    sites = store.rows(f"SELECT * FROM sites WHERE deleted = 0 {where} ORDER BY name", (site_id,) if site_id else ())
    lines = [x for x in leak_lines(store, leak_rows(store, site_id), end) if start.isoformat() <= x.detected_on <=
             end.isoformat()]
    emissions, skipped = emission_report(store, start, end, end, convention, site_id)
    due, _problems = due_list(store, end, site_id)
    summaries = []
    for site in sites:
        mine = [x for x in lines if x.site_id == site["id"]]
        surveys = [r["started_at"][:10] + " " + r["method"] for r in store.rows(
            "SELECT started_at, method FROM surveys WHERE site_id = ? AND deleted = 0 AND substr(started_at, 1, 10) "
            "BETWEEN ? AND ? ORDER BY started_at", (site["id"], start.isoformat(), end.isoformat()))]
        overdue = [f"{i.kind} {i.tag or i.method} due {i.due}" for i in due
                   if i.site_id == site["id"] and i.overdue(end)]
        missed = [f"{i.method} survey due by {i.due}" for i in due
                  if i.site_id == site["id"] and i.kind == "survey" and i.overdue(end)]
        total = emissions.by_site.get(site["name"])
        kg = total.methane_kg if total else 0.0
        h = co2e(kg, book, GWP_SET)
        summaries.append(SiteSummary(
            site["name"], site["id"], site["program_id"], surveys, missed, len(mine),
            sum(1 for x in mine if x.state in ("repaired", "closed")), sum(1 for x in mine if x.state == "delayed"),
            sum(1 for x in mine if x.state in ("open", "attempted")), sum(1 for x in mine if x.state == "void"),
            overdue, kg, h[100] / 1000, h[20] / 1000))
    return PeriodReport(start, end, convention, summaries, CAUTIONS + tag_cautions(store, {s["id"] for s in sites}),
                        fingerprint([asdict(s) for s in summaries], [asdict(x) for x in lines]), store.now_text(),
                        duration_rule=emissions.rule_text, not_estimated=tuple(skipped))
