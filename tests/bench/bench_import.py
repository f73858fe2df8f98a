"""Bulk inventory import: the store's import path against raw sqlite3.executemany of the same rows.

Target (../shared/DESIGN.md): at least half the raw rate. Run: python tests/bench/bench_import.py [ROWS]
"""

from __future__ import annotations

import csv
import sqlite3
import sys
import tempfile
import time
from pathlib import Path

from fieldapp.store import ops
from fieldapp.store.base import Store, new_id, new_ids
from fieldapp.store.importer import import_components

TYPES = ["valve", "connector", "flange", "open_ended_line", "instrument"]


def write_csv(path: Path, rows: int) -> list[tuple]:
    data = [(f"B-{n:07d}", TYPES[n % 5], "gas", f"area {n % 40}", f"unit {n % 300}", "no", "no")
            for n in range(rows)]
    with open(path, "w", newline="") as fh:
        writer = csv.writer(fh)
        writer.writerow(["tag", "type", "service", "area", "equipment", "difficult_to_monitor", "unsafe_to_monitor"])
        writer.writerows(data)
    return data


def raw(path: Path, data: list[tuple]) -> float:
    """Raw baseline: executemany of the same rows into the same components schema, one transaction.

    The rows carry the values the store writes: time-ordered UUID ids and a UUID site id (drawn
    before the clock starts), so both sides write the same bytes into the table and its indexes.
    """
    ids, site = new_ids(len(data)), new_id()
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute("PRAGMA synchronous = FULL")
    conn.execute("CREATE TABLE components (id TEXT PRIMARY KEY, site_id TEXT, tag TEXT, type TEXT, service TEXT, "
                 "area TEXT, equipment TEXT, difficult_to_monitor INTEGER, unsafe_to_monitor INTEGER, deleted INTEGER)")
    conn.execute("CREATE UNIQUE INDEX components_site_tag ON components(site_id, tag) WHERE deleted = 0")
    start = time.perf_counter()
    conn.execute("BEGIN")
    conn.executemany("INSERT INTO components VALUES (?,?,?,?,?,?,?,?,?,0)",
                     ((ids[i], site, t, ty, sv, a, e, 0, 0) for i, (t, ty, sv, a, e, _d, _u) in enumerate(data)))
    conn.execute("COMMIT")
    elapsed = time.perf_counter() - start
    conn.close()
    return elapsed


def store_path(folder: Path, csv_path: Path) -> float:
    store = Store(folder / "store.db")
    site = ops.add_site(store, {"name": "Bench", "kind": "compressor_station", "program_id": "us-nsps-oooo-a",
                                "timezone": "UTC", "methane_mole_fraction": 0.9})
    start = time.perf_counter()
    import_components(store, csv_path, site.id)
    elapsed = time.perf_counter() - start
    store.close()
    return elapsed


def main(rows: int = 100_000) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        data = write_csv(folder / "c.csv", rows)
        raw_runs, our_runs = [], []
        for i in range(5):  # interleaved, best of five each, so a slow moment of the machine hits both
            raw_runs.append(raw(folder / f"raw{i}.db", data))
            our_runs.append(store_path(Path(tempfile.mkdtemp(dir=tmp)), folder / "c.csv"))
        raw_s, ours = min(raw_runs), min(our_runs)
    print(f"rows: {rows}")
    print(f"raw executemany: {rows / raw_s:,.0f} rows/s ({raw_s:.3f} s)")
    print(f"store import (validate + rows + journal): {rows / ours:,.0f} rows/s ({ours:.3f} s)")
    ratio = raw_s / ours
    print(f"ratio store/raw rate: {ratio:.2f} (target >= 0.50) {'OK' if ratio >= 0.5 else 'BELOW TARGET'}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100_000)
