"""The ``plumebook`` command: parse, call one function, print.

Exit status: 0 on success, 2 on bad input (one line on stderr naming the field), 1 when a check
(``verify``) finds a problem.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from collections.abc import Callable, Sequence
from datetime import date
from pathlib import Path
from typing import Any

from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.store.base import NotFoundError

Handler = Callable[[argparse.Namespace], int]
COMMANDS: dict[str, Handler] = {}


def default_db() -> Path:
    """PLUMEBOOK_DB, or plumebook.db in the user's data folder."""
    if os.environ.get("PLUMEBOOK_DB"):
        return Path(os.environ["PLUMEBOOK_DB"])
    from platformdirs import user_data_dir

    return Path(user_data_dir("plumebook", appauthor=False)) / "plumebook.db"


def open_store(args: argparse.Namespace):
    """The store named by --db."""
    from fieldapp.store.base import Store

    return Store(args.db, actor=args.actor)


def parse_day(text: str, field: str = "date") -> date:
    """A YYYY-MM-DD argument."""
    try:
        return date.fromisoformat(text)
    except ValueError:
        raise ValidationError([FieldProblem(field, f"{text!r} is not a date; write YYYY-MM-DD")]) from None


def emit_json(value: Any) -> None:
    """Print JSON with dates as ISO text."""
    print(json.dumps(value, indent=2, default=str, ensure_ascii=False))


def emit_table(rows: Sequence[dict[str, Any]], columns: Sequence[str]) -> None:
    """Print rows as an aligned text table."""
    if not rows:
        print("(none)")
        return
    cells = [[("" if r.get(c) is None else str(r.get(c))) for c in columns] for r in rows]
    widths = [min(48, max(len(c), *(len(row[i]) for row in cells))) for i, c in enumerate(columns)]
    print("  ".join(c.ljust(w) for c, w in zip(columns, widths, strict=True)).rstrip())
    for row in cells:
        print("  ".join(v[:w].ljust(w) for v, w in zip(row, widths, strict=True)).rstrip())


def build_parser() -> argparse.ArgumentParser:
    """The full argument parser (commands register in fieldapp.commands)."""
    from fieldapp import commands

    parser = argparse.ArgumentParser(prog="plumebook", description="Field records for OGI leak surveys.")
    parser.add_argument("--db", type=Path, default=None, help="store file (default: $PLUMEBOOK_DB or the "
                        "user data folder)")
    parser.add_argument("--actor", default=os.environ.get("PLUMEBOOK_ACTOR", os.environ.get("USER", "")),
                        help="who is acting (journal entries carry it)")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    commands.register(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command; returns the exit status."""
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:
        return int(exc.code or 0)
    if args.db is None:
        args.db = default_db()
    try:
        return int(args.handler(args) or 0)
    except ValidationError as exc:
        print(f"plumebook: {exc}", file=sys.stderr)
        return 2
    except NotFoundError as exc:
        print(f"plumebook: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:
        return 0


if __name__ == "__main__":
    sys.exit(main())
