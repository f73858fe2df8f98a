"""Estimates and emission totals for stored leaks (inputs gathered with set-based queries)."""

from __future__ import annotations

from datetime import date
from typing import Any

from fieldapp import catalog
from fieldapp.core.emissions import EmissionReport, LeakPeriod, stop_day, totals
from fieldapp.core.enums import ComponentType, IndustrySegment, LeakState, Service, SiteKind, SurveyMethod
from fieldapp.core.estimate import Estimate, EstimateError, LeakInput, estimate
from fieldapp.core.factors import FactorBook
from fieldapp.store.base import Store
from fieldapp.store.reads import LEAK_SELECT, facts_for, local_day


def site_segment(site: dict[str, Any], book: FactorBook | None = None) -> tuple[IndustrySegment | None, str]:
    """A site's industry segment and a note on where it came from.

    The site's own ``segment`` when set; else the default of its kind where the kind is unambiguous
    (fieldapp/data/factors/segments.csv); else None, and the note says how to set it.
    """
    name = site.get("site_name") or site.get("name") or "the site"
    if site.get("segment"):
        return IndustrySegment(site["segment"]), ""
    book = book or catalog.factor_book()
    kind = SiteKind(site.get("site_kind") or site["kind"])
    seg = book.default_segment(kind)
    if seg is None:
        return None, (f"{name} ({kind.value}) has no industry segment set and its kind is ambiguous; set it with "
                      "`plumebook segment SITE SEGMENT`")
    return seg, f"segment {seg.value} defaulted from the site kind {kind.value} ({name} has none set)"


def compressor_component(row: dict[str, Any]) -> tuple[bool, str]:
    """Whether a component counts as a compressor component (subpart W Table W-3A), and why."""
    if row["component_type"] == ComponentType.COMPRESSOR_SEAL:
        return True, "a compressor component (compressor seal)"
    equipment = row.get("equipment") or ""
    if "compressor" in equipment.lower():
        return True, f"a compressor component: its equipment {equipment!r} names a compressor"
    return False, (f"taken as a non-compressor component: its equipment {equipment!r} does not name a compressor"
                   if equipment else "taken as a non-compressor component: no equipment recorded")


def wellhead_component(row: dict[str, Any]) -> tuple[bool, str]:
    """Whether a component counts as a storage wellhead component (subpart W Table W-4A), and why."""
    equipment = row.get("equipment") or ""
    if "wellhead" in equipment.lower():
        return True, f"a wellhead component: its equipment {equipment!r} names a wellhead"
    return False, (f"taken as a station component: its equipment {equipment!r} does not name a wellhead"
                   if equipment else "taken as a station component: no equipment recorded")


def leak_input(row: dict[str, Any], book: FactorBook | None = None) -> tuple[LeakInput, str]:
    """Estimate inputs of a leak row joined with its component, survey and site, and (when the site has
    no segment) the note saying how to set one."""
    segment, seg_note = site_segment(row, book)
    on_compressor, comp_note = compressor_component(row)
    on_wellhead, wellhead_note = wellhead_component(row)
    return LeakInput(
        component_type=ComponentType(row["component_type"]), service=Service(row["service"]),
        methane_mole_fraction=row["methane_mole_fraction"], methane_weight_fraction=row["methane_weight_fraction"],
        survey_method=SurveyMethod(row["survey_method"]), screening_ppm=row["screening_ppm"],
        measured_rate=row["measured_rate"], measured_unit=row["measured_unit"] or "",
        measured_instrument=row["measured_instrument"] or "", segment=segment,
        segment_note=seg_note if segment else "", compressor_component=on_compressor, compressor_note=comp_note,
        wellhead_component=on_wellhead, wellhead_note=wellhead_note,
        composition_note=f"gas composition of {row['site_name']}: methane mole fraction "
                         f"{row['methane_mole_fraction']:g}",
    ), seg_note if segment is None else ""


SELECT = LEAK_SELECT.replace("s.timezone,", "s.timezone, s.methane_mole_fraction, s.methane_weight_fraction, "
                             "s.segment, c.equipment,")


def leak_rows(store: Store, site_id: str | None = None, leak_id: str | None = None,
              survey_id: str | None = None) -> list[dict[str, Any]]:
    """Leak rows with everything an estimate needs, plus the date of the site's previous survey."""
    sql = SELECT.replace("FROM leaks l", ", (SELECT MAX(p.started_at) FROM surveys p WHERE p.site_id = v.site_id "
                         "AND p.deleted = 0 AND p.started_at < v.started_at) AS previous_survey_at FROM leaks l")
    params: list[Any] = []
    if site_id:
        sql += " AND s.id = ?"
        params.append(site_id)
    if leak_id:
        sql += " AND l.id = ?"
        params.append(leak_id)
    if survey_id:
        sql += " AND l.survey_id = ?"
        params.append(survey_id)
    return store.rows(sql + " ORDER BY s.name, l.detected_at, c.tag", params)


def estimate_leak(store: Store, leak_id: str) -> Estimate:
    """The estimate of one stored leak."""
    rows = leak_rows(store, leak_id=leak_id)
    if not rows:
        raise EstimateError("leak_id", f"no leak with id {leak_id}")
    book = catalog.factor_book()
    leak, missing = leak_input(rows[0], book)
    if leak.segment is None and leak.measured_rate is None:
        raise EstimateError("segment", missing)
    return estimate(leak, book)


def estimates(store: Store, rows: list[dict[str, Any]]) -> dict[str, Estimate | EstimateError]:
    """Estimates for many leak rows; a leak that cannot be estimated maps to its error."""
    book = catalog.factor_book()
    out: dict[str, Estimate | EstimateError] = {}
    for row in rows:
        try:
            leak, missing = leak_input(row, book)
            if leak.segment is None and leak.measured_rate is None:
                raise EstimateError("segment", missing)
            out[row["id"]] = estimate(leak, book)
        except EstimateError as exc:
            out[row["id"]] = exc
    return out


def emission_report(store: Store, start: date, end: date, as_of: date, convention: str,
                    site_id: str | None = None) -> tuple[EmissionReport, list[str]]:
    """Emission totals of every leak of the store (or one site), and the leaks left out with why."""
    rows = leak_rows(store, site_id)
    where = "AND v.site_id = ?" if site_id else ""
    actions = store.rows("SELECT a.* FROM actions a JOIN leaks l ON l.id = a.leak_id JOIN surveys v ON "
                         f"v.id = l.survey_id WHERE l.deleted = 0 {where}", (site_id,) if site_id else ())
    facts = facts_for(rows, actions)
    rates = estimates(store, rows)
    zones: dict = {}
    periods, skipped = [], []
    for row in rows:
        rate = rates[row["id"]]
        if isinstance(rate, EstimateError):
            skipped.append(f"{row['site_name']} {row['tag']}: {rate}")
            continue
        f = facts[row["id"]]
        prev = local_day(row["previous_survey_at"], row["timezone"], zones) if row["previous_survey_at"] else None
        periods.append(LeakPeriod(
            row["id"], row["site_id"], row["site_name"], row["component_type"], row["tag"], f.detected_on,
            rate.methane_kg_per_h, rate.basis, prev, stop_day(f), f.state is LeakState.VOID))
    return totals(periods, start, end, as_of, convention), skipped
