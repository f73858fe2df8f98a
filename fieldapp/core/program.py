"""Programs: the rule values of one LDAR program, parsed from a plain mapping (a loaded TOML file).

Every value carries the citation of the rule it summarises and a status: ``text`` (read in the
published rule), ``memory`` (recalled, not checked against the current text), ``summary`` (from a
secondary source) or ``company`` (a company's own choice). Parsing returns problems that name the
key, never raises halfway.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from fieldapp.core.enums import SiteKind, SurveyMethod, allowed
from fieldapp.core.fields import FieldProblem

STATUSES = ("text", "memory", "summary", "company")
UNITS = ("calendar_days", "business_days", "months", "years")
DEADLINE_KINDS = ("first_attempt", "final_repair", "resurvey", "re_repair")
DEADLINE_STARTS = ("detection", "first_attempt", "repair", "resurvey_failed", "final_repair_deadline")
# "final_repair_deadline": the deadline falls on the final-repair deadline itself (plus ``within``), as for a
# resurvey that completes the repair (40 CFR 60.5397a(h)(4), 60.5397b(h)(4)).
PERIODS = ("month", "bimonth", "quarter", "half", "year")
# Survey fields a program may require. "deviations" means the deviations from the monitoring plan or
# the statement that there were none; ended_at, areas_done and deviations are checked when a survey ends.
SURVEY_RECORD_FIELDS = ("started_at", "ended_at", "operator", "qualification", "camera_make", "camera_model",
                        "camera_serial", "camera_check", "camera_check_note", "ambient_temp_c", "sky",
                        "wind_speed_m_s", "wind_max_m_s", "areas", "areas_done", "deviations", "compressor_modes")
# What an annual (or periodic) report may hold, per survey and per leak; a program's [annual_report] lists
# the ones its rule asks for (sync/report_fields.py gives each its label and value). Names are our own.
REPORT_SURVEY_FIELDS = ("survey_date", "method", "instrument", "operator", "deviations", "leak_count",
                        "leaks_by_type", "not_repaired_by_type", "on_delay_by_type", "planned_shutdowns",
                        "compressor_modes", "calibration_records")
REPORT_SITE_FIELDS = ("company", "site_name", "facility_id", "location", "coordinates", "reporting_period",
                      "site_kind", "startup_date", "well_site_type", "wellhead_only_since", "equipment_added_back_on",
                      "well_closure_dates")
REPORT_LEAK_FIELDS = ("tag", "component", "location", "detected_on", "instrument_reading",
                      "photo_or_tag", "first_attempt", "repair", "resurvey", "repaired_as_required", "delay",
                      "parts", "parts_expected_on", "planned_shutdown", "state")


@dataclass(frozen=True, slots=True)
class Span:
    """A length of time: an amount of calendar days, business days, months or years."""

    amount: int
    unit: str

    def describe(self) -> str:
        """Human text, e.g. '30 calendar days'."""
        unit = self.unit.replace("_", " ")
        return f"{self.amount} {unit[:-1] if self.amount == 1 else unit}"


@dataclass(frozen=True, slots=True)
class DeadlineRule:
    """A deadline: ``span`` after the event ``start``, with its citation."""

    kind: str
    span: Span
    start: str
    citation: str
    status: str
    note: str = ""

    def describe(self) -> str:
        """Human text, e.g. 'first attempt within 30 calendar days of detection'."""
        names = {"delay_limit": "repair", "parts_order": "replacement ordered"}
        what = names.get(self.kind, self.kind.replace("_", " "))
        if self.start == "parts_received":
            return f"{what} within {self.span.describe()} after the replacement is received"
        if self.start == "final_repair_deadline":
            if self.span.amount == 0:
                return f"{what} by the final-repair deadline"
            return f"{what} within {self.span.describe()} after the final-repair deadline"
        return f"{what} within {self.span.describe()} of {self.start.replace('_', ' ')}"


@dataclass(frozen=True, slots=True)
class RepairTier:
    """The repair deadlines for leaks at or above a screening value (``min_ppm`` None = any leak).

    ``methods`` limits the tier to leaks found by those methods (empty: any method); a tier naming the
    leak's method is preferred over one that names none. ``resurvey_methods`` lists the methods a
    resurvey of such a leak may use (empty: any).
    """

    label: str
    min_ppm: float | None
    rules: Mapping[str, DeadlineRule]
    methods: tuple[SurveyMethod, ...] = ()
    resurvey_methods: tuple[SurveyMethod, ...] = ()
    citation: str = ""
    status: str = ""
    fallback_if_ppm_at_most: float | None = None

    def applies_to(self, method: SurveyMethod | None) -> bool:
        """Whether the tier covers leaks found by ``method`` (None: the tier names no method)."""
        return not self.methods or (method is not None and method in self.methods)


@dataclass(frozen=True, slots=True)
class Inspection:
    """How often one kind of site must be inspected with one method."""

    site_kinds: tuple[SiteKind, ...]
    method: SurveyMethod
    frequency: str
    period: str | None
    min_spacing: Span | None
    max_spacing: Span | None
    citation: str
    status: str
    relax_after_clean: int = 0
    relaxed_period: str | None = None
    note: str = ""
    alternatives: tuple[SurveyMethod, ...] = ()
    period_sets_earliest: bool = True
    reading: str = ""

    def satisfied_by(self) -> tuple[SurveyMethod, ...]:
        """Survey methods that count for this inspection (its own and its alternatives)."""
        return (self.method, *self.alternatives)


@dataclass(frozen=True, slots=True)
class PartsRoute:
    """Delay of repair while a replacement part is awaited: order it, then repair after receipt."""

    order: DeadlineRule
    repair: DeadlineRule
    reasons: tuple[str, ...]
    citation: str
    status: str
    note: str = ""


@dataclass(frozen=True, slots=True)
class DelayRule:
    """How long a leak may stay on delay of repair (the shutdown route, and optionally the parts route)."""

    cap: Span | None
    until_shutdown: bool
    reasons: tuple[str, ...]
    citation: str
    status: str
    parts: PartsRoute | None = None


@dataclass(frozen=True, slots=True)
class CitedValue:
    """A single rule value with its citation."""

    value: Any
    citation: str
    status: str


@dataclass(frozen=True, slots=True)
class AnnualReport:
    """The fields a program's rule asks its annual report to hold: per survey and per leak, each cited."""

    survey_fields: CitedValue
    leak_fields: CitedValue
    site_fields: CitedValue | None = None  # the site items (type of site, startup date, ...), when the file lists them


