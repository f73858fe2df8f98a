"""Commands for filings: export csv, report survey, report leak, report period."""

from __future__ import annotations

import argparse
from pathlib import Path

from fieldapp.cmdkit import open_store, parse_day, progress, required_text, steps
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.paths import output_file, output_folder


def register(sub: argparse._SubParsersAction) -> None:
    """Add the export and report commands."""
    p = sub.add_parser("export", help="data files for filings")
    what = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    c = what.add_parser("csv", help="leaks.csv, surveys.csv, actions.csv, components.csv")
    c.add_argument("--out", required=True, type=Path, help="folder")
    c.add_argument("--from", dest="start")
    c.add_argument("--to", dest="end")
    c.add_argument("--site")
    c.add_argument("--bom", action="store_true",
                   help="start each file with a UTF-8 byte order mark, so spreadsheets on Windows read ° and § right")
    c.set_defaults(handler=cmd_csv)
    p = sub.add_parser("report", help="PDF reports")
    what = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    s = what.add_parser("survey", help="survey report")
    s.add_argument("survey_id", metavar="SURVEY", help="survey id, or SITE@YYYY-MM-DD (the survey started that "
                   "local day at the site)")
    s.add_argument("--out", required=True, type=Path)
    s.set_defaults(handler=cmd_survey)
    k = what.add_parser("leak", help="one leak's whole record for an auditor: fields, component, deadlines with "
                        "citations, who did what, timeline, photos, certification")
    k.add_argument("leak", metavar="LEAK", help="leak id, TAG (its open leak, or its only one) or TAG@YYYY-MM-DD "
                   "(the leak found that local day)")
    k.add_argument("--out", required=True, type=Path, help="PDF file to write")
    k.add_argument("--site", help="site id or name, when the tag is used at several sites")
    k.add_argument("--as-of", help="date YYYY-MM-DD: the record as it stood at the end of that day (UTC), "
                   "deadlines judged that day")
    k.set_defaults(handler=cmd_leak)
    r = what.add_parser("period", help="period summary for filings")
    r.add_argument("--from", dest="start", required=True)
    r.add_argument("--to", dest="end", required=True)
    r.add_argument("--site")
    r.add_argument("--out", required=True, type=Path)
    r.set_defaults(handler=cmd_period)


def _site(store, key):
    from fieldapp.store.reads import resolve_site

    return resolve_site(store, key)["id"] if key is not None else None


def _period(args: argparse.Namespace):
    """--from and --to as dates (each optional unless the parser requires it); --to must not be before --from."""
    start = parse_day(args.start, "from") if args.start is not None else None
    end = parse_day(args.end, "to") if args.end is not None else None
    if start and end and end < start:
        raise ValidationError([FieldProblem("to", f"must not be before --from ({start}); got {end}")])
    return start, end


def cmd_csv(args: argparse.Namespace) -> int:
    from sync.export import export_csv

    start, end = _period(args)
    required_text(args.site, "site")
    output_folder(args.out, "out")
    store = open_store(args)
    with steps("writing files") as tick:
        paths = export_csv(store, args.out, start, end, _site(store, args.site), bom=args.bom, progress=tick)
    for path in paths:
        print(path)
    return 0


def cmd_survey(args: argparse.Namespace) -> int:
    from fieldapp.store.names import resolve_survey
    from sync.pdf_survey import write_survey_pdf

    key = required_text(args.survey_id, "survey")
    output_file(args.out, "out")
    store = open_store(args)
    survey = resolve_survey(store, key, "survey")
    leaks = store.rows("SELECT COUNT(*) AS n FROM leaks WHERE survey_id = ? AND deleted = 0", (survey["id"],))[0]["n"]
    with progress(3 * leaks, "survey report steps") as bar:
        path = write_survey_pdf(store, survey["id"], args.out, bar.update)
    print(path)
    return 0


def cmd_leak(args: argparse.Namespace) -> int:
    from fieldapp.store.names import resolve_leak
    from sync.pdf_leak import steps, write_leak_pdf

    key = required_text(args.leak, "leak")
    as_of = parse_day(args.as_of, "as-of") if args.as_of is not None else None
    required_text(args.site, "site")
    output_file(args.out, "out")
    store = open_store(args)
    leak = resolve_leak(store, key, _site(store, args.site), "leak", closed_too=True)
    with progress(steps(store, leak["id"]), "leak record steps") as bar:
        path = write_leak_pdf(store, leak["id"], args.out, as_of, bar.update)
    print(path)
    return 0


def cmd_period(args: argparse.Namespace) -> int:
    from sync.pdf_period import write_period_pdf

    start, end = _period(args)
    required_text(args.site, "site")
    output_file(args.out, "out")
    store = open_store(args)
    site_id = _site(store, args.site)
    with progress(None, "period summary leaks") as bar:  # a count: the period's leaks are found while reading
        path = write_period_pdf(store, start, end, args.out, site_id, progress=bar.update)
    print(path)
    return 0
