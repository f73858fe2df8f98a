"""Commands for rate estimates and emission totals: estimate, emissions."""

from __future__ import annotations

import argparse
import math
import sys
from datetime import UTC, datetime

from fieldapp.cli import emit_json, emit_table, open_store, parse_day, parse_number, required_text
from fieldapp.core.fields import FieldProblem, ValidationError

MAX_PPM = 1_000_000  # a screening value is a volume fraction in ppmv: 1,000,000 is the whole sample
MAX_MEASURED = 1e9   # per hour in any of the units; far above any single component leak (common practice, no source)
PEGGED_LIMITS = (10_000.0, 100_000.0)


def register(sub: argparse._SubParsersAction) -> None:
    """Add the estimate commands."""
    p = sub.add_parser("estimate", help="rate estimate of one leak (no store needed)")
    p.add_argument("--type", required=True, help="component type")
    p.add_argument("--service", required=True)
    p.add_argument("--method", default="ogi", help="how the leak was found: ogi, method21, avo")
    rate = p.add_mutually_exclusive_group()
    rate.add_argument("--ppm", help="Method 21 screening value (ppmv)")
    rate.add_argument("--measured", help="measured rate (with --unit)")
    p.add_argument("--unit", help="unit of --measured: kg/h, lb/h, t/yr, scf/h, m3/h")
    p.add_argument("--pegged-at", help="instrument limit when the reading was pegged: 10000 or 100000")
    p.add_argument("--methane-fraction", default="1.0", help="methane mole fraction of the whole gas (0-1)")
    p.add_argument("--methane-weight-fraction", help="methane weight fraction of TOC (0-1)")
    p.add_argument("--factor-set", help="leaker factor set to use (default: the preference order)")
    p.add_argument("--gwp", default="ar5", help="GWP set: ar4, ar5, ar5-feedback, ar6-fossil, ar6-non-fossil")
    p.add_argument("--json", action="store_true")
    p.set_defaults(handler=cmd_estimate)

    p = sub.add_parser("emissions", help="estimated emissions over a period")
    p.add_argument("--from", dest="start", required=True)
    p.add_argument("--to", dest="end", required=True)
    p.add_argument("--as-of", help="date open leaks run to (default: today, UTC)")
    p.add_argument("--site")
    p.add_argument("--convention", default="detection", help="detection, previous_survey or period_start")
    p.add_argument("--gwp", default="ar5")
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


def cmd_estimate(args: argparse.Namespace) -> int:
    from fieldapp import catalog
    from fieldapp.core.enums import ComponentType, Service, SurveyMethod
    from fieldapp.core.estimate import EstimateError, LeakInput, co2e, estimate

    if args.measured is not None and not args.unit:
        raise ValidationError([FieldProblem("unit", "is required with --measured; allowed: kg/h, lb/h, t/yr, "
                                            "scf/h, m3/h")])
    pegged = _number(args.pegged_at, "pegged-at")
    if pegged is not None and pegged not in PEGGED_LIMITS:
        raise ValidationError([FieldProblem("pegged-at", f"{args.pegged_at!r} is not allowed; allowed: 10000, 100000")])
    book = catalog.factor_book()
    known_sets = sorted({*book.leaker_order, *book.sets})
    if args.factor_set is not None and args.factor_set not in known_sets:
        raise ValidationError([FieldProblem("factor-set", f"{args.factor_set!r} is not a known factor set; known: "
                                            f"{', '.join(known_sets)}")])
    if args.gwp not in book.gwp_sets():
        raise ValidationError([FieldProblem("gwp", f"{args.gwp!r} is not allowed; allowed: "
                                            f"{', '.join(book.gwp_sets())}")])
    leak = LeakInput(
        component_type=_enum(ComponentType, args.type, "type"), service=_enum(Service, args.service, "service"),
        methane_mole_fraction=_number(args.methane_fraction, "methane-fraction", 0, 1),
        methane_weight_fraction=_number(args.methane_weight_fraction, "methane-weight-fraction", 0, 1),
        survey_method=_enum(SurveyMethod, args.method, "method"),
        screening_ppm=_number(args.ppm, "ppm", 0, MAX_PPM), pegged_at=pegged,
        measured_rate=_number(args.measured, "measured", 0, MAX_MEASURED), measured_unit=args.unit or "")
    try:
        result = estimate(leak, book, args.factor_set)
        horizons = co2e(result.methane_kg_per_h, book, args.gwp)
    except EstimateError as exc:
        raise ValidationError([FieldProblem(exc.field, str(exc).split(": ", 1)[1])]) from None
    if not all(math.isfinite(v) for v in (result.methane_kg_per_h, *horizons.values())):
        field = "measured" if args.measured is not None else "ppm"
        raise ValidationError([FieldProblem(field, "gives a rate too large to compute; check the value")])
    out = {"methane_kg_per_h": result.methane_kg_per_h, "co2e_kg_per_h": horizons[100],
           "co2e_20yr_kg_per_h": horizons.get(20), "gwp_set": args.gwp,
           "whole_gas_scf_per_h": result.whole_gas_scf_per_h,
           "basis": result.basis, "factor_set": result.factor_set, "factor_row": result.factor_row,
           "source": result.source, "status": result.status, "verified": result.verified,
           "composition": result.composition, "assumptions": list(result.assumptions),
           "label": "engineering estimate"}
    if args.json:
        emit_json(out)
    else:
        print(f"methane {result.methane_kg_per_h:.5g} kg/h; CO2e {horizons[100]:.4g} kg/h (100-yr) / "
              f"{horizons.get(20, 0):.4g} kg/h (20-yr), {args.gwp}")
        print(f"basis: {result.basis}; {result.factor_row}\nsource: {result.source} ({result.status})")
        for note in result.assumptions:
            print(f"  assumption: {note}")
        print("An engineering estimate, not a measurement.")
    return 0


def cmd_emissions(args: argparse.Namespace) -> int:
    from fieldapp import catalog
    from fieldapp.core.emissions import CONVENTIONS
    from fieldapp.core.estimate import EstimateError, co2e
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
    try:
        co2e(0, book, args.gwp)
    except EstimateError as exc:
        raise ValidationError([FieldProblem("gwp", str(exc).split(": ", 1)[1])]) from None
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
                   "label": "engineering estimate", "by_site": sites, "by_component_type": types, "total": total,
                   "leaks": report.rows, "not_estimated": skipped})
    elif args.csv:
        sys.stdout.write(to_csv(report.rows, ("leak_id", "site", "tag", "component_type", "basis", "hours",
                                              "methane_kg_per_h", "methane_kg")))
    else:
        print(f"Estimated emissions {start} to {end} (convention: {args.convention}; GWP {args.gwp}); "
              "engineering estimates")
        emit_table([*sites, total], ("group", "leaks", "hours", "methane_kg", "co2e_t_100yr", "co2e_t_20yr"))
        print()
        emit_table(types, ("group", "leaks", "hours", "methane_kg", "co2e_t_100yr", "co2e_t_20yr"))
    return 0