@dataclass(frozen=True, slots=True)
class Program:
    """A complete program file."""

    id: str
    title: str
    jurisdiction: str
    rule: str
    notice: str
    initial_survey: DeadlineRule | None
    inspections: tuple[Inspection, ...]
    repair_tiers: tuple[RepairTier, ...]
    delay: DelayRule | None
    leak_definition: Mapping[str, CitedValue]
    required_survey_fields: tuple[str, ...]
    survey_limits: Mapping[str, CitedValue]
    holiday_country: str | None = None
    holiday_subdivision: str | None = None
    primary_method: SurveyMethod = SurveyMethod.OGI
    survey_records: CitedValue | None = None
    leak_records: Mapping[str, CitedValue] | None = None
    exempt_site_kinds: Mapping[str, CitedValue] | None = None
    annual_report: AnnualReport | None = None

    def inspections_for(self, kind: SiteKind) -> list[Inspection]:
        """The inspections that apply to a site kind."""
        return [i for i in self.inspections if kind in i.site_kinds]

    def site_kinds(self) -> tuple[SiteKind, ...]:
        """Every site kind the program sets a schedule for, in declaration order."""
        seen: dict[SiteKind, None] = {}
        for insp in self.inspections:
            for kind in insp.site_kinds:
                seen.setdefault(kind, None)
        return tuple(seen)

    def kind_problem(self, kind: SiteKind) -> str | None:
        """Why a site of this kind cannot be placed under the program (None when it can)."""
        if self.inspections_for(kind) or kind.value in (self.exempt_site_kinds or {}):
            return None
        kinds = [k.value for k in self.site_kinds()] + list(self.exempt_site_kinds or {})
        return (f"{kind.value!r} is not a site kind that program {self.id} sets a schedule for; "
                f"allowed: {', '.join(kinds)}")

    def tier_for(self, screening_ppm: float | None, method: SurveyMethod | None = None) -> RepairTier:
        """The repair tier of a leak found by ``method`` (None: the program's primary method).

        Tiers naming the method come first; among them (or, if none names it, among the tiers that
        name no method) the highest screening threshold that the leak reaches wins.
        """
        method = method or self.primary_method
        named = [t for t in self.repair_tiers if t.methods and method in t.methods]
        fell_back = [t for t in named if t.fallback_if_ppm_at_most is not None and screening_ppm is not None
                     and screening_ppm <= t.fallback_if_ppm_at_most]
        specific = [t for t in named if t not in fell_back]
        generic = [t for t in self.repair_tiers if not t.methods]
        if fell_back and not specific:
            # A reading at or below the fallback value leaves the method's tier for the generic tiers,
            # but never for one that starts at or below that value (30 TAC 115.782(b)(3): "10,000 ppmv or
            # less" gets the (b)(2) time, even where a generic tier starts at 10,000).
            floor = min(t.fallback_if_ppm_at_most for t in fell_back)
            generic = [t for t in generic if t.min_ppm is None or t.min_ppm > floor]
        for group in (specific, generic):
            for tier in sorted(group, key=lambda t: -(t.min_ppm or 0)):
                if tier.min_ppm is None or (screening_ppm is not None and screening_ppm >= tier.min_ppm):
                    return tier
        return self.repair_tiers[-1]


