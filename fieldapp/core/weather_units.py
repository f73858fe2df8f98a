"""Units of the survey conditions a crew types: air temperature and wind speed.

Records keep one canonical unit (°C, m/s) and, beside it, the value as entered with its unit, so
an auditor sees what was typed and every report can show either system.

Definitions (exact, NIST SP 811 (2008) appendix B.8 and B.9): t/°C = (t/°F - 32) / 1.8;
1 mile = 1609.344 m, so 1 mph = 0.44704 m/s; 1 km/h = 1/3.6 m/s; 1 knot = 1852/3600 m/s.
"""

from __future__ import annotations

from dataclasses import dataclass

TEMPERATURE_UNITS = ("°C", "°F")
SPEED_UNITS = {"m/s": 1.0, "mph": 0.44704, "km/h": 1 / 3.6, "kn": 1852 / 3600}


@dataclass(frozen=True)
class UnitSystem:
    """The units a crew works in: one for temperature and one for wind speed."""

    key: str
    label: str
    temperature: str
    speed: str


SYSTEMS = {
    "metric": UnitSystem("metric", "°C and m/s", "°C", "m/s"),
    "us": UnitSystem("us", "°F and mph", "°F", "mph"),
}
DEFAULT_SYSTEM = "metric"


class UnitError(ValueError):
    """A unit that is not one of the allowed ones."""


def to_celsius(value: float, unit: str) -> float:
    """A temperature in °C."""
    if unit == "°C":
        return value
    if unit == "°F":
        return (value - 32.0) / 1.8
    raise UnitError(f"temperature unit {unit!r} is not allowed; allowed: {', '.join(TEMPERATURE_UNITS)}")


def from_celsius(value: float, unit: str) -> float:
    """A temperature given in °C, in ``unit``."""
    if unit == "°C":
        return value
    if unit == "°F":
        return value * 1.8 + 32.0
    raise UnitError(f"temperature unit {unit!r} is not allowed; allowed: {', '.join(TEMPERATURE_UNITS)}")


def to_m_s(value: float, unit: str) -> float:
    """A speed in m/s."""
    try:
        return value * SPEED_UNITS[unit]
    except KeyError:
        raise UnitError(f"speed unit {unit!r} is not allowed; allowed: {', '.join(SPEED_UNITS)}") from None


def from_m_s(value: float, unit: str) -> float:
    """A speed given in m/s, in ``unit``."""
    try:
        return value / SPEED_UNITS[unit]
    except KeyError:
        raise UnitError(f"speed unit {unit!r} is not allowed; allowed: {', '.join(SPEED_UNITS)}") from None


# survey field (canonical) -> (field of the entered value, field of its unit, kind)
CONDITION_FIELDS = {
    "ambient_temp_c": ("ambient_temp_entered", "temp_unit", "temperature"),
    "wind_speed_m_s": ("wind_speed_entered", "wind_unit", "speed"),
    "wind_max_m_s": ("wind_max_entered", "wind_unit", "speed"),
}


def canonical_conditions(values: dict) -> dict:
    """Survey values with each entered condition (value + unit) also given in its canonical unit.

    A value given only canonically gets its unit recorded as the canonical one; an entered value that
    is not a number is left for the record check to refuse (it names the entered field).
    """
    out = dict(values)
    if out.get("temp_unit"):
        to_celsius(0.0, out["temp_unit"])  # raises UnitError for a unit that is not allowed
    if out.get("wind_unit"):
        to_m_s(0.0, out["wind_unit"])
    for canonical, (entered, unit_field, kind) in CONDITION_FIELDS.items():
        unit = out.get(unit_field) or ("°C" if kind == "temperature" else "m/s")
        raw = out.get(entered)
        if raw in (None, ""):
            if out.get(canonical) not in (None, ""):
                out.setdefault(unit_field, "°C" if kind == "temperature" else "m/s")
            continue
        try:
            number = float(raw)
        except (TypeError, ValueError):
            continue
        out[canonical] = round(to_celsius(number, unit) if kind == "temperature" else to_m_s(number, unit), 6)
        out[unit_field] = unit
    return out


def shown(canonical_value: float | None, kind: str, system: str) -> str:
    """A stored condition as text in a unit system, e.g. '54 °F' or '3.1 mph' ('' when not recorded)."""
    if canonical_value is None:
        return ""
    units = SYSTEMS[system]
    if kind == "temperature":
        return f"{from_celsius(canonical_value, units.temperature):.1f} {units.temperature}"
    return f"{from_m_s(canonical_value, units.speed):.1f} {units.speed}"


def typed_text(row: dict, canonical: str) -> str:
    """What the crew typed for a condition, e.g. '50 °F' ('' when nothing was typed or no unit is known)."""
    entered, unit_field, _kind = CONDITION_FIELDS[canonical]
    value, unit = row.get(entered), row.get(unit_field)
    return f"{value:g} {unit}" if value is not None and unit else ""


def report_text(row: dict, canonical: str) -> str:
    """A condition for a report: the canonical value, and what was typed when it was in another unit."""
    value = row.get(canonical)
    if value is None:
        return "-"
    kind = CONDITION_FIELDS[canonical][2]
    text = f"{value:.3g} {'°C' if kind == 'temperature' else 'm/s'}"
    typed = typed_text(row, canonical)
    return text + (f" (typed {typed})" if typed and not typed.endswith(("°C", "m/s")) else "")
