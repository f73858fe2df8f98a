"""Commands for rate estimates and emission totals: estimate, emissions."""

from __future__ import annotations

import argparse
import dataclasses
import math
import sys
from datetime import UTC, datetime

from fieldapp.cmdkit import emit_json, emit_table, open_store, parse_day, parse_number, required_text
from fieldapp.core.fields import FieldProblem, ValidationError

MAX_PPM = 1_000_000  # a screening value is a volume fraction in ppmv: 1,000,000 is the whole sample
MAX_MEASURED = 1e9   # per hour in any of the units; far above any single component leak (common practice, no source)
PEGGED_LIMITS = (10_000.0, 100_000.0)


def register(sub: argparse._SubParsersAction) -> None:
    """Add the estimate commands."""
    from fieldapp.core.enums import IndustrySegment

    segments = ", ".join(IndustrySegment)
    gwp_names = "AR4, AR5 (default), AR5-feedback, AR6 (= AR6-fossil), AR6-fossil, AR6-non-fossil; any case"
    p = sub.add_parser("estimate", help="rate estimate of one leak (a store is needed only for --site/--leak)")
    p.add_argument("--type", help="component type (required unless --leak)")
    p.add_argument("--service", help="service (required unless --leak)")
    p.add_argument("--segment", help=f"industry segment, 40 CFR 98.230(a): {segments} (default: the site's)")
    p.add_argument("--site", help="site id or name: its segment and gas composition are used")
    p.add_argument("--leak", help="stored leak (id, TAG or TAG@YYYY-MM-DD): estimated as stored, with its site's "
                   "segment and composition")
    p.add_argument("--compressor-component", action="store_true",
                   help="the component belongs to a compressor (subpart W Table W-3A compressor rows)")
    p.add_argument("--wellhead-component", action="store_true",
                   help="the component is on a storage wellhead (subpart W Table W-4A wellhead rows)")
    p.add_argument("--method", default="ogi", help="how the leak was found: ogi, method21, avo")
    rate = p.add_mutually_exclusive_group()
    rate.add_argument("--ppm", help="Method 21 screening value (ppmv)")
    rate.add_argument("--measured", help="measured rate (with --unit)")
    p.add_argument("--unit", help="unit of --measured: kg/h, lb/h, t/yr, scf/h, m3/h")
    p.add_argument("--pegged-at", help="instrument limit when the reading was pegged: 10000 or 100000")
    p.add_argument("--methane-fraction", help="methane mole fraction of the whole gas (0-1; default: the site's, "
                   "else 1.0, stated as an assumption)")
    p.add_argument("--methane-weight-fraction", help="methane weight fraction of TOC (0-1)")
    p.add_argument("--factor-set", help="leaker factor set to use (default: the preference order)")
    p.add_argument("--gwp", default="AR5", help=f"GWP set: {gwp_names}")
    p.add_argument("--json", action="store_true")
    p.set_defaults(handler=cmd_estimate)

    p = sub.add_parser("segment", help="set a site's industry segment (40 CFR 98.230(a)); journalled")
    p.add_argument("site", help="site id or name")
    p.add_argument("value", metavar="SEGMENT", help=f"one of: {segments}")
    p.set_defaults(handler=cmd_segment)

    p = sub.add_parser("emissions", help="estimated emissions over a period")
    p.add_argument("--from", dest="start", required=True)
    p.add_argument("--to", dest="end", required=True)
    p.add_argument("--as-of", help="date open leaks run to (default: today, UTC)")
    p.add_argument("--site")
    p.add_argument("--convention", default="detection", help="detection, previous_survey or period_start")
    p.add_argument("--gwp", default="AR5", help=f"GWP set: {gwp_names}")
    fmt = p.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true")
    fmt.add_argument("--csv", action="store_true")
    p.set_defaults(handler=cmd_emissions)


def _number(text: str | None, field: str, low: float = 0.0, high: float | None = None) -> float | None:
    return parse_number(text, field, low, high)


def _enum(cls, text: str, field: str):
    from fieldapp.core.fields import FieldValueError, enum_of

    try:
        return enum_of(cls)(text)
    except FieldValueError as exc:
        raise ValidationError([FieldProblem(field, str(exc))]) from None


