"""Rate estimates, units, GWP and emission totals against published values.

Sources: ../shared/reference/emission-factors.md, status beside each value ([text] read in the
document, [memory] recalled and not checked, [computed] derived from constants).
"""

from __future__ import annotations

import math
from datetime import date

import globalwarmingpotentials
import pytest
from hypothesis import given
from hypothesis import strategies as st

from fieldapp import catalog
from fieldapp.core import units
from fieldapp.core.emissions import LeakPeriod, totals
from fieldapp.core.enums import ComponentType, IndustrySegment, Service, SurveyMethod
from fieldapp.core.estimate import EstimateError, LeakInput, NoFactor, co2e, estimate, gwp_set_name

BOOK = catalog.factor_book()
PROD, TRANS = IndustrySegment.ONSHORE_PRODUCTION, IndustrySegment.TRANSMISSION_COMPRESSION


def leak(ctype="valve", service="gas", x=0.9, **kw):
    return LeakInput(ComponentType(ctype), Service(service), x, **{"segment": PROD, **kw})


def test_shipped_table_values():
    f = BOOK.factors
    # EPA-453/R-95-017 Table 2-4, gas valves 4.5E-03 kg/h [memory]; heavy-oil valves 8.4E-06 [text]
    assert f[("epa-453-2-4", "average", "valves", "gas")].value == 4.5e-3
    assert f[("epa-453-2-4", "average", "valves", "heavy_oil")].value == 8.4e-6
    # Table 2-8 gas connectors >= 10,000 ppmv 2.6E-02 kg/h [memory]
    assert f[("epa-453-2-8", "screening_range", "connectors", "gas", ">=10000")].value == 2.6e-2
    # 40 CFR 98 Table W-1A, western gas valve 0.121 scf/h [text]; Table W-3A PRV by OGI 39.66 scf/h [text]
    assert f[("w-1a", "population", "valve", "gas", "western")].value == 0.121
    assert f[("w-3a", "leaker", "pressure_relief_valve", "gas", "ogi", "compressor")].value == 39.66


# Table W-3A to subpart W (81 FR 86516, Nov. 30, 2016) [text, read in the CFR text at federal.elaws.us]:
# scf/hour/component, (OGI and other 98.234(a)(1)-(6) methods, Method 21 per 98.234(a)(7)).
W3A = {"compressor": {"valve": (14.84, 9.51), "connector": (5.59, 3.58), "open_ended_line": (17.27, 11.07),
                      "pressure_relief_valve": (39.66, 25.42), "meter_or_instrument": (19.33, 12.39),
                      "other": (4.1, 2.63)},
       "non_compressor": {"valve": (6.42, 4.12), "connector": (5.71, 3.66), "open_ended_line": (11.27, 7.22),
                          "pressure_relief_valve": (2.01, 1.29), "meter_or_instrument": (2.93, 1.88),
                          "other": (4.1, 2.63)}}


def test_w3a_is_complete_and_marked_text():
    f = BOOK.factors
    rows = {k: v for k, v in f.items() if k[0] == "w-3a"}
    assert len(rows) == 24
    for group, table in W3A.items():
        for component, (ogi, m21) in table.items():
            for method, value in (("ogi", ogi), ("method21", m21)):
                row = f[("w-3a", "leaker", component, "gas", method, group)]
                assert (row.value, row.status, row.verified) == (value, "text", True)
    assert BOOK.set_info["w-3a"].segments == (TRANS,)
    # former Table W-1E row is [memory, low confidence]: shipped, marked unverified
    assert not f[("w-1e", "leaker", "valve", "gas", "ogi", "")].verified


def test_worked_example_whole_gas_to_methane():
    # Issue example: 10 scf/h whole gas at 0.90 methane → 0.1728 kg/h with 0.0192 kg/scf.
    # Step 1: 10 scf/h × 0.90 = 9.0 scf/h methane.  Step 2: 9.0 × 0.0192 kg/scf = 0.1728 kg/h.
    result = estimate(leak(measured_rate=10, measured_unit="scf/h"), BOOK)
    assert result.basis == "measured"
    assert result.methane_kg_per_h == pytest.approx(0.1728, rel=1e-12)


