"""Commands for evidence: evidence add, evidence list, verify."""

from __future__ import annotations

import argparse

from fieldapp.cli import emit_json, emit_table, open_store
from fieldapp.core.fields import FieldProblem, ValidationError


def register(sub: argparse._SubParsersAction) -> None:
    """Add the evidence commands."""
    p = sub.add_parser("evidence", help="photos and clips of leaks")
    what = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    a = what.add_parser("add", help="add photos or clips to a leak")
    a.add_argument("--leak", required=True)
    a.add_argument("files", nargs="+")
    a.add_argument("--marker", action="append", default=[], help="X,Y in 0..1 from the top-left (repeatable)")
    a.add_argument("--label", default="", help="marker label (default: the component tag)")
    a.set_defaults(handler=cmd_add)
    li = what.add_parser("list", help="photos and clips of a leak")
    li.add_argument("--leak", required=True)
    li.add_argument("--json", action="store_true")
    li.set_defaults(handler=cmd_list)
    v = sub.add_parser("verify", help="re-hash every original and check the database")
    v.set_defaults(handler=cmd_verify)


def _markers(texts: list[str], label: str) -> list[tuple[float, float, str]]:
    out = []
    for text in texts:
        try:
            x, y = (float(v) for v in text.split(","))
        except ValueError:
            raise ValidationError([FieldProblem("marker", f"{text!r}: write X,Y with numbers 0..1")]) from None
        out.append((x, y, label))
    return out


def cmd_add(args: argparse.Namespace) -> int:
    from fieldapp.evidence.ingest import add_file

    store = open_store(args)
    leak = store.rows("SELECT c.tag FROM leaks l JOIN components c ON c.id = l.component_id WHERE l.id = ?",
                      (args.leak,))
    label = args.label or (leak[0]["tag"] if leak else "")
    markers = _markers(args.marker, label)
    for name in args.files:
        row = add_file(store, args.leak, name, markers, args.actor)
        print(f"added {row['media_kind']} {row['original_name']} sha256 {row['sha256']} as {row['id']}")
    return 0


def cmd_list(args: argparse.Namespace) -> int:
    from fieldapp.evidence.ingest import media_for

    rows = media_for(open_store(args), args.leak)
    if args.json:
        emit_json(rows)
    else:
        for r in rows:
            r["markers"] = len(r["markers"])
        emit_table(rows, ("added_at", "media_kind", "original_name", "width", "height", "captured_at", "markers",
                          "sha256"))
    return 0


def cmd_verify(args: argparse.Namespace) -> int:
    from fieldapp.evidence.verify import verify

    report = verify(open_store(args))
    for note in report.notes:
        print(f"note: {note}")
    for problem in report.problems:
        print(f"PROBLEM: {problem}")
    verdict = "all good" if report.ok else f"{len(report.problems)} problem(s)"
    print(f"checked {report.checked} media records: {verdict}")
    return 0 if report.ok else 1
