"""One rate estimate per leak, on the best basis available, and its CO2e.

Order, best first (../shared/reference/emission-factors.md): a measured rate; a Method 21 screening
value through the correlation equation (default-zero and pegged values handled); a leaker factor
for the component type and service. A population average is never the rate of one leak.

Factor tables serve industry segments (40 CFR 98.230(a)): a leaker factor comes only from the
tables in the leak's segment's leaker order (or a set named explicitly, which the estimate then says
serves another segment when it does). When no table serves the segment, component and service,
``NoFactor`` says so; nothing falls through to another segment's table.

Worked example (subpart W leaker structure): 10 scf/h of whole gas at 0.90 methane mole fraction is
9.0 scf/h of methane; at 0.0192 kg/scf (40 CFR 98.233 [memory]) that is 0.1728 kg/h.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from fieldapp.core import units
from fieldapp.core.enums import ComponentType, IndustrySegment, Service, SurveyMethod
from fieldapp.core.factors import EPA_SERVICE, W_SERVICE, Factor, FactorBook

PEGGED_LIMITS = (10_000.0, 100_000.0)


class EstimateError(ValueError):
    """No estimate can be made; ``field`` names the input at fault."""

    def __init__(self, field: str, message: str):
        self.field = field
        super().__init__(f"{field}: {message}")


class NoFactor(EstimateError):
    """Valid inputs, but no shipped or user table serves the segment, component and service."""

    def __init__(self, segment: IndustrySegment, message: str):
        self.segment = segment
        super().__init__("type", message)


@dataclass(frozen=True, slots=True)
class LeakInput:
    """What an estimate can use about one leak."""

    component_type: ComponentType
    service: Service
    methane_mole_fraction: float
    methane_weight_fraction: float | None = None
    survey_method: SurveyMethod = SurveyMethod.OGI
    screening_ppm: float | None = None
    pegged_at: float | None = None
    measured_rate: float | None = None
    measured_unit: str = ""
    measured_instrument: str = ""
    segment: IndustrySegment | None = None
    segment_note: str = ""
    compressor_component: bool = False
    compressor_note: str = ""
    wellhead_component: bool = False
    wellhead_note: str = ""
    composition_note: str = ""


@dataclass(frozen=True, slots=True)
class Estimate:
    """A leak's engineering estimate with everything needed to defend it."""

    methane_kg_per_h: float
    whole_gas_scf_per_h: float | None
    basis: str
    factor_set: str
    factor_row: str
    source: str
    status: str
    verified: bool
    composition: dict = field(default_factory=dict)
    assumptions: tuple[str, ...] = ()
    segment: str = ""
    table_reason: str = ""
    factor_key: str = ""  # the factor row's key (component/service/method...), the correlation class, "measurement"
    factor_value: float | None = None  # the row's value; a correlation's TOC rate at the SV; a measured rate
    factor_unit: str = ""
    factor_terms: str = ""  # a correlation's coefficients and screening value ("a = ...; b = ...; SV = ... ppmv")


def _composition(leak: LeakInput) -> dict:
    return {"methane_mole_fraction": leak.methane_mole_fraction,
            "methane_weight_fraction": leak.methane_weight_fraction}


def _first_notes(leak: LeakInput) -> list[str]:
    return [n for n in (leak.composition_note, leak.segment_note) if n]


def _segment_text(leak: LeakInput, book: FactorBook) -> str:
    if leak.segment is None:
        return "segment not given"
    seg = book.segments.get(leak.segment)
    return seg.describe() if seg else leak.segment.value


def _from_toc(kg_toc: float, leak: LeakInput, notes: list[str]) -> float:
    if leak.methane_weight_fraction is None:
        notes.append("methane weight fraction of TOC unknown: the mole fraction is used instead, which "
                     "overstates methane when heavier hydrocarbons are present")
        return kg_toc * leak.methane_mole_fraction
    notes.append(f"TOC to methane by weight fraction {leak.methane_weight_fraction:g}")
    return kg_toc * leak.methane_weight_fraction