def test_methane_density_matches_molar_volume():
    # [computed] 16.043 kg/kg-mol (methane molar mass, [memory]) / 836.5 scf/kg-mol = 0.01918 kg/scf
    # shipped rounded to 3 figures
    assert BOOK.constant("methane_density_kg_per_scf") == pytest.approx(16.043 / 836.5, abs=5e-5)


def test_transmission_compressor_valve_gets_the_w3a_compressor_row():
    # W-3A compressor components, gas valve, OGI: 14.84 scf/h whole gas [text]; × 0.9 × 0.0192 = 0.256435 kg/h
    result = estimate(leak(segment=TRANS, compressor_component=True), BOOK)
    assert (result.basis, result.factor_set, result.segment) == ("leaker_factor", "w-3a", "transmission_compression")
    assert result.methane_kg_per_h == pytest.approx(14.84 * 0.9 * 0.0192)
    assert result.whole_gas_scf_per_h == 14.84
    assert "98.230(a)(4)" in result.table_reason and "W-3A" in result.table_reason
    # same table, Method 21 column: 9.51 scf/h [text]
    m21 = estimate(leak(segment=TRANS, compressor_component=True, survey_method=SurveyMethod.METHOD21), BOOK)
    assert m21.methane_kg_per_h == pytest.approx(9.51 * 0.9 * 0.0192)


def test_transmission_meter_leaker_gets_the_w3a_meter_row():
    # W-3A "Meter or Instrument": compressor components 19.33, non-compressor components 2.93 scf/h (OGI) [text]
    on = estimate(leak("instrument", segment=TRANS, compressor_component=True), BOOK)
    off = estimate(leak("instrument", segment=TRANS), BOOK)
    assert on.factor_row.startswith("40 CFR 98 subpart W Table W-3A leaker factor: meter or instrument, gas service, "
                                    "OGI survey, compressor components = 19.33")
    assert off.factor_row.startswith("40 CFR 98 subpart W Table W-3A leaker factor: meter or instrument, gas service, "
                                     "OGI survey, non-compressor components = 2.93")
    assert (on.factor_set, on.factor_key, on.factor_value) == ("w-3a", "meter_or_instrument/gas/ogi/compressor", 19.33)
    # 2.93 scf/h × 0.9 methane mole fraction × 0.0192 kg/scf = 0.05063 kg/h
    assert off.methane_kg_per_h == pytest.approx(0.0506304)
    assert any("non-compressor" in a for a in off.assumptions)


def test_production_gas_valve_never_cites_w3a():
    # Onshore production: EPA-453/R-95-017 Table 2-8 gas valve >= 10,000 ppmv 9.8E-02 kg TOC/h [memory];
    # × 0.68 methane weight fraction = 0.06664 kg CH4/h. W-3A serves transmission compression only (its title).
    for method in (SurveyMethod.OGI, SurveyMethod.METHOD21, SurveyMethod.AVO):
        for on_compressor in (False, True):
            result = estimate(leak(survey_method=method, compressor_component=on_compressor,
                                   methane_weight_fraction=0.68), BOOK)
            assert result.factor_set == "epa-453-2-8" and "W-3A" not in result.source
            assert result.methane_kg_per_h == pytest.approx(9.8e-2 * 0.68)
            assert result.segment == "onshore_production" and "W-1E" in result.table_reason
            assert any("not verified" in a for a in result.assumptions)


def test_gathering_flange_uses_table_2_8():
    # EPA Table 2-8 gas flange >= 10,000 ppmv 8.2E-02 kg TOC/h [memory]
    result = estimate(leak("flange", segment=IndustrySegment.GATHERING_AND_BOOSTING, methane_weight_fraction=0.75),
                      BOOK)
    assert result.factor_set == "epa-453-2-8"
    assert result.methane_kg_per_h == pytest.approx(8.2e-2 * 0.75)


