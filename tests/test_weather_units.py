"""The °F/°C and mph/m/s converter against an independent unit registry (pint) and NIST SP 811.

Sources: pint's default registry (a general-purpose package from the registry, `test` extra);
NIST Special Publication 811 (2008), appendix B.8 (1 mi/h = 0.44704 m/s exactly) and B.9
(t/°C = (t/°F - 32)/1.8).
"""

from __future__ import annotations

import pint
import pytest
from hypothesis import given
from hypothesis import strategies as st

from fieldapp.core import weather_units as wu
from fieldapp.store import ops
from fieldapp.store.prefs import set_unit_system, unit_system

ureg = pint.UnitRegistry()


@given(st.floats(min_value=-80, max_value=150, allow_nan=False))
def test_fahrenheit_to_celsius_matches_pint(f):
    expected = ureg.Quantity(f, ureg.degF).to(ureg.degC).magnitude
    assert wu.to_celsius(f, "°F") == pytest.approx(expected, abs=1e-9)
    assert wu.from_celsius(wu.to_celsius(f, "°F"), "°F") == pytest.approx(f, abs=1e-9)


@given(st.floats(min_value=0, max_value=200, allow_nan=False))
def test_speeds_match_pint(v):
    for unit, name in (("mph", "mile / hour"), ("km/h", "kilometer / hour"), ("kn", "knot")):
        expected = ureg.Quantity(v, name).to("meter / second").magnitude
        assert wu.to_m_s(v, unit) == pytest.approx(expected, rel=1e-12, abs=1e-12)


def test_published_factors():
    assert wu.to_m_s(1, "mph") == 0.44704  # NIST SP 811 B.8, exact
    assert wu.to_celsius(32, "°F") == 0 and wu.to_celsius(212, "°F") == pytest.approx(100)  # B.9
    assert wu.to_celsius(-40, "°F") == pytest.approx(-40)


def test_unknown_unit_is_refused_with_the_allowed_ones():
    with pytest.raises(wu.UnitError, match="allowed: °C, °F"):
        wu.to_celsius(1, "K")
    with pytest.raises(wu.UnitError, match="allowed: m/s, mph"):
        wu.to_m_s(1, "ft/s")


def test_survey_stores_canonical_values_and_keeps_what_was_typed(store, site):
    survey, _ = ops.start_survey(store, {
        "site_id": site.id, "method": "ogi", "started_at": "2026-11-30T08:00:00-07:00", "operator": "T",
        "qualification": "q", "camera_make": "m", "camera_model": "x", "camera_check": "passed", "sky": "clear",
        "ambient_temp_entered": "50", "temp_unit": "°F", "wind_speed_entered": "4", "wind_max_entered": "9",
        "wind_unit": "mph"})
    row = store.get("surveys", survey.id)
    assert row["ambient_temp_c"] == pytest.approx(10.0)  # (50 - 32) / 1.8
    assert row["wind_max_m_s"] == pytest.approx(9 * 0.44704)
    assert (row["ambient_temp_entered"], row["temp_unit"], row["wind_max_entered"], row["wind_unit"]) == (
        50.0, "°F", 9.0, "mph")


def test_survey_typed_canonically_records_its_unit(store, site):
    survey, _ = ops.start_survey(store, {
        "site_id": site.id, "method": "ogi", "started_at": "2026-11-30T08:00:00-07:00", "operator": "T",
        "qualification": "q", "camera_make": "m", "camera_model": "x", "camera_check": "passed", "sky": "clear",
        "ambient_temp_c": 5, "wind_max_m_s": 2})
    row = store.get("surveys", survey.id)
    assert (row["temp_unit"], row["wind_unit"]) == ("°C", "m/s")


def test_a_bad_unit_is_refused_naming_the_field(store, site):
    from fieldapp.core.fields import ValidationError

    with pytest.raises(ValidationError, match="temp_unit"):
        ops.start_survey(store, {"site_id": site.id, "method": "ogi", "started_at": "2026-11-30T08:00:00-07:00",
                                 "operator": "T", "ambient_temp_entered": "50", "temp_unit": "K"})


def test_unit_preference_is_per_store(store):
    assert unit_system(store).key == "metric"
    set_unit_system(store, "us")
    assert unit_system(store).temperature == "°F"
    from fieldapp.core.fields import ValidationError

    with pytest.raises(ValidationError, match="units"):
        set_unit_system(store, "imperial")


def test_report_text_shows_the_canonical_value_and_what_was_typed():
    row = {"ambient_temp_c": 10.0, "ambient_temp_entered": 50.0, "temp_unit": "°F",
           "wind_max_m_s": 2.0, "wind_max_entered": 2.0, "wind_unit": "m/s", "wind_speed_m_s": None}
    assert wu.report_text(row, "ambient_temp_c") == "10 °C (typed 50 °F)"
    assert wu.report_text(row, "wind_max_m_s") == "2 m/s"
    assert wu.report_text(row, "wind_speed_m_s") == "-"