def _from_whole_gas(scf: float, leak: LeakInput, book: FactorBook, notes: list[str]) -> float:
    density = book.constants["methane_density_kg_per_scf"]
    notes.append(f"whole gas to methane by mole fraction {leak.methane_mole_fraction:g}; methane "
                 f"{density.value:g} kg/scf ({density.citation}, {density.status})")
    return units.scf_to_kg(scf * leak.methane_mole_fraction, density.value)


def _measured(leak: LeakInput, book: FactorBook) -> Estimate:
    notes = [*_first_notes(leak), f"measured with {leak.measured_instrument or 'an unnamed instrument'}"]
    rate, unit = leak.measured_rate, leak.measured_unit
    assert rate is not None
    try:
        mass = units.is_mass(unit)
    except units.UnitError as exc:
        raise EstimateError("measured_unit", str(exc)) from None
    if mass:
        notes.append("a measured mass rate is taken as methane")
        kg, scf = units.convert(rate, unit, "kg/h"), None
    else:
        scf = units.convert(rate, unit, "scf/h")
        notes.append("a measured volume rate is taken as whole gas at standard conditions")
        kg = _from_whole_gas(scf, leak, book, notes)
    who = leak.measured_instrument or "an unnamed instrument"
    return Estimate(kg, scf, "measured", "", f"measured rate {rate:g} {unit} with {who} (no factor table)",
                    "measurement entered by the user", "measured",
                    True, _composition(leak), tuple(notes), leak.segment.value if leak.segment else "",
                    f"{_segment_text(leak, book)}: a measured rate needs no factor table", "measurement", rate, unit)


def _correlation(leak: LeakInput, book: FactorBook, eq) -> Estimate:
    ppm = leak.screening_ppm
    assert ppm is not None and leak.segment is not None
    epa_class = book.classes[leak.component_type][0]
    notes: list[str] = _first_notes(leak)
    if leak.pegged_at is not None and leak.pegged_at not in PEGGED_LIMITS:
        raise EstimateError("pegged_at", "allowed: 10000, 100000 (ppmv)")
    table = book.table_name("epa-453-correlation")
    if ppm == 0:
        basis, kg_toc, terms = "default_zero", eq.default_zero, "SV = 0 ppmv"
        row = f"{table}: {epa_class}, default-zero rate = {kg_toc:g} kg TOC/h"
        notes.append("screening value 0 ppmv: the default-zero rate applies")
    elif ppm >= 100_000 or (leak.pegged_at is not None and ppm >= leak.pegged_at):
        limit = 100_000.0 if ppm >= 100_000 else leak.pegged_at
        kg_toc = eq.pegged_100000 if limit == 100_000 else eq.pegged_10000
        basis, terms = "pegged", f"pegged at {limit:.0f} ppmv"
        row = f"{table}: {epa_class}, pegged rate at {limit:,.0f} ppmv = {kg_toc:g} kg TOC/h"
        notes.append(f"reading pegged at the instrument limit of {limit:,.0f} ppmv: the pegged rate applies")
    else:
        basis, kg_toc = "correlation", eq.rate(ppm)
        terms = f"a = {eq.a:g}; b = {eq.b:g}; SV = {ppm:g} ppmv"
        row = f"{table}: {epa_class}, {eq.a:g} × SV^{eq.b:g} at SV = {ppm:g} ppmv = {kg_toc:.4g} kg TOC/h"
    kg = _from_toc(kg_toc, leak, notes)
    if not eq.verified:
        notes.append(f"correlation coefficients not verified against the published document ({eq.status})")
    reason = (f"{_segment_text(leak, book)}: a Method 21 screening value was recorded, and "
              f"{book.set_info['epa-453-correlation'].label} declare this segment")
    return Estimate(kg, None, basis, "epa-453-correlation", row, eq.citation, eq.status, eq.verified,
                    _composition(leak), tuple(notes), leak.segment.value, reason, epa_class, kg_toc, "kg TOC/h", terms)


