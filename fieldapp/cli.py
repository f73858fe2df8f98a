"""The ``plumebook`` command: parse, call one function, print.

Exit status: 0 on success, 2 on bad input or a broken environment (one line on stderr naming the
field or path and what to do), 1 when a check (``verify``) finds a problem, 3 on an unexpected
internal error (one line giving the file the full trace was written to). See ``fieldapp.failures``.
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

from fieldapp.core.fields import (
    FieldProblem,
    FieldValueError,
    ValidationError,
    has_control,
    is_blank,
    iso_date,
    number,
)

Handler = Callable[[argparse.Namespace], int]
COMMANDS: dict[str, Handler] = {}


def default_db() -> Path:
    """PLUMEBOOK_DB, or plumebook.db in the user's data folder."""
    if os.environ.get("PLUMEBOOK_DB"):
        return Path(os.environ["PLUMEBOOK_DB"])
    from platformdirs import user_data_dir

    return Path(user_data_dir("plumebook", appauthor=False)) / "plumebook.db"


def open_store(args: argparse.Namespace):
    """The store named by --db (a folder or a non-file there is refused with one line).

    Only commands that set ``creates_store`` (init, demo, app, bundle merge) make a new store; the
    others refuse a --db that does not exist, so a mistyped path never reads as an empty store.
    """
    from fieldapp.paths import store_file
    from fieldapp.store.base import Store

    path = store_file(args.db)
    if not getattr(args, "creates_store", False) and str(path) != ":memory:" and not path.exists():
        raise ValidationError([FieldProblem("db", f"{path}: no store there; check --db, or create one with "
                                            "`plumebook init`")])
    return Store(path, actor=args.actor)


def parse_day(text: str, field: str = "date") -> date:
    """A YYYY-MM-DD argument inside the supported dates (``fieldapp.core.fields.DATE_RANGE``)."""
    try:
        return iso_date(text)
    except FieldValueError as exc:
        raise ValidationError([FieldProblem(field, str(exc))]) from None


def parse_number(text: str | None, field: str, low: float | None = 0.0, high: float | None = None) -> float | None:
    """A finite number argument inside [low, high] (None when not given; nan, inf refused)."""
    if text is None:
        return None
    try:
        return number(low, high)(text)
    except FieldValueError as exc:
        raise ValidationError([FieldProblem(field, str(exc))]) from None


def parse_whole(text: str | None, field: str, low: int = 0, high: int = 2**63 - 1) -> int | None:
    """A whole-number argument inside [low, high] (None when not given)."""
    if text is None:
        return None
    raw = str(text).strip()
    if not raw.lstrip("-").isdigit() or len(raw) > 20 or not low <= int(raw) <= high:
        raise ValidationError([FieldProblem(field, f"{raw[:40]!r} is not allowed; write a whole number from "
                                            f"{low} to {high}")])
    return int(raw)


def required_text(text: str | None, field: str) -> str | None:
    """An optional text argument that, when given, must not be empty (None when not given)."""
    if text is not None and is_blank(text):
        raise ValidationError([FieldProblem(field, "is empty; give a value or leave the option out")])
    return text


def emit_json(value: Any) -> None:
    """Print JSON with dates as ISO text; NaN and infinity are never printed (ValueError, a bug)."""
    print(json.dumps(value, indent=2, default=str, ensure_ascii=False, allow_nan=False))


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


class Parser(argparse.ArgumentParser):
    """argparse with its errors on one line (usage is left to --help)."""

    def error(self, message: str):  # type: ignore[override]
        """One line naming the problem; exit 2."""
        from fieldapp.failures import one_line

        print(f"{self.prog}: {one_line(message)} (see {self.prog} --help)", file=sys.stderr)
        raise SystemExit(2)


def build_parser() -> argparse.ArgumentParser:
    """The full argument parser (commands register in fieldapp.commands)."""
    from fieldapp import commands

    parser = Parser(prog="plumebook", description="Field records for OGI leak surveys.")
    parser.add_argument("--db", type=Path, default=None, help="store file (default: $PLUMEBOOK_DB or the "
                        "user data folder)")
    parser.add_argument("--actor", default=os.environ.get("PLUMEBOOK_ACTOR", os.environ.get("USER", "")),
                        help="who is acting (journal entries carry it)")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    commands.register(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command inside the error boundary (``fieldapp.failures``); returns the exit status."""
    from fieldapp import failures

    argv = list(sys.argv[1:] if argv is None else argv)
    if problem := failures.bad_argument(argv):
        print(f"plumebook: {problem}", file=sys.stderr)
        return failures.EXIT_BAD_INPUT
    args = None
    try:
        parser = build_parser()
        try:
            args = parser.parse_args(argv)
        except SystemExit as exc:
            return exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 2)
        if args.db is None:
            args.db = default_db()
        if has_control(args.actor):
            raise ValidationError([FieldProblem("actor", "NUL, line breaks, tabs or other control characters are "
                                                "not allowed")])
        return int(args.handler(args) or 0)
    except BrokenPipeError:
        return 0
    except KeyboardInterrupt:
        print("plumebook: interrupted; nothing half-written was kept", file=sys.stderr)
        return 130
    except Exception as exc:  # the boundary: one line for every failure, never a bare traceback
        line = failures.describe(exc, getattr(args, "db", None))
        if line is not None:
            print(f"plumebook: {failures.one_line(line)}", file=sys.stderr)
            return failures.EXIT_BAD_INPUT
        trace = failures.write_trace(exc)
        where = f"full trace in {trace}" if trace else "the trace could not be written"
        print(f"plumebook: unexpected error ({failures.one_line(type(exc).__name__ + ': ' + str(exc))[:200]}); "
              f"{where}; please report it", file=sys.stderr)
        return failures.EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