def test_transmission_flange_is_the_w3a_connector_row():
    # Table W-6 footnote 3 keeps flanges out of "Other" [text]; W-3A non-compressor connector 5.71 scf/h [text]
    result = estimate(leak("flange", segment=TRANS), BOOK)
    assert result.whole_gas_scf_per_h == 5.71
    assert any("taken as the table's 'connector' row" in a for a in result.assumptions)


def test_no_table_for_the_segment_means_no_factor():
    # W-3A is gas service only [text]; processing and distribution have no verified table shipped:
    # nothing falls through to another segment's table.
    with pytest.raises(NoFactor, match="no factor: onshore natural gas transmission compression"):
        estimate(leak(service="light_liquid", segment=TRANS), BOOK)
    for seg in (IndustrySegment.PROCESSING, IndustrySegment.DISTRIBUTION, IndustrySegment.OUTSIDE_SUBPART_W):
        with pytest.raises(NoFactor, match="no shipped or user factor table serves"):
            estimate(leak(segment=seg), BOOK)
    # Table 2-8 has no heavy-oil column [memory]: heavy liquid at a production site gets no factor
    with pytest.raises(NoFactor):
        estimate(leak(service="heavy_liquid"), BOOK)


def test_segment_is_required_for_factor_estimates_but_not_for_measured_rates():
    with pytest.raises(EstimateError, match="segment"):
        estimate(leak(segment=None), BOOK)
    measured = estimate(leak(segment=None, measured_rate=10, measured_unit="scf/h"), BOOK)
    assert measured.basis == "measured"


def test_an_explicit_set_of_another_segment_says_so():
    result = estimate(leak(compressor_component=True), BOOK, "w-3a")
    assert result.factor_set == "w-3a" and "serves another segment" in result.table_reason


def test_screening_value_at_transmission_uses_the_segment_leaker_factor():
    # the EPA-453 correlation is declared for production and gathering only; W-3A Method 21 non-compressor
    # valve 4.12 scf/h [text]
    result = estimate(leak(segment=TRANS, screening_ppm=5000, survey_method=SurveyMethod.METHOD21), BOOK)
    assert (result.basis, result.whole_gas_scf_per_h) == ("leaker_factor", 4.12)
    assert any("screening value of 5000" in a for a in result.assumptions)


def test_kind_defaults_only_where_unambiguous():
    from fieldapp.core.enums import SiteKind

    assert BOOK.default_segment(SiteKind.WELL_SITE) is PROD
    assert BOOK.default_segment(SiteKind.GAS_PLANT) is IndustrySegment.PROCESSING
    for kind in (SiteKind.COMPRESSOR_STATION, SiteKind.TANK_BATTERY, SiteKind.PROCESS_UNIT):
        assert BOOK.default_segment(kind) is None


def test_gwp_names_as_the_ipcc_writes_them():
    # IPCC assessment report names AR4, AR5, AR6; AR6 alone is fossil methane (oil and gas methane is fossil;
    # common practice, no source). AR6 WG1 Table 7.15: fossil 29.8, non-fossil 27.0 (100-yr) [text]
    for text, key in (("AR5", "ar5"), ("ar4", "ar4"), ("Ar5-Feedback", "ar5-feedback"), ("AR6", "ar6-fossil"),
                      ("AR6 fossil", "ar6-fossil"), ("AR6_non-fossil", "ar6-non-fossil"),
                      ("ar6 nonfossil", "ar6-non-fossil")):
        assert gwp_set_name(text, BOOK) == key
    assert co2e(1, BOOK, "AR6")[100] == 29.8
    with pytest.raises(EstimateError, match="AR6-non-fossil"):
        gwp_set_name("AR7", BOOK)


