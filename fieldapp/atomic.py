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


def current_umask() -> int:
    """The process umask (read from /proc where it can be, so the umask is never changed meanwhile)."""
    try:
        for line in Path("/proc/self/status").read_text().splitlines():
            if line.startswith("Umask:"):
                return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    old = os.umask(0o022)
    os.umask(old)
    return old


def write_bytes(path: Path | str, data: bytes, mode: int | None = None) -> Path:
    """Write bytes to a temp file in the same folder, fsync it, rename it over ``path``.

    The file gets ``mode``, or by default the permissions a plain ``open()`` would give it (0666 less the
    umask: 0644 under umask 022), so outputs on a shared folder are readable as usual. The temp file of
    ``tempfile.mkstemp`` is 0600; it is set before the rename, so no reader ever sees other permissions.
    Secrets (device keys) pass ``mode=0o600``.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=TEMP_PREFIX, dir=path.parent)
    try:
        os.fchmod(fd, (0o666 & ~current_umask()) if mode is None else mode)
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