def _gwp(book, text: str) -> str:
    from fieldapp.core.estimate import EstimateError, gwp_set_name

    try:
        return gwp_set_name(text, book)
    except EstimateError as exc:
        raise ValidationError([FieldProblem("gwp", str(exc).split(": ", 1)[1])]) from None


def _stored_input(args: argparse.Namespace, book):
    """Estimate inputs from --leak or --site (a store is opened only then)."""
    from fieldapp.store.estimates import leak_input, leak_rows, site_segment
    from fieldapp.store.reads import resolve_site

    store = open_store(args)
    if args.leak:
        from fieldapp.store.names import resolve_leak

        found = resolve_leak(store, args.leak, field="leak", closed_too=True)
        rows = leak_rows(store, leak_id=found["id"])
        if not rows:
            raise ValidationError([FieldProblem("leak", f"no leak with id {args.leak}")])
        return leak_input(rows[0], book)
    site = resolve_site(store, args.site)
    segment, missing = site_segment(site, book)
    return site, segment, missing


def _input(args: argparse.Namespace, book):
    from fieldapp.core.enums import ComponentType, IndustrySegment, Service, SurveyMethod
    from fieldapp.core.estimate import LeakInput

    if args.leak:
        clash = [FieldProblem(f, "is not allowed with --leak (the stored leak's own value is used)")
                 for f in ("type", "service", "site", "ppm", "measured") if getattr(args, f) is not None]
        if clash:
            raise ValidationError(clash)
        leak, missing = _stored_input(args, book)
        changes: dict = {}
        if args.segment:
            changes = {"segment": _enum(IndustrySegment, args.segment, "segment"), "segment_note": ""}
        if args.methane_fraction is not None:
            fraction = _number(args.methane_fraction, "methane-fraction", 0, 1)
            changes |= {"methane_mole_fraction": fraction,
                        "composition_note": f"methane mole fraction {fraction:g} given with --methane-fraction"}
        if args.methane_weight_fraction is not None:
            changes["methane_weight_fraction"] = _number(args.methane_weight_fraction, "methane-weight-fraction",
                                                         0, 1)
        return dataclasses.replace(leak, **changes), missing
    problems = [FieldProblem(f, "is required (or name a stored leak with --leak)")
                for f in ("type", "service") if not getattr(args, f)]
    if problems:
        raise ValidationError(problems)
    segment, seg_note, fraction, weight = None, "", None, None
    if args.site:
        site, segment, seg_note = _stored_input(args, book)
        fraction, weight = site["methane_mole_fraction"], site["methane_weight_fraction"]
        note = f"gas composition of {site['name']}: methane mole fraction {fraction:g}"
    if args.segment:
        segment, seg_note = _enum(IndustrySegment, args.segment, "segment"), ""
    if args.methane_fraction is not None:
        fraction = _number(args.methane_fraction, "methane-fraction", 0, 1)
        note = f"methane mole fraction {fraction:g} given with --methane-fraction"
    if fraction is None:
        fraction = 1.0
        note = ("methane mole fraction not given (no --methane-fraction, --site or --leak): 1.0 assumed, i.e. "
                "the gas is taken as all methane, which overstates methane for most field gas")
    if args.methane_weight_fraction is not None:
        weight = _number(args.methane_weight_fraction, "methane-weight-fraction", 0, 1)
    return LeakInput(
        component_type=_enum(ComponentType, args.type, "type"), service=_enum(Service, args.service, "service"),
        methane_mole_fraction=fraction, methane_weight_fraction=weight,
        survey_method=_enum(SurveyMethod, args.method, "method"), screening_ppm=_number(args.ppm, "ppm", 0, MAX_PPM),
        pegged_at=_number(args.pegged_at, "pegged-at"),
        measured_rate=_number(args.measured, "measured", 0, MAX_MEASURED),
        measured_unit=args.unit or "", segment=segment, segment_note=seg_note if segment else "",
        compressor_component=args.compressor_component,
        compressor_note="a compressor component (--compressor-component)" if args.compressor_component else
        "taken as a non-compressor component (no --compressor-component)",
        wellhead_component=args.wellhead_component,
        wellhead_note="a storage wellhead component (--wellhead-component)" if args.wellhead_component else
        "taken as a storage station component (no --wellhead-component)", composition_note=note), seg_note