@pytest.mark.parametrize("ctype, ppm, a, b", [
    # correlation equations, rate = a · SV^b kg TOC/h [memory]
    ("valve", 1_000, 2.29e-6, 0.746), ("connector", 5_000, 1.53e-6, 0.735), ("pump_seal", 50_000, 5.03e-5, 0.610),
])
def test_correlation_equation(ctype, ppm, a, b):
    result = estimate(leak(ctype, screening_ppm=ppm, methane_weight_fraction=0.8), BOOK)
    assert result.basis == "correlation"
    assert result.methane_kg_per_h == pytest.approx(a * ppm**b * 0.8)


def test_correlation_valve_1000_ppm_by_hand():
    # 2.29E-06 × 1000^0.746: log10 = 3 × 0.746 = 2.238 → 10^2.238 = 172.98 → 3.961E-04 kg TOC/h
    result = estimate(leak(screening_ppm=1000, methane_weight_fraction=1.0), BOOK)
    assert result.methane_kg_per_h == pytest.approx(3.961e-4, rel=1e-3)


def test_correlation_and_measured_estimates_carry_structured_factor_fields():
    # the same correlation as above (2.29E-06 × 1000^0.746 = 3.961E-04 kg TOC/h [memory]) filed as table, row
    # key, value and unit, with the coefficients and the screening value beside it
    corr = estimate(leak(screening_ppm=1000, methane_weight_fraction=1.0), BOOK)
    assert (corr.factor_set, corr.factor_key, corr.factor_unit) == ("epa-453-correlation", "valves", "kg TOC/h")
    assert corr.factor_value == pytest.approx(3.961e-4, rel=1e-3)
    assert corr.factor_terms == "a = 2.29e-06; b = 0.746; SV = 1000 ppmv"
    assert "_" not in corr.factor_row and "× SV^0.746 at SV = 1000 ppmv" in corr.factor_row
    # pegged at 10,000 ppmv: the valve pegged rate 0.064 kg TOC/h is the row value [memory]
    pegged = estimate(leak(screening_ppm=10_000, pegged_at=10_000, methane_weight_fraction=1), BOOK)
    assert (pegged.factor_key, pegged.factor_value, pegged.factor_unit) == ("valves", 0.064, "kg TOC/h")
    measured = estimate(leak(measured_rate=2.5, measured_unit="kg/h", measured_instrument="hi-flow sampler"), BOOK)
    assert (measured.factor_set, measured.factor_key, measured.factor_value, measured.factor_unit) == (
        "", "measurement", 2.5, "kg/h")
    assert measured.factor_row == "measured rate 2.5 kg/h with hi-flow sampler (no factor table)"


def test_default_zero_and_pegged_values():
    # default-zero valve 7.8E-06, pegged at 10,000 / 100,000: 0.064 / 0.14 kg/h [memory]
    assert estimate(leak(screening_ppm=0, methane_weight_fraction=1), BOOK).methane_kg_per_h == 7.8e-6
    pegged = estimate(leak(screening_ppm=10_000, pegged_at=10_000, methane_weight_fraction=1), BOOK)
    assert (pegged.basis, pegged.methane_kg_per_h) == ("pegged", 0.064)
    assert estimate(leak(screening_ppm=100_000, methane_weight_fraction=1), BOOK).methane_kg_per_h == 0.14


def test_missing_weight_fraction_is_a_stated_assumption():
    result = estimate(leak(screening_ppm=500), BOOK)
    assert any("weight fraction of TOC unknown" in a for a in result.assumptions)


def test_bad_inputs_name_the_field():
    with pytest.raises(EstimateError, match="measured_unit"):
        estimate(leak(measured_rate=1, measured_unit="furlongs"), BOOK)
    with pytest.raises(EstimateError, match="methane_fraction"):
        estimate(leak(x=1.2), BOOK)
    with pytest.raises(EstimateError, match="gwp"):
        co2e(1.0, BOOK, "ar9")


