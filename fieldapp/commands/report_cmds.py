"""Commands for filings: export csv, report survey, report period."""

from __future__ import annotations

import argparse
from pathlib import Path

from fieldapp.cmdkit import open_store, parse_day, required_text, steps
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
    s.add_argument("survey_id")
    s.add_argument("--out", required=True, type=Path)
    s.set_defaults(handler=cmd_survey)
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
    from sync.pdf_survey import write_survey_pdf

    output_file(args.out, "out")
    print(write_survey_pdf(open_store(args), args.survey_id, args.out))
    return 0


def cmd_period(args: argparse.Namespace) -> int:
    from sync.pdf_period import write_period_pdf

    start, end = _period(args)
    required_text(args.site, "site")
    output_file(args.out, "out")
    store = open_store(args)
    print(write_period_pdf(store, start, end, args.out, _site(store, args.site)))
    return 0
