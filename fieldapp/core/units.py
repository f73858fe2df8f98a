"""Units of leak rates and their conversions.

Definitions (exact): 1 lb = 0.45359237 kg; 1 ft = 0.3048 m, so 1 scf = 0.028316846592 m³. Volumes
are at the standard conditions of the factor tables (subpart W: 60 °F, 14.7 psia [memory]). Mass and
volume convert only through a gas density, which is a factor (fieldapp/data/factors/constants.csv).
"""

from __future__ import annotations

LB_IN_KG = 0.45359237
SCF_IN_M3 = 0.3048**3
HOURS_PER_YEAR = 8760.0  # 365 days × 24 h
MASS_UNITS = {"kg/h": 1.0, "lb/h": LB_IN_KG, "t/yr": 1000.0 / HOURS_PER_YEAR}
VOLUME_UNITS = {"scf/h": 1.0, "m3/h": 1.0 / SCF_IN_M3}
UNITS = (*MASS_UNITS, *VOLUME_UNITS)


class UnitError(ValueError):
    """An unknown unit, or a conversion between mass and volume without a density."""


def is_mass(unit: str) -> bool:
    """True for mass-rate units (kg/h, lb/h, t/yr)."""
    if unit not in MASS_UNITS and unit not in VOLUME_UNITS:
        raise UnitError(f"unit {unit!r} is not allowed; allowed: {', '.join(UNITS)}")
    return unit in MASS_UNITS


def convert(value: float, from_unit: str, to_unit: str) -> float:
    """Convert a rate between two mass units or two volume units."""
    if is_mass(from_unit) != is_mass(to_unit):
        raise UnitError(f"cannot convert {from_unit} to {to_unit} without a gas density")
    table = MASS_UNITS if from_unit in MASS_UNITS else VOLUME_UNITS
    return value * table[from_unit] / table[to_unit]


def scf_to_kg(scf: float, density_kg_per_scf: float) -> float:
    """A volume of one gas at standard conditions to its mass."""
    return scf * density_kg_per_scf