def test_gwp_values_agree_with_the_globalwarmingpotentials_package():
    # Independent registry package (openclimatedata): AR4 25, AR5 28, AR5 with feedback 34 (100-yr) [text]
    ref = globalwarmingpotentials.data
    assert co2e(1, BOOK, "ar4")[100] == ref["AR4GWP100"]["CH4"]
    assert co2e(1, BOOK, "ar5")[100] == ref["AR5GWP100"]["CH4"]
    assert co2e(1, BOOK, "ar5-feedback")[100] == ref["AR5CCFGWP100"]["CH4"]
    # The package's AR6 CH4 (27.9 / 81.2) carries no fossil split; AR6 Table 7.15 [text] puts non-fossil
    # below and fossil above it (fossil adds the CO2 from oxidation).
    assert co2e(1, BOOK, "ar6-non-fossil")[100] < ref["AR6GWP100"]["CH4"] < co2e(1, BOOK, "ar6-fossil")[100]
    assert co2e(1, BOOK, "ar6-non-fossil")[20] < ref["AR6GWP20"]["CH4"] < co2e(1, BOOK, "ar6-fossil")[20]


def test_twenty_year_horizon_is_always_larger():
    # Fact of the trade: methane weighs more over 20 years than over 100 (common practice, no source).
    for gwp_set in BOOK.gwp_sets():
        both = co2e(1.0, BOOK, gwp_set)
        assert both[20] > both[100]


def test_unit_constants_by_definition():
    assert units.convert(1, "lb/h", "kg/h") == 0.45359237  # exact by definition
    assert units.convert(1, "scf/h", "m3/h") == pytest.approx(0.0283168, rel=2e-6)  # 1 ft = 0.3048 m exact
    assert units.convert(1, "kg/h", "t/yr") == pytest.approx(8.76)  # [computed] 8760 h / 1000
    with pytest.raises(units.UnitError):
        units.convert(1, "kg/h", "scf/h")


@given(value=st.floats(0, 1e9), a=st.sampled_from(list(units.MASS_UNITS)), b=st.sampled_from(list(units.MASS_UNITS)))
def test_mass_unit_round_trip(value, a, b):
    assert math.isclose(units.convert(units.convert(value, a, b), b, a), value, rel_tol=1e-12, abs_tol=1e-300)


@given(value=st.floats(0, 1e9))
def test_volume_unit_round_trip(value):
    assert math.isclose(units.convert(units.convert(value, "scf/h", "m3/h"), "m3/h", "scf/h"), value,
                        rel_tol=1e-12, abs_tol=1e-300)


D = date.fromisoformat


def period(**kw):
    base = dict(leak_id="L1", site_id="S", site_name="Site", component_type="valve", tag="V-1",
                detected_on=D("2026-03-10"), methane_kg_per_h=0.5, basis="leaker_factor")
    return LeakPeriod(**{**base, **kw})


def test_duration_conventions():
    # detected Mar 10, repair confirmed, stopped Mar 20: 10 days × 24 h = 240 h × 0.5 kg/h = 120 kg
    closed = period(stopped_on=D("2026-03-20"), previous_survey_on=D("2026-01-05"))
    r = totals([closed], D("2026-01-01"), D("2026-12-31"), D("2026-12-01"), "detection")
    assert (r.total.hours, r.total.methane_kg) == (240.0, 120.0)
    # from the previous survey (Jan 5): 74 days
    r = totals([closed], D("2026-01-01"), D("2026-12-31"), D("2026-12-01"), "previous_survey")
    assert r.total.hours == 74 * 24
    # from the start of the period (Jan 1): 78 days
    r = totals([closed], D("2026-01-01"), D("2026-12-31"), D("2026-12-01"), "period_start")
    assert r.total.hours == 78 * 24


def test_open_leak_runs_to_the_as_of_date_and_void_leaks_emit_nothing():
    still_open = period()
    r = totals([still_open, period(leak_id="L2", void=True)], D("2026-03-01"), D("2026-03-31"),
               D("2026-03-15"), "detection")
    assert r.total.leaks == 1 and r.total.hours == 6 * 24  # Mar 10 .. Mar 15 inclusive
    # clipped to the period end when as-of is later
    r = totals([still_open], D("2026-03-01"), D("2026-03-31"), D("2026-06-01"), "detection")
    assert r.total.hours == 22 * 24


