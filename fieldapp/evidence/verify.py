"""Integrity check of a store and its media: every original re-hashed, the database checked."""

from __future__ import annotations

from dataclasses import dataclass, field

from fieldapp.evidence.ingest import library
from fieldapp.evidence.library import sha256_file
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


def verify(store: Store) -> VerifyReport:
    """Re-hash every referenced original, run SQLite's integrity check and check journal continuity.

    Continuity is checked for this device's own entries; a tablet holds only the office's share of
    other devices' entries (sites and inventory), so gaps there are expected.
    """
    report = VerifyReport()
    lib = library(store)
    removed = lib.clean_temp()
    if removed:
        report.notes.append(f"removed {removed} temp file(s) left by an interrupted write")
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
    result = store.conn.execute("PRAGMA integrity_check").fetchall()
    if [r[0] for r in result] != ["ok"]:
        report.problems += [f"database: {r[0]}" for r in result]
    fk = store.conn.execute("PRAGMA foreign_key_check").fetchall()
    report.problems += [f"database: row {r[1]} of {r[0]} points to a missing {r[2]}" for r in fk]
    for device, count, first, last in store.conn.execute(
            "SELECT device_id, COUNT(*), MIN(seq), MAX(seq) FROM journal WHERE device_id = ?", (store.device_id,)):
        if not count:
            continue
        if first != 1 or last != count:
            report.problems.append(f"journal: device {device} has {count} entries numbered {first}..{last} "
                                   "(gaps or duplicates)")
    return report
