"""The records of an LDAR program, as small immutable types.

Every field carries its parser in its metadata, so one function (``parse_record``) validates any
record from raw values (form, CSV, CLI, journal) and reports each problem by field name.

Example::

    site, problems = parse_record(Site, {"id": "...", "name": "North pad", "kind": "well_site",
                                         "program_id": "us-nsps-oooo-a", "timezone": "America/Denver",
                                         "methane_mole_fraction": "0.82"})
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass, field
from datetime import date, datetime
from enum import StrEnum
from typing import Any, TypeVar

from fieldapp.core import fields as f
from fieldapp.core.enums import (
    ActionKind,
    CameraCheck,
    ComponentType,
    DelayKind,
    IndustrySegment,
    Service,
    SiteKind,
    SurveyMethod,
)


def _spec(parse: f.Parser, required: bool = False, default: Any = None, doc: str = "") -> Any:
    return field(default=default, metadata={"parse": parse, "required": required, "doc": doc})


ID = f.text(64, single_line=True)
TAG = f.text(80, single_line=True)


@dataclass(frozen=True, slots=True)
class Site:
    """A facility surveyed under one program."""

    id: str = _spec(ID, True)
    name: str = _spec(f.text(120, single_line=True), True, doc="display name")
    kind: SiteKind = _spec(f.enum_of(SiteKind), True)
    program_id: str = _spec(f.text(80), True, doc="id of the program file that sets its rules")
    timezone: str = _spec(f.time_zone, True, doc="IANA zone; deadlines count local calendar days")
    operator: str = _spec(f.text(120), False, "", doc="company operating the site")
    startup_date: date | None = _spec(f.iso_date, doc="start of operation, for the initial survey")
    methane_mole_fraction: float = _spec(f.number(0, 1), True, doc="methane mole fraction of whole gas")
    methane_weight_fraction: float | None = _spec(f.number(0, 1), doc="methane weight fraction of TOC")
    location: str = _spec(f.text(200), False, "", doc="description or 'lat,lon'")
    emergency_note: str = _spec(f.text(500), False, "", doc="site emergency contact or procedure reference")
    segment: IndustrySegment | None = _spec(f.enum_of(IndustrySegment), False, None,
                                            doc="industry segment, 40 CFR 98.230(a); picks the factor tables")
    facility_id: str = _spec(f.text(64, single_line=True), False, "", doc="facility or permit id for filings")
    latitude: float | None = _spec(f.number(-90, 90), doc="decimal degrees, north positive")
    longitude: float | None = _spec(f.number(-180, 180), doc="decimal degrees, east positive")
    datum: str = _spec(f.text(32, single_line=True), False, "", doc="datum of the coordinates, e.g. NAD83")


@dataclass(frozen=True, slots=True)
class Component:
    """A piece of equipment with a tag, unique within its site."""

    id: str = _spec(ID, True)
    site_id: str = _spec(ID, True)
    tag: str = _spec(TAG, True)
    type: ComponentType = _spec(f.enum_of(ComponentType), True)
    service: Service = _spec(f.enum_of(Service), True)
    area: str = _spec(f.text(120), False, "")
    equipment: str = _spec(f.text(120), False, "")
    difficult_to_monitor: bool = _spec(f.flag, False, False)
    unsafe_to_monitor: bool = _spec(f.flag, False, False)


@dataclass(frozen=True, slots=True)
class Survey:
    """One inspection of a site: who, when, how, in what conditions, and what it covered."""

    id: str = _spec(ID, True)
    site_id: str = _spec(ID, True)
    method: SurveyMethod = _spec(f.enum_of(SurveyMethod), True)
    started_at: datetime = _spec(f.aware_datetime, True)
    ended_at: datetime | None = _spec(f.aware_datetime)
    operator: str = _spec(f.text(120), True, doc="person who surveyed")
    qualification: str = _spec(f.text(200), False, "", doc="training or certification of the operator")
    camera_make: str = _spec(f.text(80), False, "")
    camera_model: str = _spec(f.text(80), False, "")
    camera_serial: str = _spec(f.text(80), False, "")
    camera_check: CameraCheck = _spec(f.enum_of(CameraCheck), False, CameraCheck.NOT_DONE)
    camera_check_note: str = _spec(f.text(300), False, "", doc="what was shown at what distance")
    ambient_temp_c: float | None = _spec(f.number(-60, 60, "°C"))
    wind_speed_m_s: float | None = _spec(f.number(0, 60, "m/s"))
    wind_max_m_s: float | None = _spec(f.number(0, 80, "m/s"))
    sky: str = _spec(f.text(80), False, "", doc="sky conditions, e.g. clear, overcast")
    compressor_modes: str = _spec(f.text(500), False, "", doc="operating mode of each compressor at the time of "
                                  "the survey (operating, standby pressurized, not operating-depressurized)")
    areas: tuple[str, ...] = _spec(f.text_list, False, ())
    areas_done: tuple[str, ...] = _spec(f.text_list, False, ())
    deviations: str = _spec(f.text(2000), False, "", doc="deviations from the monitoring plan")
    no_deviations: bool = _spec(f.flag, False, False, doc="statement that there were none")
    ambient_temp_entered: float | None = _spec(f.number(-80, 150), doc="temperature as typed, in temp_unit")
    temp_unit: str = _spec(f.text(4), False, "", doc="°C or °F: the unit the temperature was typed in")
    wind_speed_entered: float | None = _spec(f.number(0, 200), doc="wind speed as typed, in wind_unit")
    wind_max_entered: float | None = _spec(f.number(0, 200), doc="maximum wind as typed, in wind_unit")
    wind_unit: str = _spec(f.text(5), False, "", doc="m/s, mph, km/h or kn: the unit the wind was typed in")


@dataclass(frozen=True, slots=True)
class Leak:
    """A leak found in a survey on one component."""

    id: str = _spec(ID, True)
    survey_id: str = _spec(ID, True)
    component_id: str = _spec(ID, True)
    detected_at: datetime = _spec(f.aware_datetime, True)
    location_note: str = _spec(f.text(500), False, "")
    screening_ppm: float | None = _spec(f.number(0, 1_000_000, "ppm"))
    measured_rate: float | None = _spec(f.number(0, None))
    measured_unit: str = _spec(f.text(16), False, "", doc="kg/h, lb/h, scf/h or m3/h")
    measured_instrument: str = _spec(f.text(120), False, "")
    hazard: bool = _spec(f.flag, False, False, doc="large, near ignition, or may carry H2S")
    hazard_note: str = _spec(f.text(500), False, "")
    detection_method: SurveyMethod | None = _spec(f.enum_of(SurveyMethod), doc="how the leak was found "
                                                  "(the survey's method unless another was used)")
    tag_attached: bool = _spec(f.flag, False, False, doc="a physical tag identifying the leak is on the component")


@dataclass(frozen=True, slots=True)
class Action:
    """One append-only event in a leak's life, dated on the site's local calendar."""

    id: str = _spec(ID, True)
    leak_id: str = _spec(ID, True)
    kind: ActionKind = _spec(f.enum_of(ActionKind), True)
    done_on: date = _spec(f.iso_date, True, doc="local date the action happened")
    actor: str = _spec(f.text(120), True, doc="who did it")
    note: str = _spec(f.text(1000), False, "")
    reason: str = _spec(f.text(1000), False, "", doc="why (delay of repair, void)")
    planned_on: date | None = _spec(f.iso_date, doc="planned repair date (delay of repair)")
    shutdown_on: date | None = _spec(f.iso_date, doc="next scheduled shutdown (delay of repair)")
    instrument: str = _spec(f.text(120), False, "", doc="instrument of a resurvey")
    method: SurveyMethod | None = _spec(f.enum_of(SurveyMethod), doc="method of a resurvey (ogi, method21, avo)")
    delay_kind: DelayKind | None = _spec(f.enum_of(DelayKind), doc="delay route: shutdown or parts")
    parts_ordered_on: date | None = _spec(f.iso_date, doc="date the replacement part was ordered (parts route)")
    parts_received_on: date | None = _spec(f.iso_date, doc="date the replacement part was received (parts route)")
    seq: int = _spec(f.number(0, None), False, 0, doc="order of entry among actions of the same day")


@dataclass(frozen=True, slots=True)
class PhotoRef:
    """A photo or clip of a leak, named by the SHA-256 of its original bytes."""

    id: str = _spec(ID, True)
    leak_id: str = _spec(ID, True)
    sha256: str = _spec(f.text(64), True)
    media_kind: str = _spec(f.text(8), True, doc="photo or video")
    original_name: str = _spec(f.text(255), False, "")
    byte_size: int = _spec(f.number(0, None), True)
    content_type: str = _spec(f.text(40), False, "", doc="image/jpeg, image/png, video/mp4, ...")
    captured_at: str = _spec(f.text(40), False, "", doc="capture time as found in EXIF, never invented")
    gps_lat: float | None = _spec(f.number(-90, 90))
    gps_lon: float | None = _spec(f.number(-180, 180))
    width: int | None = _spec(f.number(1, None))
    height: int | None = _spec(f.number(1, None))
    duration_s: float | None = _spec(f.number(0, None))
    added_by: str = _spec(f.text(120), False, "")
    added_on_device: str = _spec(f.text(64), False, "")
    added_at: str = _spec(f.text(40), False, "")


@dataclass(frozen=True, slots=True)
class Marker:
    """Where the leak is on a photo, in normalised coordinates (0..1 from the top-left corner)."""

    id: str = _spec(ID, True)
    media_id: str = _spec(ID, True)
    x: float = _spec(f.number(0, 1), True)
    y: float = _spec(f.number(0, 1), True)
    label: str = _spec(f.text(80, single_line=True), False, "", doc="usually the component tag")


R = TypeVar("R")

RECORD_TYPES: dict[str, type] = {
    "sites": Site,
    "components": Component,
    "surveys": Survey,
    "leaks": Leak,
    "actions": Action,
    "media": PhotoRef,
    "markers": Marker,
}


_SPECS: dict[type, tuple[tuple[str, f.Parser, bool], ...]] = {}


def _specs(cls: type) -> tuple[tuple[str, f.Parser, bool], ...]:
    """(name, parser, required) of each field, computed once per record type."""
    specs = _SPECS.get(cls)
    if specs is None:
        specs = tuple((fl.name, fl.metadata["parse"], fl.metadata["required"]) for fl in dataclasses.fields(cls))
        _SPECS[cls] = specs
    return specs


def field_names(cls: type) -> list[str]:
    """Field names of a record type, in declaration order."""
    return [name for name, _parse, _required in _specs(cls)]


INTEGER_FIELDS = frozenset({"seq", "byte_size", "width", "height"})


def parse_record(cls: type[R], values: Mapping[str, Any], line: int | None = None) -> tuple[R | None, list]:
    """Build a record from raw values; returns (record, []) or (None, problems naming each field)."""
    problems: list[f.FieldProblem] = []
    specs = _specs(cls)
    if len(values.keys() - {name for name, _p, _r in specs}):
        known = sorted(name for name, _p, _r in specs)
        for name in values:
            if name not in known:
                problems.append(f.FieldProblem(name, f"unknown field; allowed: {', '.join(known)}", line))
    kwargs: dict[str, Any] = {}
    for name, parse, required in specs:
        raw = values.get(name)
        if raw is None or raw == "" or (isinstance(raw, str) and not raw.strip()) or (
                required and isinstance(raw, (list, tuple)) and not raw):
            if required:
                problems.append(f.FieldProblem(name, "is required", line))
            continue
        try:
            value = parse(raw)
        except f.FieldValueError as exc:
            problems.append(f.FieldProblem(name, str(exc), line))
            continue
        kwargs[name] = int(value) if name in INTEGER_FIELDS else value
    if problems:
        return None, problems
    return cls(**kwargs), []


def plain(value: Any) -> Any:
    """A JSON-friendly form of a field value (dates as ISO text, enums as their spelling)."""
    if isinstance(value, StrEnum):
        return value.value
    if isinstance(value, (datetime, date)):
        return value.isoformat()
    if isinstance(value, tuple):
        return list(value)
    if isinstance(value, bool):
        return int(value)
    return value


def as_plain(record: Any) -> dict[str, Any]:
    """A record as a dict of JSON-friendly values, in field order."""
    return {name: plain(getattr(record, name)) for name, _p, _r in _specs(type(record))}


def replace(record: R, changes: Mapping[str, Any]) -> tuple[R | None, list]:
    """Apply raw changes to a record and re-validate the result as a whole."""
    merged = as_plain(record)
    merged.update(changes)
    return parse_record(type(record), merged)
