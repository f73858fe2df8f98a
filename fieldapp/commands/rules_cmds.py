"""Commands over programs and deadlines: programs, rules deadlines, rules window, due."""

from __future__ import annotations

import argparse
import dataclasses
import uuid
from datetime import UTC, datetime

from fieldapp.cmdkit import emit_json, emit_table, open_store, parse_day, parse_number, parse_whole, required_text

MAX_PPM = 1_000_000  # ppmv: the whole sample
MAX_WITHIN_DAYS = 36_500


def register(sub: argparse._SubParsersAction) -> None:
    """Add the rules commands."""
    p = sub.add_parser("programs", help="list programs, or show one")
    p.add_argument("action", nargs="?", choices=["show"], help="show one program")
    p.add_argument("program_id", nargs="?")
    p.add_argument("--json", action="store_true")
    p.set_defaults(handler=cmd_programs)

    p = sub.add_parser("rules", help="deadline and window calculators (no store needed)")
    what = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    d = what.add_parser("deadlines", help="repair deadlines of one leak")
    d.add_argument("--program", required=True)
    d.add_argument("--detected", required=True, help="local detection date YYYY-MM-DD")
    d.add_argument("--first-attempt")
    d.add_argument("--repaired")
    d.add_argument("--resurvey-failed")
    d.add_argument("--delayed", help="date the leak was placed on delay of repair")
    d.add_argument("--shutdown", help="next scheduled shutdown date (shutdown route of the delay)")
    d.add_argument("--parts-ordered", help="date the replacement part was ordered (parts route of the delay)")
    d.add_argument("--parts-received", help="date the replacement part was received (parts route)")
    d.add_argument("--method", choices=["ogi", "method21", "avo"],
                   help="how the leak was found (default: the program's primary method)")
    d.add_argument("--ppm", help="Method 21 screening value, ppmv (0 to 1,000,000)")
    d.add_argument("--json", action="store_true")
    d.set_defaults(handler=cmd_deadlines)
    w = what.add_parser("window", help="next survey window of a site")
    w.add_argument("--program", required=True)
    w.add_argument("--site-kind", required=True)
    w.add_argument("--inspection", choices=["ogi", "avo", "method21"])
    group = w.add_mutually_exclusive_group(required=True)
    group.add_argument("--last", help="date of the last survey")
    group.add_argument("--startup", help="startup date (no survey yet)")
    w.add_argument("--json", action="store_true")
    w.set_defaults(handler=cmd_window)

    from sync.tables import STANDINGS

    p = sub.add_parser("due", help="what is due across sites, overdue first",
                       formatter_class=argparse.RawDescriptionHelpFormatter,
                       epilog="standing:\n" + "\n".join(f"  {w:<18} {m}" for w, m in STANDINGS)
                       + "\n\nhazard: HAZARD when the leak was marked hazardous (large, near ignition, or may "
                       "carry H2S):\n  follow site procedures and wear a personal gas monitor before approaching."
                       "\nrepeat leaker: REPEAT LEAKER when leaks on the component were found in 2 of its "
                       "site's last 4 surveys.")
    p.add_argument("--as-of", help="date YYYY-MM-DD (default: today, UTC)")
    p.add_argument("--site", help="site id or name")
    p.add_argument("--within", help="only items overdue or due within DAYS (0 to 36500)")
    fmt = p.add_mutually_exclusive_group()
    fmt.add_argument("--json", action="store_true")
    fmt.add_argument("--csv", action="store_true")
    p.set_defaults(handler=cmd_due)


def _program_summary(program, origin: str) -> dict:
    return {"id": program.id, "title": program.title, "jurisdiction": program.jurisdiction,
            "rule": program.rule, "origin": origin}


def cmd_programs(args: argparse.Namespace) -> int:
    from fieldapp import catalog

    if args.action == "show":
        if not args.program_id:
            raise catalog.ValidationError([catalog.FieldProblem("program_id", "is required with show")])
        program = catalog.program(args.program_id)
        from fieldapp.core.program import cited_values

        data = dataclasses.asdict(program)
        data["values"] = cited_values(program)
        if args.json:
            emit_json(data)
        else:
            _print_program(program)
        return 0
    rows = [_program_summary(p, origin) for p, origin in catalog.programs().values()]
    if args.json:
        emit_json(rows)
    else:
        emit_table(rows, ("id", "origin", "title", "rule"))
        print(f"\nyour own programs folder: {catalog.user_programs_dir()}")
    return 0