class _Reader:
    """Collects problems while reading nested keys; each problem names the full key path."""

    def __init__(self) -> None:
        self.problems: list[FieldProblem] = []

    def fail(self, key: str, message: str) -> None:
        self.problems.append(FieldProblem(key, message))

    def get(self, data: Mapping, key: str, path: str, kind: type | tuple, required: bool = True) -> Any:
        if key not in data:
            if required:
                self.fail(f"{path}{key}", "is required")
            return None
        value = data[key]
        if isinstance(value, bool) and kind is not bool:
            self.fail(f"{path}{key}", f"must be {getattr(kind, '__name__', kind)}, got true/false")
            return None
        if not isinstance(value, kind):
            names = kind.__name__ if isinstance(kind, type) else " or ".join(k.__name__ for k in kind)
            self.fail(f"{path}{key}", f"must be {names}, got {type(value).__name__}")
            return None
        return value

    def choice(self, data: Mapping, key: str, path: str, options: tuple[str, ...], required: bool = True):
        value = self.get(data, key, path, str, required)
        if value is not None and value not in options:
            self.fail(f"{path}{key}", f"{value!r} is not allowed; allowed: {', '.join(options)}")
            return None
        return value

    def cited(self, data: Mapping, path: str) -> tuple[str, str]:
        citation = self.get(data, "citation", path, str) or ""
        status = self.choice(data, "status", path, STATUSES) or ""
        return citation, status

    def span(self, data: Mapping, key: str, path: str, required: bool = True) -> Span | None:
        value = self.get(data, key, path, dict, required)
        if value is None:
            return None
        amount = self.get(value, "amount", f"{path}{key}.", int)
        unit = self.choice(value, "unit", f"{path}{key}.", UNITS)
        if amount is not None and amount < 0:
            self.fail(f"{path}{key}.amount", "must be 0 or more")
        if amount is None or unit is None or amount < 0:
            return None
        return Span(amount, unit)

    def deadline(self, data: Mapping, kind: str, path: str, starts: tuple[str, ...]) -> DeadlineRule | None:
        span = self.span(data, "within", path)
        start = self.choice(data, "from", path, starts)
        citation, status = self.cited(data, path)
        note = self.get(data, "note", path, str, False) or ""
        if span is None or start is None:
            return None
        return DeadlineRule(kind, span, start, citation, status, note)


def _inspection(r: _Reader, data: Mapping, path: str) -> Inspection | None:
    kinds = r.get(data, "site_kinds", path, list) or []
    site_kinds = []
    for i, k in enumerate(kinds):
        try:
            site_kinds.append(SiteKind(k))
        except ValueError:
            r.fail(f"{path}site_kinds[{i}]", f"{k!r} is not allowed; allowed: {allowed(SiteKind)}")
    methods = tuple(m.value for m in SurveyMethod)
    method = r.choice(data, "method", path, methods)
    alternatives = []
    for i, alt in enumerate(r.get(data, "alternatives", path, list, False) or []):
        if alt not in methods:
            r.fail(f"{path}alternatives[{i}]", f"{alt!r} is not allowed; allowed: {', '.join(methods)}")
        else:
            alternatives.append(SurveyMethod(alt))
    frequency = r.get(data, "frequency", path, str) or ""
    period = r.choice(data, "period", path, PERIODS, required=False)
    min_spacing = r.span(data, "min_spacing", path, required=False)
    max_spacing = r.span(data, "max_spacing", path, required=False)
    if period is None and max_spacing is None:
        r.fail(f"{path}period", "a period or a max_spacing is required to compute a window")
    relax = r.get(data, "relax_after_clean", path, int, False) or 0
    relaxed = r.choice(data, "relaxed_period", path, PERIODS, required=False)
    if relax and not relaxed:
        r.fail(f"{path}relaxed_period", "is required when relax_after_clean is set")
    sets_earliest = r.get(data, "period_sets_earliest", path, bool, False)
    reading = r.get(data, "reading", path, str, False) or ""
    citation, status = r.cited(data, path)
    note = r.get(data, "note", path, str, False) or ""
    if method is None or not site_kinds:
        return None
    return Inspection(tuple(site_kinds), SurveyMethod(method), frequency, period, min_spacing, max_spacing,
                      citation, status, relax, relaxed, note, tuple(alternatives),
                      True if sets_earliest is None else sets_earliest, reading)


