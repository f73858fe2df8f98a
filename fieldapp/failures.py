"""The command's error boundary: every expected failure becomes one line naming the field or path.

Exit status: 0 success; 1 ``verify`` found a problem; 2 bad input or a broken environment (bad
value, missing or unreadable file, unwritable output, full disk, damaged or locked store, store of
a newer schema version); 3 an unexpected internal error, with the full trace written to a file
whose path the line gives (never a bare traceback on the terminal).
"""

from __future__ import annotations

import errno
import os
import sqlite3
import tempfile
import time
import traceback
from pathlib import Path

from fieldapp.core.fields import DATE_RANGE, ValidationError
from fieldapp.store.base import NotFoundError
from fieldapp.store.schema import SchemaTooNewError

EXIT_BAD_INPUT = 2
EXIT_INTERNAL = 3
MAX_PROBLEMS_SHOWN = 5
MAX_LINE = 600


def one_line(text: str) -> str:
    """A message made printable on one terminal line: line breaks and control characters escaped,
    bytes that are not UTF-8 shown as \\x.. escapes, at most ``MAX_LINE`` characters."""
    try:  # bytes a Linux command line could not decode arrive surrogate-escaped: show them as \xNN
        raw = text.encode("utf-8", "surrogateescape")
    except UnicodeEncodeError:
        raw = text.encode("utf-8", "backslashreplace")
    text = raw.decode("utf-8", "backslashreplace")
    text = "".join(ch if ch.isprintable() else ch.encode("unicode_escape").decode("ascii") for ch in text)
    return text if len(text) <= MAX_LINE else f"{text[:MAX_LINE - 3]}..."


def _validation(exc: ValidationError) -> str:
    shown = [str(p) for p in exc.problems[:MAX_PROBLEMS_SHOWN]]
    more = len(exc.problems) - len(shown)
    return "; ".join(shown) + (f"; and {more} more problem(s)" if more > 0 else "")


def _database(exc: sqlite3.Error, db: Path | None) -> str:
    text = str(exc)
    where = f"db: {db}: " if db else "db: "
    low = text.lower()
    if "locked" in low or "busy" in low:
        return (f"{where}the store is locked by another program writing to it; wait for it to finish (or close "
                "it) and run the command again")
    if "disk is full" in low or "database or disk is full" in low:
        return f"{where}the disk is full; free some space and run the command again (nothing was written)"
    if "readonly" in low or "read-only" in low:
        return f"{where}the store or its folder is read-only; use a writable copy or fix the permissions"
    if "unable to open" in low:
        return f"{where}cannot open the store file; check that its folder exists and may be written to"
    if "not a database" in low or "malformed" in low or "corrupt" in low or type(exc) is sqlite3.DatabaseError:
        return (f"{where}the store is damaged or is not a plumebook store ({text}); run `plumebook verify`, "
                "restore the file from a backup")
    return f"{where}{text}"


def _os_error(exc: OSError, db: Path | None) -> str:
    name = exc.filename if exc.filename is not None else db
    where = f"{name}: " if name is not None else ""
    code = exc.errno
    if code in (errno.ENOSPC, errno.EDQUOT):
        return f"{where}the disk is full; free some space and run the command again (no record was written)"
    if code in (errno.EACCES, errno.EPERM):
        return f"{where}permission denied; choose a place you may write to or fix the permissions"
    if code == errno.EROFS:
        return f"{where}the file system is read-only; choose a writable place"
    if code == errno.EISDIR:
        return f"{where}is a folder; name a file"
    if code == errno.ENOTDIR:
        return f"{where}a part of the path is not a folder"
    if code == errno.ENOENT:
        return f"{where}no such file or folder"
    return f"{where}{exc.strerror or exc}"


def describe(exc: BaseException, db: Path | None = None) -> str | None:
    """The one line for an expected failure, or None when the failure is unexpected (a bug)."""
    if isinstance(exc, ValidationError):
        return _validation(exc)
    if isinstance(exc, NotFoundError):
        return str(exc)
    if isinstance(exc, SchemaTooNewError):
        return f"db: {db}: {exc}" if db else str(exc)
    if isinstance(exc, sqlite3.OperationalError) or type(exc) is sqlite3.DatabaseError:
        return _database(exc, db)
    if isinstance(exc, OSError):
        return _os_error(exc, db)
    if isinstance(exc, OverflowError):
        return f"a date or number is outside the supported range (dates {DATE_RANGE}); check the values given"
    if isinstance(exc, UnicodeError):
        return f"text that is not valid UTF-8 ({exc.__class__.__name__}); retype the value or rename the file"
    return None


def write_trace(exc: BaseException) -> Path | None:
    """Write the full trace of an unexpected error to a file; its path, or None if it cannot be written."""
    folder = Path(os.environ.get("PLUMEBOOK_TRACE_DIR") or tempfile.gettempdir())
    path = folder / f"plumebook-trace-{time.strftime('%Y%m%d-%H%M%S')}-{os.getpid()}.txt"
    try:
        path.write_text("".join(traceback.format_exception(exc)), encoding="utf-8", errors="backslashreplace")
    except OSError:
        return None
    return path


def bad_argument(argv: list[str]) -> str | None:
    """A line for the first argument that is not valid UTF-8 (surrogate-escaped bytes), else None."""
    for position, arg in enumerate(argv, start=1):
        try:
            arg.encode("utf-8")
        except UnicodeEncodeError:
            return (f"argument {position} ({one_line(arg)}): is not valid UTF-8 text; retype it, or rename the "
                    "file to a UTF-8 name")
    return None
