"""Industry segment per site (40 CFR 98.230(a)) in the store, the demo and the CLI, and what it does to
the estimates and emission totals.

Factor values as in tests/test_estimate.py: W-3A [text, 81 FR 86516]; EPA-453/R-95-017 Table 2-8 [memory].
"""

from __future__ import annotations

import json
from datetime import date

import pytest

from fieldapp.cli import main
from fieldapp.store import ops
from fieldapp.store.estimates import emission_report, estimate_leak, estimates, leak_rows


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_site_segment_is_validated_and_journalled(store, site):
    with pytest.raises(ops.ValidationError, match="segment"):
        ops.edit(store, "sites", site.id, {"segment": "upstream"})
    ops.edit(store, "sites", site.id, {"segment": "gathering_and_boosting"})
    assert store.get("sites", site.id)["segment"] == "gathering_and_boosting"
    changes = [e for e in store.rows("SELECT new FROM journal WHERE row_id = ? AND op = 'update'", (site.id,))]
    assert any("gathering_and_boosting" in e["new"] for e in changes)


def test_demo_sites_have_segments_and_no_demo_estimate_cites_w3a(demo_store):
    segments = {r["name"]: r["segment"] for r in demo_store.rows("SELECT name, segment FROM sites")}
    # the demo compressor station sits in a gathering block (scenario.toml): gathering and boosting
    assert segments["Tamsin Draw Compressor Station"] == "gathering_and_boosting"
    assert all(segments.values())
    rates = estimates(demo_store, leak_rows(demo_store))
    assert rates and all(not isinstance(r, Exception) for r in rates.values())
    for r in rates.values():
        assert r.factor_set != "w-3a" and "W-3A" not in r.source
        assert r.segment in ("onshore_production", "gathering_and_boosting") and r.table_reason


def test_demo_repaired_leak_counts_to_its_repair(demo_store):
    # TD-0070 (scenario.toml): found in survey td-2 (day -40), repaired day -20 and not yet resurveyed:
    # 20 days x 24 = 480 h, not to the as-of day
    report, skipped = emission_report(demo_store, date(2026, 1, 1), date(2026, 12, 31), date(2026, 12, 1),
                                      "detection")
    assert not skipped
    row = next(r for r in report.rows if r["tag"] == "TD-0070")
    assert (row["hours"], row["stop"], row["duration_rule"]) == (480.0, "repair", "to_repair")


def test_unset_ambiguous_segment_leaves_leaks_not_estimated(demo_store):
    station = demo_store.rows("SELECT id FROM sites WHERE kind = 'compressor_station'")[0]["id"]
    demo_store.conn.execute("UPDATE sites SET segment = NULL WHERE id = ?", (station,))  # as an old file
    leak_id = demo_store.rows("SELECT l.id FROM leaks l JOIN surveys v ON v.id = l.survey_id WHERE v.site_id = ? "
                              "AND l.measured_rate IS NULL AND l.screening_ppm IS NULL", (station,))[0]["id"]
    with pytest.raises(Exception, match="ambiguous"):
        estimate_leak(demo_store, leak_id)
    _report, skipped = emission_report(demo_store, date(2026, 1, 1), date(2026, 12, 31), date(2026, 12, 1),
                                       "detection", station)
    assert skipped and all("segment" in s for s in skipped)


def test_estimate_command_segment_choice_no_factor_and_exit_codes(capsys):
    # transmission compressor-station meter, compressor component: W-3A 19.33 scf/h [text]
    code, out, _ = run(capsys, "estimate", "--type", "instrument", "--service", "gas", "--segment",
                       "transmission_compression", "--compressor-component", "--methane-fraction", "0.9", "--json")
    got = json.loads(out)
    assert code == 0 and got["whole_gas_scf_per_h"] == 19.33 and got["segment"] == "transmission_compression"
    assert "W-3A" in got["table_reason"]
    # no table serves a light-liquid valve at transmission (W-3A is gas service only [text]): exit 0, no_factor
    code, out, _ = run(capsys, "estimate", "--type", "valve", "--service", "light_liquid", "--segment",
                       "transmission_compression", "--json")
    got = json.loads(out)
    assert code == 0 and got["basis"] == "no_factor" and got["methane_kg_per_h"] is None
    assert got["table_reason"].startswith("no factor:")
    # no segment at all: bad input, exit 2, the message names the field
    code, _, err = run(capsys, "estimate", "--type", "valve", "--service", "gas")
    assert code == 2 and "segment" in err and "onshore_production" in err
    code, _, err = run(capsys, "estimate", "--type", "valve", "--service", "gas", "--segment", "upstream")
    assert code == 2 and "segment" in err


def test_estimate_command_states_the_methane_fraction_default_and_takes_gwp_names(capsys):
    # Table 2-8 gas valve 9.8E-02 kg TOC/h [memory] × fraction 1.0 (the stated default) = 0.098; AR6 fossil 29.8
    code, out, _ = run(capsys, "estimate", "--type", "valve", "--service", "gas", "--segment", "onshore_production",
                       "--gwp", "AR6", "--json")
    got = json.loads(out)
    assert code == 0 and got["methane_kg_per_h"] == pytest.approx(0.098) and got["gwp_set"] == "ar6-fossil"
    assert got["co2e_kg_per_h"] == pytest.approx(0.098 * 29.8)
    assert any("1.0 assumed" in a for a in got["assumptions"])
    # AR6 20-year values are [memory] in gwp.csv: the estimate says so
    assert any(a.startswith("AR6-FOSSIL 20-year GWP 82.5 not verified") for a in got["assumptions"])
    code, _, err = run(capsys, "estimate", "--type", "valve", "--service", "gas", "--segment", "onshore_production",
                       "--gwp", "AR9")
    assert code == 2 and "AR6-non-fossil" in err


