"""Enumerations of the record vocabulary (values are the stored spellings)."""

from __future__ import annotations

from enum import StrEnum


class SiteKind(StrEnum):
    """What kind of facility a site is; programs set survey frequency per kind."""

    WELL_SITE = "well_site"
    SINGLE_WELLHEAD = "single_wellhead"
    SMALL_WELL_SITE = "small_well_site"
    MULTI_WELLHEAD = "multi_wellhead"
    WELL_SITE_MAJOR_EQUIPMENT = "well_site_major_equipment"
    CENTRALIZED_PRODUCTION_FACILITY = "centralized_production_facility"
    TANK_BATTERY = "tank_battery"
    COMPRESSOR_STATION = "compressor_station"
    GAS_PLANT = "gas_plant"
    PROCESS_UNIT = "process_unit"


class IndustrySegment(StrEnum):
    """Industry segment of a site, as 40 CFR 98.230(a) lists them (labels and paragraphs in
    fieldapp/data/factors/segments.csv); ``outside_subpart_w`` for a site in none of them."""

    OFFSHORE_PRODUCTION = "offshore_production"
    ONSHORE_PRODUCTION = "onshore_production"
    PROCESSING = "processing"
    TRANSMISSION_COMPRESSION = "transmission_compression"
    UNDERGROUND_STORAGE = "underground_storage"
    LNG_STORAGE = "lng_storage"
    LNG_IMPORT_EXPORT = "lng_import_export"
    DISTRIBUTION = "distribution"
    GATHERING_AND_BOOSTING = "gathering_and_boosting"
    TRANSMISSION_PIPELINE = "transmission_pipeline"
    OUTSIDE_SUBPART_W = "outside_subpart_w"


class ComponentType(StrEnum):
    """Kinds of equipment that can leak."""

    VALVE = "valve"
    CONNECTOR = "connector"
    FLANGE = "flange"
    OPEN_ENDED_LINE = "open_ended_line"
    PRESSURE_RELIEF_DEVICE = "pressure_relief_device"
    PUMP_SEAL = "pump_seal"
    COMPRESSOR_SEAL = "compressor_seal"
    THIEF_HATCH = "thief_hatch"
    INSTRUMENT = "instrument"
    OTHER = "other"


class Service(StrEnum):
    """What the component carries."""

    GAS = "gas"
    LIGHT_LIQUID = "light_liquid"
    HEAVY_LIQUID = "heavy_liquid"
    WATER_OIL = "water_oil"


class SurveyMethod(StrEnum):
    """How a survey looks for leaks."""

    OGI = "ogi"
    METHOD21 = "method21"
    AVO = "avo"


class CameraCheck(StrEnum):
    """Result of the daily camera check before an OGI survey."""

    PASSED = "passed"
    FAILED = "failed"
    NOT_DONE = "not_done"


class ActionKind(StrEnum):
    """Append-only events in a leak's life."""

    FIRST_ATTEMPT = "first_attempt"
    REPAIRED = "repaired"
    DELAY_OF_REPAIR = "delay_of_repair"
    RESURVEY_PASSED = "resurvey_passed"
    RESURVEY_FAILED = "resurvey_failed"
    VOIDED = "voided"


class DelayKind(StrEnum):
    """Which delay-of-repair route applies: a shutdown (or blowdown, shut-in, safety) or awaited parts."""

    SHUTDOWN = "shutdown"
    PARTS = "parts"


class LeakState(StrEnum):
    """A leak's state, always derived from its actions."""

    OPEN = "open"
    ATTEMPTED = "attempted"
    REPAIRED = "repaired"
    CLOSED = "closed"
    DELAYED = "delayed"
    VOID = "void"


def allowed(enum_cls: type[StrEnum]) -> str:
    """The allowed spellings of an enumeration, for error messages."""
    return ", ".join(member.value for member in enum_cls)
