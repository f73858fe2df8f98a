"""The media folder beside a store: originals named by SHA-256, derivatives rebuilt on demand.

Layout::

    <store>-media/originals/ab/abcdef...            original bytes, never altered
    <store>-media/derived/ab/abcdef...-thumb.jpg    thumbnail (rebuilt if missing)
    <store>-media/derived/ab/abcdef...-report.jpg   report-size copy
    <store>-media/derived/ab/abcdef...-marked-<hash of markers>.jpg

Originals are written to a temp file in the same folder, fsynced, and renamed into place, before the
row that references them commits. Temp files left by a crash are removed by ``clean_temp`` once
they are older than ``TEMP_MIN_AGE_S`` (an hour): a younger one may belong to an ingest that is
still running, so it is left alone.
"""

from __future__ import annotations

import hashlib
import os
import time
from collections.abc import Iterator
from pathlib import Path

from fieldapp.atomic import TEMP_PREFIX, fsync_dir

TEMP_MIN_AGE_S = 3600


class Library:
    """Media folder of one store."""

    def __init__(self, store_path: Path):
        self.root = store_path.parent / f"{store_path.stem}-media"
        self.originals = self.root / "originals"
        self.derived = self.root / "derived"

    def original(self, sha256: str) -> Path:
        """Path of an original by its hash."""
        return self.originals / sha256[:2] / sha256

    def derivative(self, sha256: str, name: str) -> Path:
        """Path of a derivative (``thumb``, ``report`` or ``marked-…``)."""
        return self.derived / sha256[:2] / f"{sha256}-{name}.jpg"

    def put(self, data: bytes, sha256: str) -> Path:
        """Store original bytes under their hash (temp file, fsync, rename); a no-op when already there."""
        target = self.original(sha256)
        if target.exists() and target.stat().st_size == len(data):
            return target
        target.parent.mkdir(parents=True, exist_ok=True)
        tmp = target.parent / f"{TEMP_PREFIX}{sha256[:16]}-{os.getpid()}"
        try:
            with open(tmp, "wb") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
            os.replace(tmp, target)
        except BaseException:  # a full disk or a kill of the thread: no temp file left behind
            tmp.unlink(missing_ok=True)
            raise
        fsync_dir(target.parent)
        return target

    def clean_temp(self, min_age_s: float = TEMP_MIN_AGE_S, now: float | None = None) -> tuple[int, int]:
        """Remove temp files older than ``min_age_s`` left by an interrupted write.

        Returns (removed, left alone because younger: possibly a write in progress).
        """
        now = time.time() if now is None else now
        removed = young = 0
        for folder in (self.originals, self.derived):
            if folder.is_dir():
                for tmp in folder.rglob(f"{TEMP_PREFIX}*"):
                    try:
                        if now - tmp.stat().st_mtime < min_age_s:
                            young += 1
                            continue
                        tmp.unlink()
                    except FileNotFoundError:  # renamed into place or removed meanwhile
                        continue
                    removed += 1
        return removed, young

    def stored_originals(self) -> Iterator[Path]:
        """Every complete original file in the folder (temp files left out)."""
        if self.originals.is_dir():
            for path in self.originals.glob("??/*"):
                if not path.name.startswith(TEMP_PREFIX) and path.is_file():
                    yield path


def sha256_file(path: Path) -> str:
    """SHA-256 of a file, read in 1 MiB blocks."""
    digest = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()
