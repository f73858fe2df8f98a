"""Merge of 20 bundles x 5,000 changes against a raw bulk upsert of the same rows, then the same
bundles merged again. Targets (../shared/DESIGN.md): at least half the raw throughput; the second
merge under a tenth of the first. Run: python tests/bench/bench_merge.py [BUNDLES] [CHANGES]
"""

from __future__ import annotations

import json
import sqlite3
import sys
import tempfile
import time
from pathlib import Path

from fieldapp.store import ops
from fieldapp.store.base import Store
from sync.bundle import make_device_bundle
from sync.merge import merge


def make_bundles(folder: Path, bundles: int, changes: int) -> tuple[list[Path], list[tuple]]:
    paths, rows = [], []
    for b in range(bundles):
        tablet = Store(folder / f"t{b}" / "t.db")
        site = ops.add_site(tablet, {"name": f"Pad {b}", "kind": "well_site", "program_id": "us-nsps-oooo-a",
                                     "timezone": "UTC", "methane_mole_fraction": 0.8})
        csv = folder / f"c{b}.csv"
        csv.write_text("tag,type,service\n" + "".join(f"T{b}-{i},valve,gas\n" for i in range(changes - 1)))
        from fieldapp.store.importer import import_components

        import_components(tablet, csv, site.id)
        paths.append(make_device_bundle(tablet, folder / f"b{b}.zip").path)
        rows += [tuple(json.loads(r[0]).values()) for r in tablet.conn.execute(
            "SELECT new FROM journal WHERE tbl = 'components'")]
        tablet.close()
    return paths, rows


def raw_upsert(path: Path, rows: list[tuple]) -> float:
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute("PRAGMA synchronous = FULL")
    conn.execute("CREATE TABLE components (id TEXT PRIMARY KEY, site_id, tag, type, service, area, equipment, "
                 "difficult_to_monitor, unsafe_to_monitor, deleted)")
    start = time.perf_counter()
    conn.execute("BEGIN")
    conn.executemany("INSERT INTO components VALUES (?,?,?,?,?,?,?,?,?,?) ON CONFLICT(id) DO UPDATE SET "
                     "tag = excluded.tag, type = excluded.type, area = excluded.area", rows)
    conn.execute("COMMIT")
    return time.perf_counter() - start


def main(bundles: int = 20, changes: int = 5000) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        paths, rows = make_bundles(folder, bundles, changes)
        raw_s = raw_upsert(folder / "raw.db", rows)
        office = Store(folder / "office" / "office.db")
        start = time.perf_counter()
        for path in paths:
            merge(office, path)
        first = time.perf_counter() - start
        start = time.perf_counter()
        for path in paths:
            merge(office, path)
        second = time.perf_counter() - start
    total = bundles * changes
    print(f"{bundles} bundles x {changes} changes = {total} journal entries")
    print(f"raw bulk upsert of the {len(rows)} component rows: {len(rows) / raw_s:,.0f} rows/s ({raw_s:.2f} s)")
    print(f"first merge (verify + journal + rebuild): {total / first:,.0f} entries/s ({first:.2f} s)")
    print(f"second merge of the same bundles: {second:.2f} s = {second / first:.2f} of the first (target < 0.10)")
    print(f"throughput ratio merge/raw: {raw_s / first:.2f} (target >= 0.50)")


if __name__ == "__main__":
    args = [int(a) for a in sys.argv[1:3]]
    main(*args)
