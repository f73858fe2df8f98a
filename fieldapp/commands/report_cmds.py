"""Commands for filings: export csv, report survey, report period."""

from __future__ import annotations

import argparse
from pathlib import Path

from fieldapp.cli import open_store, parse_day


def register(sub: argparse._SubParsersAction) -> None:
    """Add the export and report commands."""
    p = sub.add_parser("export", help="data files for filings")
    what = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    c = what.add_parser("csv", help="leaks.csv, surveys.csv, actions.csv, components.csv")
    c.add_argument("--out", required=True, type=Path, help="folder")
    c.add_argument("--from", dest="start")
    c.add_argument("--to", dest="end")
    c.add_argument("--site")
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

    return resolve_site(store, key)["id"] if key else None


def cmd_csv(args: argparse.Namespace) -> int:
    from sync.export import export_csv

    store = open_store(args)
    start = parse_day(args.start, "from") if args.start else None
    end = parse_day(args.end, "to") if args.end else None
    for path in export_csv(store, args.out, start, end, _site(store, args.site)):
        print(path)
    return 0


def cmd_survey(args: argparse.Namespace) -> int:
    from sync.pdf_survey import write_survey_pdf

    print(write_survey_pdf(open_store(args), args.survey_id, args.out))
    return 0


def cmd_period(args: argparse.Namespace) -> int:
    from fieldapp.core.fields import FieldProblem, ValidationError
    from sync.pdf_period import write_period_pdf

    store = open_store(args)
    start, end = parse_day(args.start, "from"), parse_day(args.end, "to")
    if end < start:
        raise ValidationError([FieldProblem("to", "must not be before --from")])
    print(write_period_pdf(store, start, end, args.out, _site(store, args.site)))
    return 0