def _methods(r: _Reader, data: Mapping, key: str, path: str) -> tuple[SurveyMethod, ...]:
    names = tuple(m.value for m in SurveyMethod)
    out = []
    for i, m in enumerate(r.get(data, key, path, list, False) or []):
        if m not in names:
            r.fail(f"{path}{key}[{i}]", f"{m!r} is not allowed; allowed: {', '.join(names)}")
        else:
            out.append(SurveyMethod(m))
    return tuple(out)


def _tier(r: _Reader, data: Mapping, path: str) -> RepairTier | None:
    label = r.get(data, "label", path, str) or ""
    min_ppm = r.get(data, "min_ppm", path, (int, float), False)
    rules: dict[str, DeadlineRule] = {}
    for kind in DEADLINE_KINDS:
        if kind in data:
            sub = r.get(data, kind, path, dict)
            if sub is not None:
                rule = r.deadline(sub, kind, f"{path}{kind}.", DEADLINE_STARTS)
                if rule:
                    rules[kind] = rule
    for kind in ("first_attempt", "final_repair"):
        if kind not in data:
            r.fail(f"{path}{kind}", "is required")
    methods = _methods(r, data, "methods", path)
    resurvey_methods = _methods(r, data, "resurvey_methods", path)
    citation = r.get(data, "citation", path, str, False) or ""
    status = r.choice(data, "status", path, STATUSES, required=bool(citation)) or ""
    fallback = r.get(data, "fallback_if_ppm_at_most", path, (int, float), False)
    return RepairTier(label, None if min_ppm is None else float(min_ppm), rules, methods, resurvey_methods,
                      citation, status, None if fallback is None else float(fallback))


def _parts(r: _Reader, data: Mapping, path: str) -> PartsRoute | None:
    order_sub = r.get(data, "order", path, dict)
    repair_sub = r.get(data, "repair", path, dict)
    order = r.deadline(order_sub, "parts_order", f"{path}order.", ("first_attempt", "detection")) \
        if order_sub is not None else None
    repair = r.deadline(repair_sub, "delay_limit", f"{path}repair.", ("parts_received",)) \
        if repair_sub is not None else None
    reasons = tuple(r.get(data, "reasons", path, list, False) or ())
    citation, status = r.cited(data, path)
    note = r.get(data, "note", path, str, False) or ""
    if order is None or repair is None:
        return None
    return PartsRoute(order, repair, reasons, citation, status, note)


def _cited_values(r: _Reader, data: Mapping, path: str) -> dict[str, CitedValue]:
    result = {}
    for key, entry in data.items():
        if not isinstance(entry, dict):
            r.fail(f"{path}{key}", "must be a table with value, citation and status")
            continue
        if "value" not in entry:
            r.fail(f"{path}{key}.value", "is required")
            continue
        citation, status = r.cited(entry, f"{path}{key}.")
        result[key] = CitedValue(entry["value"], citation, status)
    return result


def _field_list(r: _Reader, data: Mapping, key: str, path: str, known: tuple[str, ...]) -> CitedValue | None:
    """A cited list of report field names (``{ value = [...], citation, status }``), each one of ``known``."""
    sub = r.get(data, key, path, dict)
    if sub is None:
        return None
    names = r.get(sub, "value", f"{path}{key}.", list) or []
    for i, name in enumerate(names):
        if name not in known:
            r.fail(f"{path}{key}.value[{i}]", f"{name!r} is not allowed; allowed: {', '.join(known)}")
    if len(set(names)) != len(names):
        r.fail(f"{path}{key}.value", "names a field twice")
    if not names and isinstance(sub.get("value"), list):
        r.fail(f"{path}{key}.value", "must name at least one field")
    citation, status = r.cited(sub, f"{path}{key}.")
    return CitedValue(tuple(names), citation, status)


