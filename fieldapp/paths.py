"""Checks of the files a command reads and writes, each refused with one line naming the option and path.

Overwrite rule (the same for every ``--out``): an output file that exists is replaced atomically,
so the old file stays whole until the new one is complete; a folder where a file is expected, a
file where a folder is expected, a missing or unwritable parent folder are refused before any
work is done. ``export csv --out DIR`` creates DIR (one level) if missing and replaces its four
files the same way.
"""

from __future__ import annotations

import os
from pathlib import Path

from fieldapp.core.fields import FieldProblem, ValidationError


def _refuse(field: str, path: Path | str, message: str) -> ValidationError:
    return ValidationError([FieldProblem(field, f"{path}: {message}")])


def _writable_folder(folder: Path, field: str, shown: Path) -> None:
    if not folder.exists():
        raise _refuse(field, shown, f"folder {folder} does not exist; create it first or choose another place")
    if not folder.is_dir():
        raise _refuse(field, shown, f"{folder} is not a folder")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise _refuse(field, shown, f"folder {folder} is not writable; choose a folder you may write to")


def output_file(path: Path | str, field: str = "out") -> Path:
    """A file the command will write (replacing an existing file atomically); refused before any work."""
    path = Path(path)
    if str(path) in ("", "."):
        raise _refuse(field, path, "name a file to write")
    if path.is_dir():
        raise _refuse(field, path, "is a folder; name a file inside it")
    if path.exists() and not path.is_file():
        raise _refuse(field, path, "is not a regular file")
    _writable_folder(path.parent if str(path.parent) else Path("."), field, path)
    return path


def output_folder(path: Path | str, field: str = "out") -> Path:
    """A folder the command will write files into; created (one level) if missing."""
    path = Path(path)
    if path.exists() and not path.is_dir():
        raise _refuse(field, path, "is a file; name a folder (it is created if missing)")
    if not path.exists():
        _writable_folder(path.parent if str(path.parent) else Path("."), field, path)
        return path
    if not os.access(path, os.W_OK | os.X_OK):
        raise _refuse(field, path, "folder is not writable; choose a folder you may write to")
    return path


def input_file(path: Path | str, field: str = "file") -> Path:
    """A file the command will read: it exists, is a regular file and is readable."""
    path = Path(path)
    if not path.exists():
        raise _refuse(field, path, "no such file")
    if path.is_dir():
        raise _refuse(field, path, "is a folder; name a file")
    if not path.is_file():
        raise _refuse(field, path, "is not a regular file")
    if not os.access(path, os.R_OK):
        raise _refuse(field, path, "cannot be read (permission denied)")
    return path


def store_file(path: Path | str, field: str = "db") -> Path:
    """The store named by --db: a regular file or a new name in an existing (or creatable) folder."""
    path = Path(path)
    if str(path) == ":memory:":
        return path
    if path.is_dir():
        raise _refuse(field, path, "is a folder; name the store file (for example plumebook.db)")
    if path.exists() and not path.is_file():
        raise _refuse(field, path, "is not a regular file")
    return path