def test_estimate_command_with_site_and_leak_uses_the_site_composition(demo_store, capsys):
    db = demo_store.path
    # Orrel Mesa Pad 2: methane weight fraction 0.68 (scenario.toml); Table 2-8 gas valve 9.8E-02 [memory]
    code, out, _ = run(capsys, "--db", db, "estimate", "--type", "valve", "--service", "gas", "--site",
                       "Orrel Mesa Pad 2", "--gwp", "ar5", "--json")
    got = json.loads(out)
    assert code == 0 and got["segment"] == "onshore_production"
    assert got["composition"] == {"methane_mole_fraction": 0.82, "methane_weight_fraction": 0.68}
    assert got["methane_kg_per_h"] == pytest.approx(9.8e-2 * 0.68)
    leak_id = demo_store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                              "WHERE c.tag = 'TD-0070'")[0]["id"]
    code, out, _ = run(capsys, "--db", db, "estimate", "--leak", leak_id, "--json")
    got = json.loads(out)
    # light-liquid thief hatch at Tamsin Draw (gathering and boosting): Table 2-8 light oil "others"
    # 8.3E-02 kg TOC/h [memory] × methane weight fraction 0.62 (scenario.toml)
    assert code == 0 and got["segment"] == "gathering_and_boosting"
    assert got["methane_kg_per_h"] == pytest.approx(8.3e-2 * 0.62)


def test_emissions_command_states_the_duration_rule(demo_store, capsys):
    db = demo_store.path
    code, out, _ = run(capsys, "--db", db, "emissions", "--from", "2026-01-01", "--to", "2026-12-31", "--as-of",
                       "2026-12-01", "--gwp", "AR5", "--json")
    got = json.loads(out)
    assert code == 0 and got["duration_rule"] == "to_repair" and "repair" in got["duration_rule_text"]
    assert all("hours" in r and "counted_from" in r and "stop" in r for r in got["leaks"])
    code, out, _ = run(capsys, "--db", db, "emissions", "--from", "2026-01-01", "--to", "2026-12-31", "--csv")
    assert out.splitlines()[0].endswith("stop,hours,methane_kg_per_h,methane_kg,duration_rule")
    code, out, _ = run(capsys, "--db", db, "emissions", "--from", "2026-01-01", "--to", "2026-12-31")
    assert "Duration rule to_repair:" in out


def test_segment_command(demo_store, capsys):
    db = demo_store.path
    code, out, _ = run(capsys, "--db", db, "segment", "Brackwater Tank Battery 1", "gathering_and_boosting")
    assert code == 0 and "gathering_and_boosting" in out
    code, _, err = run(capsys, "--db", db, "segment", "Brackwater Tank Battery 1", "midstream")
    assert code == 2 and "segment" in err and "transmission_compression" in err


def test_a_segment_set_on_a_tablet_reaches_the_office(demo_store, tmp_path):
    from fieldapp.store.base import Store
    from sync.bundle import make_device_bundle
    from sync.merge import merge
    from sync.trust import enrol_each_other
    from tests.conftest import Wall

    site = demo_store.rows("SELECT id FROM sites WHERE name = 'Brackwater Tank Battery 1'")[0]["id"]
    ops.edit(demo_store, "sites", site, {"segment": "gathering_and_boosting"})
    office = Store(tmp_path / "office" / "store.db", actor="office", wall=Wall())
    enrol_each_other(office, demo_store)
    merge(office, make_device_bundle(demo_store, tmp_path / "b.zip").path)
    assert office.get("sites", site)["segment"] == "gathering_and_boosting"


def test_estimate_of_a_stored_leak_refuses_conflicting_inputs_and_takes_a_fraction(demo_store, capsys):
    db = demo_store.path
    leak_id = demo_store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                              "WHERE c.tag = 'TD-0070'")[0]["id"]
    code, _, err = run(capsys, "--db", db, "estimate", "--leak", leak_id, "--type", "valve")
    assert code == 2 and "type" in err and "--leak" in err
    # Table 2-8 light oil "others" 8.3E-02 kg TOC/h [memory] × weight fraction 0.5 given on the command line
    code, out, _ = run(capsys, "--db", db, "estimate", "--leak", leak_id, "--methane-weight-fraction", "0.5",
                       "--json")
    assert code == 0 and json.loads(out)["methane_kg_per_h"] == pytest.approx(8.3e-2 * 0.5)


def test_leaks_csv_marks_a_leak_without_factor(demo_store, tmp_path):
    from sync.export import export_csv

    station = demo_store.rows("SELECT id FROM sites WHERE name = 'Tamsin Draw Compressor Station'")[0]["id"]
    ops.edit(demo_store, "sites", station, {"segment": "processing"})  # no processing table is shipped
    export_csv(demo_store, tmp_path)
    text = (tmp_path / "leaks.csv").read_text(encoding="utf-8")
    assert ",no_factor," in text and "no shipped or user factor table serves onshore natural gas processing" in text