def _annual_report(r: _Reader, data: Mapping) -> AnnualReport | None:
    sub = r.get(data, "annual_report", "", dict, False)
    if sub is None:
        return None
    for key in sub:
        if key not in ("survey_fields", "leak_fields", "site_fields"):
            r.fail(f"annual_report.{key}", "is not allowed; allowed: survey_fields, leak_fields, site_fields")
    survey = _field_list(r, sub, "survey_fields", "annual_report.", REPORT_SURVEY_FIELDS)
    leak = _field_list(r, sub, "leak_fields", "annual_report.", REPORT_LEAK_FIELDS)
    site = _field_list(r, sub, "site_fields", "annual_report.", REPORT_SITE_FIELDS) if "site_fields" in sub else None
    return AnnualReport(survey, leak, site) if survey and leak else None


def _table_list(r: _Reader, data: Mapping, key: str, read) -> list:
    """Read an array of tables with ``read(reader, table, path)``, naming each bad entry by index."""
    out = []
    for i, sub in enumerate(r.get(data, key, "", list) or []):
        if not isinstance(sub, dict):
            r.fail(f"{key}[{i}]", "must be a table")
            continue
        found = read(r, sub, f"{key}[{i}].")
        if found:
            out.append(found)
    return out


def parse_program(data: Mapping[str, Any]) -> tuple[Program | None, list[FieldProblem]]:
    """Read a program from a plain mapping; returns (program, []) or (None, problems naming keys)."""
    r = _Reader()
    head = {k: r.get(data, k, "", str) for k in ("id", "title", "jurisdiction", "rule", "notice")}
    initial = None
    if "initial_survey" in data:
        sub = r.get(data, "initial_survey", "", dict)
        if sub is not None:
            initial = r.deadline(sub, "initial_survey", "initial_survey.", ("startup",))
    inspections = _table_list(r, data, "inspections", _inspection)
    tiers = _table_list(r, data, "repair_tiers", _tier)
    if "repair_tiers" in data and not tiers and not r.problems:
        r.fail("repair_tiers", "at least one tier is required")
    if tiers and all(t.min_ppm is not None for t in tiers):
        r.fail("repair_tiers", "one tier must have no min_ppm (it applies to every other leak)")
    delay = None
    if "delay_of_repair" in data:
        sub = r.get(data, "delay_of_repair", "", dict)
        if sub is not None:
            cap = r.span(sub, "cap", "delay_of_repair.", required=False)
            until = r.get(sub, "until_shutdown", "delay_of_repair.", bool)
            reasons = tuple(r.get(sub, "reasons", "delay_of_repair.", list, False) or ())
            citation, status = r.cited(sub, "delay_of_repair.")
            if cap is None and not until:
                r.fail("delay_of_repair.cap", "a cap or until_shutdown = true is required")
            parts = None
            if "parts" in sub:
                parts_sub = r.get(sub, "parts", "delay_of_repair.", dict)
                if parts_sub is not None:
                    parts = _parts(r, parts_sub, "delay_of_repair.parts.")
            delay = DelayRule(cap, bool(until), reasons, citation, status, parts)
    leak_def = _cited_values(r, r.get(data, "leak_definition", "", dict) or {}, "leak_definition.")
    records = r.get(data, "survey_records", "", dict, False) or {}
    required_fields = tuple(r.get(records, "required", "survey_records.", list, False) or ())
    for i, name in enumerate(required_fields):
        if name not in SURVEY_RECORD_FIELDS:
            r.fail(f"survey_records.required[{i}]", f"{name!r} is not allowed; allowed: "
                   f"{', '.join(SURVEY_RECORD_FIELDS)}")
    records_cited = None
    if records:
        rec_citation, rec_status = r.cited(records, "survey_records.")
        records_cited = CitedValue(required_fields, rec_citation, rec_status)
    leak_records = _cited_values(r, r.get(data, "leak_records", "", dict, False) or {}, "leak_records.")
    primary = r.choice(data, "primary_method", "", tuple(m.value for m in SurveyMethod), required=False)
    exempt = _cited_values(r, r.get(data, "exempt_site_kinds", "", dict, False) or {}, "exempt_site_kinds.")
    for key in exempt:
        if key not in {k.value for k in SiteKind}:
            r.fail(f"exempt_site_kinds.{key}", f"is not a site kind; allowed: {allowed(SiteKind)}")
    annual = _annual_report(r, data)
    limits = _cited_values(r, r.get(data, "survey_limits", "", dict, False) or {}, "survey_limits.")
    holidays = r.get(data, "business_days", "", dict, False) or {}
    country = r.get(holidays, "country", "business_days.", str, False) if holidays else None
    subdivision = r.get(holidays, "subdivision", "business_days.", str, False) if holidays else None
    if r.problems:
        return None, r.problems
    return Program(
        id=head["id"], title=head["title"], jurisdiction=head["jurisdiction"], rule=head["rule"],
        notice=head["notice"], initial_survey=initial, inspections=tuple(inspections),
        repair_tiers=tuple(tiers), delay=delay, leak_definition=leak_def,
        required_survey_fields=required_fields, survey_limits=limits,
        holiday_country=country, holiday_subdivision=subdivision,
        primary_method=SurveyMethod(primary) if primary else _first_method(inspections),
        survey_records=records_cited, leak_records=leak_records, exempt_site_kinds=exempt, annual_report=annual,
    ), []