def _leaker_candidates(leak: LeakInput, book: FactorBook, factor_set: str) -> Factor | None:
    epa_class, w_components = book.classes[leak.component_type]
    method = "method21" if leak.survey_method is SurveyMethod.METHOD21 else "ogi"
    groups = ("compressor" if leak.compressor_component else "non_compressor",
              "storage_wellhead" if leak.wellhead_component else "storage_station", "")
    for component in dict.fromkeys((leak.component_type.value, *w_components)):
        for service in dict.fromkeys((leak.service.value, W_SERVICE.get(leak.service, ""))):
            for g in groups:
                found = book.find("leaker", component, service, method, g, factor_set=factor_set)
                if found:
                    return found
    return book.find("screening_range", epa_class, EPA_SERVICE[leak.service], ">=10000", factor_set=factor_set)


def _leaker_notes(leak: LeakInput, factor: Factor) -> list[str]:
    notes = _first_notes(leak)
    if leak.screening_ppm is not None:
        notes.append(f"a screening value of {leak.screening_ppm:g} ppmv was recorded, but no correlation equation "
                     "is declared for this segment: the segment's leaker factor is used")
    if leak.survey_method is SurveyMethod.AVO:
        notes.append("found by AVO: the OGI leaker factor is used")
    if factor.kind == "screening_range":
        notes.append("an OGI-visible leak is taken to screen at or above 10,000 ppmv")
    elif factor.key[0] != leak.component_type.value:
        notes.append(f"{leak.component_type.value} taken as the table's '{factor.key[0]}' row")
    group = factor.key[3] if factor.kind == "leaker" and len(factor.key) > 3 else ""
    if group in ("compressor", "non_compressor"):
        notes.append(leak.compressor_note or ("a compressor component" if leak.compressor_component else
                                              "taken as a non-compressor component"))
    elif group in ("storage_station", "storage_wellhead"):
        notes.append(leak.wellhead_note or ("a storage wellhead component" if leak.wellhead_component else
                                            "taken as a storage station component, not a wellhead"))
    if not factor.verified:
        notes.append(f"factor row not verified against the published table ({factor.status})")
    if factor.note:
        notes.append(factor.note)
    return notes


def _leaker(leak: LeakInput, book: FactorBook, factor_set: str | None) -> Estimate:
    segment = leak.segment
    assert segment is not None
    seg_text = _segment_text(leak, book)
    if factor_set:
        if factor_set not in book.set_info:
            raise EstimateError("factor_set", f"{factor_set!r} is not allowed; allowed: {', '.join(book.set_info)}")
        served = ", ".join(s.value for s in book.set_info[factor_set].segments)
        why = (f"{seg_text}: {factor_set} named explicitly; it serves this segment" if book.serves(factor_set, segment)
               else f"{seg_text}: {factor_set} named explicitly, although it serves another segment ({served}), "
                    "not this one")
        order = [(factor_set, why)]
    else:
        order = [(e.factor_set, f"{seg_text}: {book.set_info[e.factor_set].label}; {e.reason}")
                 for e in book.leaker_order.get(segment, ())]
    for name, why in order:
        factor = _leaker_candidates(leak, book, name)
        if factor is None:
            continue
        notes = _leaker_notes(leak, factor)
        if factor.basis == "whole_gas_volume":
            scf = factor.value
            kg = _from_whole_gas(scf, leak, book, notes)
        elif factor.basis == "toc_mass":
            scf, kg = None, _from_toc(factor.value, leak, notes)
        else:
            scf, kg = None, factor.value
        row = factor.in_words(book.table_name(factor.factor_set))
        return Estimate(kg, scf, "leaker_factor", factor.factor_set, row, factor.citation,
                        factor.status, factor.verified, _composition(leak), tuple(notes), segment.value, why,
                        "/".join(k for k in factor.key if k), factor.value, factor.unit)
    if order:
        found = (f"{seg_text} is served by {', '.join(n for n, _w in order)}, which has no leaker factor for "
                 f"{leak.component_type.value} in {leak.service.value} service")
    else:
        found = f"no shipped or user factor table serves {seg_text}"
    raise NoFactor(segment, f"no factor: {found}; no other segment's table is used (a user factor set that "
                   "declares this segment can supply one)")


