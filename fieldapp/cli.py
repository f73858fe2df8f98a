"""The ``plumebook`` command: parse, call one function, print.

Exit status: 0 on success, 2 on bad input or a broken environment (one line on stderr naming the
field or path and what to do), 1 when a check (``verify``) finds a problem, 3 on an unexpected
internal error (one line giving the file the full trace was written to). See ``fieldapp.failures``.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable, Sequence
from pathlib import Path

from fieldapp.cmdkit import (  # noqa: F401 - re-exported for callers of the old names
    default_db,
    emit_json,
    emit_table,
    open_store,
    parse_day,
    parse_number,
    parse_whole,
    required_text,
)
from fieldapp.core.fields import FieldProblem, ValidationError, has_control

Handler = Callable[[argparse.Namespace], int]
COMMANDS: dict[str, Handler] = {}


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
    parser.add_argument("--actor", default="", help="who is acting (journal entries carry it); default: "
                        "$PLUMEBOOK_ACTOR, else the store's `plumebook config actor`, else the login name")
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