def test_totals_by_site_and_type():
    leaks = [period(), period(leak_id="L2", component_type="flange", site_name="Other")]
    r = totals(leaks, D("2026-03-01"), D("2026-03-31"), D("2026-03-20"), "detection")
    assert set(r.by_site) == {"Site", "Other"} and set(r.by_type) == {"valve", "flange"}
    assert r.total.methane_kg == pytest.approx(sum(t.methane_kg for t in r.by_site.values()))


def test_user_factor_set_goes_first(tmp_path, monkeypatch):
    (tmp_path / "ours.csv").write_text(
        "factor_set,kind,component,service,method,value,unit,citation,status,verified,note,segments\n"
        "acme-2026,leaker,valve,gas,ogi,3.0,scf whole gas/h/leaking component,company study 2026,company,yes,,"
        "onshore_production\n")
    monkeypatch.setenv("PLUMEBOOK_FACTORS", str(tmp_path))
    book = catalog.factor_book()
    assert book.leaker_order[PROD][0].factor_set == "acme-2026"
    assert estimate(leak(), book).methane_kg_per_h == pytest.approx(3.0 * 0.9 * 0.0192)
    # it declares production only: a transmission leak keeps W-3A (non-compressor valve 6.42 scf/h [text])
    assert estimate(leak(segment=TRANS), book).whole_gas_scf_per_h == 6.42


def test_user_factor_set_must_declare_its_segments(tmp_path, monkeypatch):
    (tmp_path / "ours.csv").write_text(
        "factor_set,kind,component,service,method,value,unit,citation,status,verified\n"
        "acme-2026,leaker,valve,gas,ogi,3.0,scf whole gas/h/leaking component,company study 2026,company,yes\n")
    monkeypatch.setenv("PLUMEBOOK_FACTORS", str(tmp_path))
    with pytest.raises(catalog.ValidationError, match="segments: is required"):
        catalog.factor_book()


def test_invalid_user_factor_file_names_line_and_column(tmp_path, monkeypatch):
    (tmp_path / "bad.csv").write_text("factor_set,kind,component,service,method,value,unit,citation,status\n"
                                      "x,leaker,valve,gas,ogi,lots,scf whole gas/h,here,company\n")
    monkeypatch.setenv("PLUMEBOOK_FACTORS", str(tmp_path))
    with pytest.raises(catalog.ValidationError, match="line 2: user:bad.csv: value"):
        catalog.factor_book()