def estimate(leak: LeakInput, book: FactorBook, factor_set: str | None = None) -> Estimate:
    """The best-basis estimate of one leak's methane rate."""
    if not 0 <= leak.methane_mole_fraction <= 1:
        raise EstimateError("methane_fraction", "must be between 0 and 1")
    if leak.measured_rate is not None:
        return _measured(leak, book)
    if leak.segment is None:
        raise EstimateError("segment", "is required for a factor-based estimate (the site's industry segment, "
                            f"40 CFR 98.230(a)); allowed: {', '.join(IndustrySegment)}")
    if leak.screening_ppm is not None and factor_set is None:
        eq = book.correlations.get(book.classes[leak.component_type][0])
        if eq is not None and book.serves("epa-453-correlation", leak.segment):
            return _correlation(leak, book, eq)
    return _leaker(leak, book, factor_set)


GWP_ALIASES = {"ar6": "ar6-fossil"}


def gwp_set_name(text: str, book: FactorBook) -> str:
    """The GWP set a user spelled, case-insensitively: 'AR5', 'ar6 fossil', 'AR6_non-fossil', 'AR6nonfossil'.

    'AR6' alone is AR6 fossil methane: methane from oil and gas is of fossil origin (IPCC AR6 WG1
    Table 7.15 gives the fossil value for it; common practice).
    """
    key = "-".join(text.strip().lower().replace("_", " ").replace("-", " ").split())
    key = re.sub(r"^(ar\d)(?=[a-z])", r"\1-", key).replace("nonfossil", "non-fossil")
    key = GWP_ALIASES.get(key, key)
    if key not in book.gwp_sets():
        raise EstimateError("gwp", f"{text!r} is not allowed; allowed (any case): {gwp_help(book)}")
    return key


def gwp_help(book: FactorBook) -> str:
    """The GWP set names for --help and messages, as the IPCC writes them."""
    return "AR4, AR5, AR5-feedback, AR6 (= AR6-fossil), AR6-fossil, AR6-non-fossil"


def co2e(methane_kg: float, book: FactorBook, gwp_set: str) -> dict[int, float]:
    """CO2-equivalent of a methane mass for both horizons of a GWP set: {100: ..., 20: ...}."""
    found = {h: c.value for (s, h), c in book.gwp.items() if s == gwp_set}
    if not found:
        found = {h: c.value for (s, h), c in book.gwp.items() if s == gwp_set_name(gwp_set, book)}
    return {h: methane_kg * v for h, v in sorted(found.items(), reverse=True)}


@dataclass(frozen=True, slots=True)
class InventoryEstimate:
    """Population-factor estimate of a whole inventory (never the rate of one leak)."""

    methane_kg_per_h: float
    whole_gas_scf_per_h: float
    rows: tuple[tuple[str, str, int, str], ...]
    missing: tuple[str, ...]
    assumptions: tuple[str, ...]


def inventory_estimate(counts: dict[tuple[ComponentType, Service], int], book: FactorBook, region: str,
                       methane_mole_fraction: float) -> InventoryEstimate:
    """Emissions of a component population from subpart W Table W-1A population factors (scf/h each).

    ``region`` is 'eastern' or 'western' for gas service; liquid-service rows apply to any region.
    Component kinds without a population factor are listed in ``missing``, not guessed.
    """
    if region not in ("eastern", "western"):
        raise EstimateError("region", "allowed: eastern, western")
    total_scf, rows, missing = 0.0, [], []
    for (ctype, service), count in sorted(counts.items()):
        w_service = W_SERVICE.get(service)
        factor = None
        for w_component in book.classes[ctype][1] if w_service else ():
            factor = book.find("population", w_component, w_service, region if w_service == "gas" else "any",
                               factor_set="w-1a")
            if factor:
                break
        if factor is None:
            missing.append(f"{count} x {ctype.value} in {service.value} service")
            continue
        total_scf += count * factor.value
        rows.append((ctype.value, service.value, count, factor.in_words(book.table_name(factor.factor_set))))
    notes: list[str] = ["population factors estimate an inventory, not the rate of any one leak"]
    kg = _from_whole_gas(total_scf, LeakInput(ComponentType.OTHER, Service.GAS, methane_mole_fraction), book, notes)
    return InventoryEstimate(kg, total_scf, tuple(rows), tuple(missing), tuple(notes))