def cmd_estimate(args: argparse.Namespace) -> int:
    """One leak's estimate; a leak no table serves gets basis "no_factor" and exit 0 (valid input, no factor)."""
    from fieldapp import catalog
    from fieldapp.core.estimate import EstimateError, NoFactor, co2e, estimate

    if args.measured is not None and not args.unit:
        raise ValidationError([FieldProblem("unit", "is required with --measured; allowed: kg/h, lb/h, t/yr, "
                                            "scf/h, m3/h")])
    pegged = _number(args.pegged_at, "pegged-at")
    if pegged is not None and pegged not in PEGGED_LIMITS:
        raise ValidationError([FieldProblem("pegged-at", f"{args.pegged_at!r} is not allowed; allowed: 10000, 100000")])
    book = catalog.factor_book()
    known_sets = sorted({*(e.factor_set for order in book.leaker_order.values() for e in order), *book.sets})
    if args.factor_set is not None and args.factor_set not in known_sets:
        raise ValidationError([FieldProblem("factor-set", f"{args.factor_set!r} is not a known factor set; known: "
                                            f"{', '.join(known_sets)}")])
    gwp = _gwp(book, args.gwp)
    leak, missing = _input(args, book)
    if leak.segment is None and leak.measured_rate is None:
        raise ValidationError([FieldProblem("segment", (missing + "; or pass --segment") if missing else
                                            "is required for a factor-based estimate: pass --segment, or --site / "
                                            f"--leak of a site that has one; allowed: {', '.join(book.segments)}")])
    try:
        result = estimate(leak, book, args.factor_set)
        horizons = co2e(result.methane_kg_per_h, book, gwp)
    except NoFactor as exc:
        return _no_factor(args, leak, str(exc).split(": ", 1)[1], gwp)
    except EstimateError as exc:
        raise ValidationError([FieldProblem(exc.field, str(exc).split(": ", 1)[1])]) from None
    if not all(math.isfinite(v) for v in (result.methane_kg_per_h, *horizons.values())):
        field = "measured" if args.measured is not None else "ppm"
        raise ValidationError([FieldProblem(field, "gives a rate too large to compute; check the value")])
    out = {"methane_kg_per_h": result.methane_kg_per_h, "co2e_kg_per_h": horizons[100],
           "co2e_20yr_kg_per_h": horizons.get(20), "gwp_set": gwp,
           "whole_gas_scf_per_h": result.whole_gas_scf_per_h,
           "basis": result.basis, "segment": result.segment, "table_reason": result.table_reason,
           "factor_set": result.factor_set, "factor_row": result.factor_row, "factor_key": result.factor_key,
           "factor_value": result.factor_value, "factor_unit": result.factor_unit, "factor_terms": result.factor_terms,
           "source": result.source, "status": result.status, "verified": result.verified,
           "composition": result.composition, "assumptions": [*result.assumptions, *_gwp_notes(book, gwp)],
           "label": "engineering estimate"}
    if args.json:
        emit_json(out)
    else:
        print(f"methane {result.methane_kg_per_h:.5g} kg/h; CO2e {horizons[100]:.4g} kg/h (100-yr) / "
              f"{horizons.get(20, 0):.4g} kg/h (20-yr), {gwp.upper()}")
        print(f"basis: {result.basis.replace('_', ' ')}; {result.factor_row}")
        print(f"source: {result.source} ({result.status})")
        print(f"segment: {result.segment or 'not given'}; why this table: {result.table_reason}")
        for note in out["assumptions"]:
            print(f"  assumption: {note}")
        print("An engineering estimate, not a measurement.")
    return 0


def _gwp_notes(book, gwp: str) -> list[str]:
    """Say which GWP values are not checked against the published report."""
    return [f"{gwp.upper()} {h}-year GWP {c.value:g} not verified against the published report ({c.status}; "
            f"{c.citation})" for (s, h), c in sorted(book.gwp.items()) if s == gwp and c.status != "text"]


