"""Integrity check of a store and its media: every original re-hashed, the database checked."""

from __future__ import annotations

import sqlite3
import time
from dataclasses import dataclass, field

from fieldapp.evidence.ingest import library
from fieldapp.evidence.library import TEMP_MIN_AGE_S, sha256_file
from fieldapp.store.base import Store


@dataclass
class VerifyReport:
    """What ``verify`` found."""

    checked: int = 0
    problems: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def ok(self) -> bool:
        """True when nothing is wrong."""
        return not self.problems


def verify(store: Store, now: float | None = None) -> VerifyReport:
    """Re-hash every referenced original, run SQLite's integrity check and check journal continuity.

    Continuity is checked for this device's own entries; a tablet holds only the office's share of
    other devices' entries (sites and inventory), so gaps there are expected. A damaged database is
    reported as a problem, not raised. Temp files and unreferenced originals younger than
    ``TEMP_MIN_AGE_S`` are left alone (an ingest may be writing them right now); older temp files
    are removed, older unreferenced originals are reported.
    """
    report = VerifyReport()
    try:
        _verify(store, report, time.time() if now is None else now)
    except sqlite3.DatabaseError as exc:
        report.problems.append(f"database: {store.path}: damaged ({exc}); restore it from a backup or a bundle")
    return report


def _verify(store: Store, report: VerifyReport, now: float) -> None:
    lib = library(store)
    removed, young = lib.clean_temp(TEMP_MIN_AGE_S, now)
    if removed:
        report.notes.append(f"removed {removed} temp file(s) left by an interrupted write")
    if young:
        report.notes.append(f"left {young} temp file(s) younger than {TEMP_MIN_AGE_S // 60} minutes alone "
                            "(a write may be in progress)")
    result = store.conn.execute("PRAGMA integrity_check").fetchall()
    if [r[0] for r in result] != ["ok"]:
        report.problems += [f"database: {r[0]}" for r in result[:20]]
        return
    referenced = {r[0] for r in store.conn.execute("SELECT DISTINCT sha256 FROM media")}
    seen: dict[str, str] = {}
    for row in store.rows("SELECT id, leak_id, sha256, original_name FROM media WHERE deleted = 0 ORDER BY id"):
        report.checked += 1
        path = lib.original(row["sha256"])
        where = f"media {row['id']} (leak {row['leak_id']}, {row['original_name'] or 'unnamed'}) at {path}"
        if row["sha256"] in seen:
            if seen[row["sha256"]] != "ok":
                report.problems.append(f"{seen[row['sha256']]}: {where}")
            continue
        if not path.exists():
            seen[row["sha256"]] = "missing original"
        elif sha256_file(path) != row["sha256"]:
            seen[row["sha256"]] = "altered original (SHA-256 differs)"
        else:
            seen[row["sha256"]] = "ok"
        if seen[row["sha256"]] != "ok":
            report.problems.append(f"{seen[row['sha256']]}: {where}")
    for path in lib.stored_originals():
        if path.name in referenced:
            continue
        try:
            age = now - path.stat().st_mtime
        except FileNotFoundError:
            continue
        if age < TEMP_MIN_AGE_S:
            report.notes.append(f"original without a media record yet (a write may be in progress): {path}")
        else:
            report.problems.append(f"orphan original (no media record; left by an interrupted add): {path}; "
                                   "add it again with `plumebook evidence add` or move it away")
    fk = store.conn.execute("PRAGMA foreign_key_check").fetchall()
    report.problems += [f"database: row {r[1]} of {r[0]} points to a missing {r[2]}" for r in fk]
    for device, count, first, last in store.conn.execute(
            "SELECT device_id, COUNT(*), MIN(seq), MAX(seq) FROM journal WHERE device_id = ?", (store.device_id,)):
        if not count:
            continue
        if first != 1 or last != count:
            report.problems.append(f"journal: device {device} has {count} entries numbered {first}..{last} "
                                   "(gaps or duplicates)")