def _first_method(inspections: list[Inspection]) -> SurveyMethod:
    """The method of the first inspection (OGI for a program with none)."""
    return inspections[0].method if inspections else SurveyMethod.OGI


def cited_values(program: Program) -> list[dict[str, Any]]:
    """Every rule value of a program, flat, each with its key, value, citation and status."""
    out: list[dict[str, Any]] = []

    def add(key: str, value: Any, citation: str, status: str) -> None:
        out.append({"key": key, "value": value, "citation": citation, "status": status})

    def rule(key: str, r: DeadlineRule) -> None:
        add(key, r.describe(), r.citation, r.status)

    if program.initial_survey:
        rule("initial_survey", program.initial_survey)
    for i, insp in enumerate(program.inspections):
        kinds = ", ".join(k.value for k in insp.site_kinds)
        add(f"inspections[{i}]", f"{kinds}: {insp.frequency} {'/'.join(m.value for m in insp.satisfied_by())}",
            insp.citation, insp.status)
        if insp.reading:
            # the latest date chosen where the rule gives none is an interpretation, never rule text
            add(f"inspections[{i}].reading", insp.reading, f"plumebook's reading of '{insp.frequency}' in "
                f"{program.rule}; the program file may choose another (see its note)", "company")
    for i, tier in enumerate(program.repair_tiers):
        for kind, r in tier.rules.items():
            rule(f"repair_tiers[{i}].{kind}", r)
        if tier.methods or tier.resurvey_methods or tier.fallback_if_ppm_at_most is not None:
            what = f"{tier.label}: leaks found by {'/'.join(m.value for m in tier.methods) or 'any method'}"
            if tier.resurvey_methods:
                what += f"; resurvey by {'/'.join(m.value for m in tier.resurvey_methods)}"
            add(f"repair_tiers[{i}]", what, tier.citation, tier.status)
    if program.delay:
        d = program.delay
        limit = [x for x in ("next scheduled shutdown" if d.until_shutdown else "",
                             f"{d.cap.describe()} after detection" if d.cap else "") if x]
        add("delay_of_repair", "earliest of: " + ", ".join(limit), d.citation, d.status)
        if d.parts:
            rule("delay_of_repair.parts.order", d.parts.order)
            rule("delay_of_repair.parts.repair", d.parts.repair)
    for group, values in (("leak_definition", program.leak_definition), ("leak_records", program.leak_records),
                          ("survey_limits", program.survey_limits), ("exempt_site_kinds", program.exempt_site_kinds)):
        for key, cited in (values or {}).items():
            add(f"{group}.{key}", cited.value, cited.citation, cited.status)
    if program.survey_records:
        add("survey_records.required", list(program.survey_records.value), program.survey_records.citation,
            program.survey_records.status)
    if program.annual_report:
        for key in ("site_fields", "survey_fields", "leak_fields"):
            cited = getattr(program.annual_report, key)
            if cited is not None:
                add(f"annual_report.{key}", list(cited.value), cited.citation, cited.status)
    return out