def _print_program(program) -> None:
    print(f"{program.title}  [{program.id}]\n{program.rule}\n{program.notice}\n")
    if program.initial_survey:
        r = program.initial_survey
        print(f"initial survey: within {r.span.describe()} of startup  ({r.citation}; {r.status})")
    for i in program.inspections:
        kinds = ", ".join(k.value for k in i.site_kinds)
        print(f"inspection {i.frequency} {i.method.value}: {kinds}  ({i.citation}; {i.status})")
        if i.reading:
            print(f"  latest date: {i.reading}  (our reading; company)")
    for tier in program.repair_tiers:
        print(f"repair, {tier.label}:")
        for rule in tier.rules.values():
            print(f"  {rule.describe()}  ({rule.citation}; {rule.status})")
    if program.delay:
        cap = program.delay.cap.describe() if program.delay.cap else "none"
        print(f"delay of repair: until shutdown={program.delay.until_shutdown}, cap {cap}  "
              f"({program.delay.citation}; {program.delay.status})")
        parts = program.delay.parts
        if parts:
            print(f"delay of repair for parts: {parts.order.describe()}; {parts.repair.describe()}  "
                  f"({parts.citation}; {parts.status})")
    if program.survey_records:
        r = program.survey_records
        print(f"survey records: {', '.join(r.value)}  ({r.citation}; {r.status})")
    if program.annual_report:
        for what, cited in (("per site", program.annual_report.site_fields),
                            ("per survey", program.annual_report.survey_fields),
                            ("per leak", program.annual_report.leak_fields)):
            if cited is None:
                continue
            print(f"annual report fields {what}: {', '.join(cited.value)}  ({cited.citation}; {cited.status})")
    else:
        print("annual report fields: none listed (reports use plumebook's default columns)")


def _action(kind: str, on, **extra):
    from fieldapp.core.enums import ActionKind
    from fieldapp.core.records import Action

    return Action(id=str(uuid.uuid4()), leak_id="calc", kind=ActionKind(kind), done_on=on, actor="calculator",
                  reason=extra.pop("reason", ""), **extra)


def cmd_deadlines(args: argparse.Namespace) -> int:
    from fieldapp import catalog
    from fieldapp.core.enums import DelayKind, SurveyMethod
    from fieldapp.core.fields import FieldProblem, ValidationError
    from fieldapp.core.lifecycle import deadlines, summarize

    program = catalog.program(args.program)
    detected = parse_day(args.detected, "detected")
    ppm = parse_number(args.ppm, "ppm", 0, MAX_PPM)
    if args.shutdown is not None and args.delayed is None:
        raise ValidationError([catalog.FieldProblem("shutdown", "needs --delayed (the shutdown date belongs to a "
                                                    "delay of repair)")])
    actions = []
    if args.first_attempt is not None:
        actions.append(_action("first_attempt", parse_day(args.first_attempt, "first-attempt"), seq=0))
    if (args.parts_ordered or args.parts_received) and args.delayed is None:
        raise ValidationError([FieldProblem("delayed", "is required with --parts-ordered or "
                                            "--parts-received (the date the delay of repair began)")])
    if (args.parts_ordered or args.parts_received) and (program.delay is None or program.delay.parts is None):
        raise ValidationError([FieldProblem("parts-ordered", f"program {program.id} has no delay of repair for "
                                            "parts; allowed: --shutdown")])
    if args.parts_received and not args.parts_ordered:
        raise ValidationError([FieldProblem("parts-ordered", "is required with --parts-received")])
    if args.delayed is not None:
        shutdown = parse_day(args.shutdown, "shutdown") if args.shutdown else None
        delayed = parse_day(args.delayed, "delayed")
        parts = {"delay_kind": DelayKind.PARTS} if args.parts_ordered else {}
        actions.append(_action("delay_of_repair", delayed, seq=1, reason="calculator", shutdown_on=shutdown,
                               **parts))
        for seq, (flag, name) in enumerate(((args.parts_ordered, "parts_ordered_on"),
                                            (args.parts_received, "parts_received_on")), start=2):
            if flag:
                on = parse_day(flag, name.replace("_on", "").replace("_", "-"))
                actions.append(_action("delay_of_repair", max(on, delayed), seq=seq, reason="calculator",
                                       delay_kind=DelayKind.PARTS, **{name: on}))
    if args.repaired is not None:
        actions.append(_action("repaired", parse_day(args.repaired, "repaired"), seq=4))
    if args.resurvey_failed is not None:
        actions.append(_action("resurvey_failed", parse_day(args.resurvey_failed, "resurvey-failed"), seq=5))
    method = SurveyMethod(args.method) if args.method else program.primary_method
    facts, problems = summarize(detected, actions, ppm, method)
    if problems:
        raise ValidationError(problems)
    items = [{"kind": d.kind, "due": d.due.isoformat() if d.due else None, "rule": d.rule,
              "citation": d.citation, "status": d.status,
              "done_on": d.done_on.isoformat() if d.done_on else None}
             for d in deadlines(program, facts, catalog.holidays_for(program))]
    if args.json:
        emit_json({"program": program.id, "tier": program.tier_for(ppm, method).label,
                   "method": method.value, "items": items})
    else:
        emit_table(items, ("kind", "due", "done_on", "rule", "citation", "status"))
    return 0