def _no_factor(args: argparse.Namespace, leak, reason: str, gwp: str) -> int:
    out = {"methane_kg_per_h": None, "co2e_kg_per_h": None, "co2e_20yr_kg_per_h": None, "gwp_set": gwp,
           "whole_gas_scf_per_h": None, "basis": "no_factor", "segment": leak.segment.value,
           "table_reason": reason, "factor_set": "", "factor_row": "", "factor_key": "",
           "factor_value": None, "factor_unit": "", "factor_terms": "", "source": "", "status": "",
           "verified": False, "composition": {"methane_mole_fraction": leak.methane_mole_fraction,
                                              "methane_weight_fraction": leak.methane_weight_fraction},
           "assumptions": [n for n in (leak.composition_note, leak.segment_note) if n],
           "label": "engineering estimate"}
    if args.json:
        emit_json(out)
    else:
        print(f"basis: no_factor; segment: {leak.segment.value}\n{reason}")
    return 0


def cmd_segment(args: argparse.Namespace) -> int:
    """Set a site's industry segment in one journalled edit."""
    from fieldapp.core.enums import IndustrySegment
    from fieldapp.store import ops
    from fieldapp.store.reads import resolve_site

    value = _enum(IndustrySegment, args.value, "segment")
    store = open_store(args)
    site = resolve_site(store, args.site)
    ops.edit(store, "sites", site["id"], {"segment": value.value}, args.actor)
    print(f"{site['name']}: segment {value.value}")
    return 0


def cmd_emissions(args: argparse.Namespace) -> int:
    from fieldapp import catalog
    from fieldapp.core.emissions import CONVENTIONS
    from fieldapp.core.estimate import co2e
    from fieldapp.store.estimates import emission_report
    from fieldapp.store.reads import resolve_site
    from sync.tables import to_csv

    if args.convention not in CONVENTIONS:
        raise ValidationError([FieldProblem("convention", f"{args.convention!r} is not allowed; allowed: "
                                            f"{', '.join(CONVENTIONS)}")])
    start, end = parse_day(args.start, "from"), parse_day(args.end, "to")
    if end < start:
        raise ValidationError([FieldProblem("to", "must not be before --from")])
    as_of = parse_day(args.as_of, "as-of") if args.as_of is not None else datetime.now(UTC).date()
    required_text(args.site, "site")
    store = open_store(args)
    site_id = resolve_site(store, args.site)["id"] if args.site is not None else None
    book = catalog.factor_book()
    args.gwp = _gwp(book, args.gwp)
    report, skipped = emission_report(store, start, end, as_of, args.convention, site_id)
    for line in skipped:
        print(f"plumebook: warning: not estimated: {line}", file=sys.stderr)

    def summary(name, t):
        h = co2e(t.methane_kg, book, args.gwp)
        return {"group": name, "leaks": t.leaks, "hours": t.hours, "methane_kg": round(t.methane_kg, 3),
                "co2e_t_100yr": round(h[100] / 1000, 4), "co2e_t_20yr": round(h.get(20, 0) / 1000, 4)}

    sites = [summary(n, t) for n, t in sorted(report.by_site.items())]
    types = [summary(n, t) for n, t in sorted(report.by_type.items())]
    total = summary("total", report.total)
    if args.json:
        emit_json({"from": start, "to": end, "as_of": as_of, "convention": args.convention, "gwp_set": args.gwp,
                   "duration_rule": report.duration_rule, "duration_rule_text": report.rule_text,
                   "label": "engineering estimate", "by_site": sites, "by_component_type": types, "total": total,
                   "leaks": report.rows, "not_estimated": skipped})
    elif args.csv:
        sys.stdout.write(to_csv(report.rows, ("leak_id", "site", "tag", "component_type", "basis", "counted_from",
                                              "counted_to", "stop", "hours", "methane_kg_per_h", "methane_kg",
                                              "duration_rule")))
    else:
        print(f"Estimated emissions {start} to {end} (convention: {args.convention}; GWP {args.gwp.upper()}); "
              "engineering estimates")
        print(f"Duration rule {report.duration_rule}: {report.rule_text}")
        emit_table([*sites, total], ("group", "leaks", "hours", "methane_kg", "co2e_t_100yr", "co2e_t_20yr"))
        print()
        emit_table(types, ("group", "leaks", "hours", "methane_kg", "co2e_t_100yr", "co2e_t_20yr"))
    return 0
