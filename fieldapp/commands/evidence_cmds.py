"""Commands for evidence: evidence add, evidence list, verify."""

from __future__ import annotations

import argparse

from fieldapp.cmdkit import emit_json, emit_table, open_store, parse_number
from fieldapp.core.fields import FieldProblem, ValidationError


def register(sub: argparse._SubParsersAction) -> None:
    """Add the evidence commands."""
    p = sub.add_parser("evidence", help="photos and clips of leaks")
    what = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    a = what.add_parser("add", help="add photos or clips to a leak")
    a.add_argument("--leak", required=True, help="leak id, TAG or TAG@YYYY-MM-DD")
    a.add_argument("files", nargs="+")
    a.add_argument("--marker", action="append", default=[], help="X,Y in 0..1 from the top-left (repeatable)")
    a.add_argument("--label", default="", help="marker label (default: the component tag)")
    a.set_defaults(handler=cmd_add)
    li = what.add_parser("list", help="photos and clips of a leak")
    li.add_argument("--leak", required=True, help="leak id, TAG or TAG@YYYY-MM-DD")
    li.add_argument("--json", action="store_true")
    li.set_defaults(handler=cmd_list)
    v = sub.add_parser("verify", help="re-hash every original and check the database")
    v.set_defaults(handler=cmd_verify)


def _markers(texts: list[str], label: str) -> list[tuple[float, float, str]]:
    out = []
    for text in texts:
        parts = text.split(",")
        if len(parts) != 2:
            raise ValidationError([FieldProblem("marker", f"{text[:40]!r}: write X,Y with numbers 0..1")])
        x, y = (parse_number(v, "marker", 0, 1) for v in parts)
        out.append((x, y, label))
    return out


def _leak(store, key: str) -> dict:
    """A leak by id, TAG (its open leak, or its only one) or TAG@YYYY-MM-DD (``fieldapp.store.names``)."""
    from fieldapp.store.names import resolve_leak

    return resolve_leak(store, key, field="leak", closed_too=True)


def cmd_add(args: argparse.Namespace) -> int:
    from fieldapp.evidence.ingest import add_files

    store = open_store(args)
    leak = _leak(store, args.leak)
    markers = _markers(args.marker, args.label or leak["tag"])
    for row in add_files(store, leak["id"], args.files, markers, args.actor):
        print(f"added {row['media_kind']} {row['original_name']} sha256 {row['sha256']} as {row['id']}")
    return 0


def cmd_list(args: argparse.Namespace) -> int:
    from fieldapp.evidence.ingest import media_for

    store = open_store(args)
    rows = media_for(store, _leak(store, args.leak)["id"])
    if args.json:
        emit_json(rows)
    else:
        for r in rows:
            r["markers"] = len(r["markers"])
        emit_table(rows, ("added_at", "media_kind", "original_name", "width", "height", "captured_at", "markers",
                          "sha256"))
    return 0


def cmd_verify(args: argparse.Namespace) -> int:
    import sqlite3

    from fieldapp.evidence.verify import verify
    from fieldapp.paths import store_file
    from fieldapp.store.schema import SchemaTooNewError

    if not store_file(args.db).is_file():
        raise ValidationError([FieldProblem("db", f"{args.db}: no store there; name an existing store file")])
    try:
        store = open_store(args)
    except SchemaTooNewError:
        raise
    except sqlite3.DatabaseError as exc:
        print(f"PROBLEM: database: {args.db}: cannot be opened ({exc}); restore it from a backup or a bundle")
        print("checked 0 media records: 1 problem(s)")
        return 1
    report = verify(store)
    for note in report.notes:
        print(f"note: {note}")
    for problem in report.problems:
        print(f"PROBLEM: {problem}")
    verdict = "all good" if report.ok else f"{len(report.problems)} problem(s)"
    print(f"checked {report.checked} media records: {verdict}")
    return 0 if report.ok else 1