def cmd_window(args: argparse.Namespace) -> int:
    from fieldapp import catalog
    from fieldapp.core.enums import SiteKind, SurveyMethod
    from fieldapp.core.fields import FieldProblem, FieldValueError, ValidationError, enum_of
    from fieldapp.core.windows import PastSurvey, WindowError, next_window

    program = catalog.program(args.program)
    try:
        kind = enum_of(SiteKind)(args.site_kind)
    except FieldValueError as exc:
        raise ValidationError([FieldProblem("site-kind", str(exc))]) from None
    method = SurveyMethod(args.inspection) if args.inspection else None
    past = [PastSurvey(parse_day(args.last, "last"))] if args.last is not None else []
    startup = parse_day(args.startup, "startup") if args.startup is not None else None
    try:
        window = next_window(program, kind, method, past, startup)
    except WindowError as exc:
        raise ValidationError([FieldProblem("site-kind", str(exc))]) from None
    result = {"earliest": window.earliest.isoformat(), "latest": window.latest.isoformat(),
              "method": window.method.value, "rule": window.rule, "citation": window.citation,
              "status": window.status, "basis": window.basis}
    if args.json:
        emit_json(result)
    else:
        emit_table([result], ("earliest", "latest", "method", "rule", "citation", "status"))
    return 0


def cmd_due(args: argparse.Namespace) -> int:
    import sys

    from fieldapp.store.due import due_list
    from fieldapp.store.reads import resolve_site
    from sync.tables import DUE_COLUMNS, due_rows, to_csv

    as_of = parse_day(args.as_of, "as-of") if args.as_of is not None else datetime.now(UTC).date()
    within = parse_whole(args.within, "within", 0, MAX_WITHIN_DAYS)
    required_text(args.site, "site")
    store = open_store(args)
    site_id = resolve_site(store, args.site)["id"] if args.site is not None else None
    items, problems = due_list(store, as_of, site_id, within)
    rows = due_rows(items, as_of)
    for problem in problems:
        print(f"plumebook: warning: {problem}", file=sys.stderr)
    if args.json:
        emit_json({"as_of": as_of.isoformat(), "items": rows, "problems": problems})
    elif args.csv:
        sys.stdout.write(to_csv(rows, DUE_COLUMNS))
    else:
        for r in rows:
            r["hazard"] = "HAZARD" if r["hazard"] else ""
            r["repeat leaker"] = "REPEAT LEAKER" if r["repeat_leaker"] else ""
        emit_table(rows, ("standing", "due", "days_left", "kind", "site", "method", "tag", "hazard",
                          "repeat leaker", "rule"))
        if any(r["hazard"] for r in rows):
            print("HAZARD: the leak may be large, near ignition or carry H2S; follow site procedures, the permit "
                  "and local codes, and wear a personal gas monitor before approaching.")
    return 0
