"""Atomic file writes: a reader sees the old file or the complete new one, never a part."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

TEMP_PREFIX = ".plumebook-tmp-"


def fsync_dir(folder: Path) -> None:
    """Flush a folder's entries (the rename) to disk where the OS allows it."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def write_bytes(path: Path | str, data: bytes) -> Path:
    """Write bytes to a temp file in the same folder, fsync it, rename it over ``path``."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=TEMP_PREFIX, dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    fsync_dir(path.parent)
    return path


def write_text(path: Path | str, text: str) -> Path:
    """Write UTF-8 text atomically."""
    return write_bytes(path, text.encode("utf-8"))