def test_estimate_command(capsys):
    import json

    from fieldapp.cli import main

    assert main(["estimate", "--type", "valve", "--service", "gas", "--measured", "10", "--unit", "scf/h",
                 "--methane-fraction", "0.9", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["methane_kg_per_h"] == pytest.approx(0.1728)
    assert out["co2e_kg_per_h"] == pytest.approx(0.1728 * 28)  # AR5 100-yr default [text]
    assert main(["estimate", "--type", "teapot", "--service", "gas"]) == 2
    assert "allowed: valve" in capsys.readouterr().err


def test_inventory_estimate_uses_population_factors():
    from fieldapp.core.estimate import inventory_estimate

    # 40 CFR 98 Table W-1A [text], western gas: valve 0.121, connector 0.017 scf/h per component.
    # 100 valves + 400 connectors = 12.1 + 6.8 = 18.9 scf/h whole gas; x 0.8 x 0.0192 kg/scf = 0.290304 kg/h
    counts = {(ComponentType.VALVE, Service.GAS): 100, (ComponentType.CONNECTOR, Service.GAS): 400,
              (ComponentType.THIEF_HATCH, Service.WATER_OIL): 3}
    result = inventory_estimate(counts, BOOK, "western", 0.8)
    assert result.whole_gas_scf_per_h == pytest.approx(18.9)
    assert result.methane_kg_per_h == pytest.approx(0.290304)
    assert result.missing == ("3 x thief_hatch in water_oil service",)
    with pytest.raises(EstimateError, match="region"):
        inventory_estimate(counts, BOOK, "northern", 0.8)


def test_leaker_order_entry_must_serve_its_segment():
    from fieldapp.core.factors import build_book

    files = {"factor-sets.csv": [{"factor_set": "w-3a", "segments": "transmission_compression", "label": "W-3A",
                                  "citation": "Table W-3A", "status": "text"}],
             "leaker-order.csv": [{"segment": "onshore_production", "rank": "1", "factor_set": "w-3a",
                                   "citation": "test", "status": "company", "note": ""}]}
    book, problems = build_book(files)
    assert book is None and any("does not declare segment onshore_production" in p.message for p in problems)


def test_estimate_help_lists_the_gwp_names_and_segments(capsys):
    from fieldapp.cli import main

    try:
        main(["estimate", "--help"])
    except SystemExit:
        pass
    out = " ".join(capsys.readouterr().out.split())
    assert "AR4, AR5 (default), AR5-feedback, AR6 (= AR6-fossil), AR6-fossil, AR6-non-fossil" in out
    assert "transmission_compression" in out


def test_underground_storage_uses_w4a_station_and_wellhead_rows():
    # Table W-4A (81 FR 86517, Nov. 30, 2016) [text, read in the CFR text at govregs.com], scf/hour/component:
    # storage station valve 14.84 (OGI); storage wellheads flange 3.8 (OGI), valve 3.2 (Method 21)
    storage = IndustrySegment.UNDERGROUND_STORAGE
    station = estimate(leak(segment=storage), BOOK)
    assert (station.factor_set, station.whole_gas_scf_per_h) == ("w-4a", 14.84)
    assert any("storage station" in a for a in station.assumptions)
    assert estimate(leak("flange", segment=storage, wellhead_component=True), BOOK).whole_gas_scf_per_h == 3.8
    m21 = estimate(leak(segment=storage, wellhead_component=True, survey_method=SurveyMethod.METHOD21), BOOK)
    assert m21.whole_gas_scf_per_h == 3.2
    # 3.2 scf/h × 0.9 × 0.0192 kg/scf = 0.055296 kg/h
    assert m21.methane_kg_per_h == pytest.approx(0.055296)
    assert len([k for k in BOOK.factors if k[0] == "w-4a"]) == 24


def test_estimate_of_a_stored_leak_by_tag_equals_by_id(demo_store, capsys):
    import json

    from fieldapp.cli import main

    db = str(demo_store.path)
    leak_id = demo_store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                              "WHERE c.tag = 'TD-0033' AND l.measured_rate IS NOT NULL")[0]["id"]
    assert main(["--db", db, "estimate", "--leak", "TD-0033", "--json"]) == 0
    by_tag = json.loads(capsys.readouterr().out)
    assert main(["--db", db, "estimate", "--leak", leak_id, "--json"]) == 0
    assert json.loads(capsys.readouterr().out) == by_tag
    # the demo's measured leak: 4.2 scf/h as entered (demo_site/scenario.toml, invented)
    assert (by_tag["factor_key"], by_tag["factor_value"], by_tag["factor_unit"]) == ("measurement", 4.2, "scf/h")
    # TD-0033 is a repeat leaker: its closed first leak is named by the local day it was found
    first = demo_store.rows("SELECT l.detected_at FROM leaks l JOIN components c ON c.id = l.component_id "
                            "WHERE c.tag = 'TD-0033' ORDER BY l.detected_at")[0]["detected_at"][:10]
    assert main(["--db", db, "estimate", "--leak", f"TD-0033@{first}", "--json"]) == 0, capsys.readouterr().err
    assert json.loads(capsys.readouterr().out)["basis"] != "measured"
    assert main(["--db", db, "estimate", "--leak", "TD-9999"]) == 2
    assert "leak: 'TD-9999' is not a leak id or the tag of a leak" in capsys.readouterr().err
