"""Merge of 20 bundles x 5,000 changes against a raw bulk upsert of the same rows, then the same
bundles merged again, every bundle signed by its enrolled tablet and every entry through the record
gate (sync/entry_gate.py). Targets (../shared/DESIGN.md): at least half the raw throughput; the second
merge under a tenth of the first. Run: python tests/bench/bench_merge.py [BUNDLES] [CHANGES]

Each bundle holds one journal entry per change, as a tablet's day produces them: a site, new
components, then edits of a fifth of them (area and equipment). The raw baseline applies the same
changes as upserts (one row per change, final values) into a table of the same schema, in one
transaction. A last line reports bundles made by bulk imports (one batch entry per import).
"""

from __future__ import annotations

import sqlite3
import sys
import tempfile
import time
from pathlib import Path

from fieldapp.store import ops
from fieldapp.store.base import Store, new_ids
from fieldapp.store.importer import import_components
from sync.bundle import make_device_bundle
from sync.merge import merge_many
from sync.trust import enrol, public_key

KEYS: dict[Path, tuple[str, str]] = {}  # bundle -> (device id, public key) of the tablet that signed it
COLUMNS = ("id", "site_id", "tag", "type", "service", "area", "equipment", "difficult_to_monitor",
           "unsafe_to_monitor", "deleted")


def tablet_bundle(folder: Path, b: int, changes: int) -> tuple[Path, list[tuple], list[tuple]]:
    """A tablet's bundle of ``changes`` entries, the row values of each change, and its journal rows."""
    tablet = Store(folder / f"t{b}" / "t.db")
    site = ops.add_site(tablet, {"name": f"Pad {b}", "kind": "well_site", "program_id": "us-nsps-oooo-a",
                                 "timezone": "UTC", "methane_mole_fraction": 0.8})
    edits = (changes - 1) // 5
    inserts = changes - 1 - edits
    rows = [dict(zip(COLUMNS, (i, site.id, f"T{b}-{n}", "valve", "gas", "", "", 0, 0, 0), strict=True))
            for n, i in enumerate(new_ids(inserts))]
    with tablet.transaction():
        tablet.insert_many("components", rows)
        for row in rows[:edits]:
            tablet.update("components", row["id"], {"area": "north yard", "equipment": f"separator {b}"})
    changed = [tuple({**r, "area": "north yard", "equipment": f"separator {b}"}.values()) for r in rows[:edits]]
    path = make_device_bundle(tablet, folder / f"b{b}.zip").path
    journal = tablet.conn.execute("SELECT * FROM journal ORDER BY seq").fetchall()
    KEYS[path] = (tablet.device_id, public_key(tablet))
    tablet.close()
    return path, [tuple(r.values()) for r in rows] + changed, journal


def import_bundle(folder: Path, b: int, changes: int) -> Path:
    tablet = Store(folder / f"i{b}" / "t.db")
    site = ops.add_site(tablet, {"name": f"Pad {b}", "kind": "well_site", "program_id": "us-nsps-oooo-a",
                                 "timezone": "UTC", "methane_mole_fraction": 0.8})
    csv = folder / f"c{b}.csv"
    csv.write_text("tag,type,service\n" + "".join(f"T{b}-{i},valve,gas\n" for i in range(changes - 1)))
    import_components(tablet, csv, site.id)
    path = make_device_bundle(tablet, folder / f"ib{b}.zip").path
    KEYS[path] = (tablet.device_id, public_key(tablet))
    tablet.close()
    return path


def raw_upsert(path: Path, rows: list[tuple], journal: list[tuple] | None = None) -> float:
    """The same changes as one bulk upsert into the components schema the store uses.

    With ``journal``, the same transaction also inserts those journal rows (already encoded) into
    the store's journal schema: the SQLite floor of any merge that keeps one journal row per change.
    """
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute("PRAGMA synchronous = FULL")
    conn.execute("CREATE TABLE components (id TEXT PRIMARY KEY, site_id TEXT NOT NULL, tag TEXT NOT NULL, "
                 "type TEXT NOT NULL, service TEXT NOT NULL, area TEXT NOT NULL DEFAULT '', equipment TEXT NOT NULL "
                 "DEFAULT '', difficult_to_monitor INTEGER NOT NULL DEFAULT 0, unsafe_to_monitor INTEGER NOT NULL "
                 "DEFAULT 0, deleted INTEGER NOT NULL DEFAULT 0)")
    conn.execute("CREATE UNIQUE INDEX components_site_tag ON components(site_id, tag) WHERE deleted = 0")
    conn.execute("CREATE TABLE journal (device_id TEXT NOT NULL, seq INTEGER NOT NULL, hlc TEXT NOT NULL, "
                 "at TEXT NOT NULL, actor TEXT NOT NULL, tbl TEXT NOT NULL, row_id TEXT NOT NULL, op TEXT NOT NULL, "
                 "old TEXT, new TEXT, PRIMARY KEY (device_id, seq))")
    conn.execute("CREATE INDEX journal_row ON journal(row_id, hlc)")
    updates = ", ".join(f"{c} = excluded.{c}" for c in COLUMNS[1:])
    start = time.perf_counter()
    conn.execute("BEGIN")
    if journal:
        conn.executemany("INSERT INTO journal VALUES (?,?,?,?,?,?,?,?,?,?)", journal)
    conn.executemany(f"INSERT INTO components VALUES ({', '.join('?' * len(COLUMNS))}) "
                     f"ON CONFLICT(id) DO UPDATE SET {updates}", rows)
    conn.execute("COMMIT")
    elapsed = time.perf_counter() - start
    conn.close()
    return elapsed


def merge_all(office_path: Path, paths: list[Path]) -> tuple[float, float]:
    office = Store(office_path)
    for path in paths:  # every tablet enrolled: bundles are signed and checked against its key
        device, key = KEYS[path]
        enrol(office, device, key, f"bench tablet {device[:8]}")
    start = time.perf_counter()
    merge_many(office, paths)  # as `plumebook bundle merge FILE...` does: one transaction for all
    first = time.perf_counter() - start
    start = time.perf_counter()
    merge_many(office, paths)
    second = time.perf_counter() - start
    office.close()
    return first, second


def main(bundles: int = 20, changes: int = 5000) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        made = [tablet_bundle(folder, b, changes) for b in range(bundles)]
        paths = [p for p, _rows, _j in made]
        rows = [r for _p, rs, _j in made for r in rs]
        journal = [e for _p, _r, js in made for e in js]
        raw_runs, floor_runs = [], []
        for i in range(3):  # interleaved, best of three each
            raw_runs.append(raw_upsert(folder / f"raw{i}.db", rows))
            floor_runs.append(raw_upsert(folder / f"floor{i}.db", rows, journal))
        raw_s, floor_s = min(raw_runs), min(floor_runs)
        runs = [merge_all(folder / f"office{i}" / "office.db", paths) for i in range(3)]  # best of three, as above
        first, second = min(r[0] for r in runs), min(r[1] for r in runs)
        imports = [import_bundle(folder, b, changes) for b in range(bundles)]
        batch_first, _ = merge_all(folder / "office2" / "office.db", imports)
    total = bundles * changes
    print(f"{bundles} bundles x {changes} changes = {total} journal entries (one per change)")
    print(f"raw bulk upsert of the {len(rows)} changed rows: {len(rows) / raw_s:,.0f} rows/s ({raw_s:.2f} s)")
    print(f"first merge (verify + journal + rebuild): {total / first:,.0f} entries/s ({first:.2f} s)")
    print(f"second merge of the same bundles: {second:.2f} s = {second / first:.3f} of the first (target < 0.10)")
    ratio = raw_s / first
    print(f"throughput ratio merge/raw: {ratio:.2f} (target >= 0.50) {'OK' if ratio >= 0.5 else 'BELOW TARGET'}")
    print(f"SQLite floor (raw upsert + raw insert of the same {len(journal)} journal rows, one transaction): "
          f"{floor_s:.2f} s;\n  raw/floor = {raw_s / floor_s:.2f} = the best ratio a merge that stores each change "
          f"can reach; merge/floor = {floor_s / first:.2f}, i.e. merge = {first / floor_s:.2f}x the floor "
          f"(target <= 2.5x) {'OK' if first / floor_s <= 2.5 else 'ABOVE TARGET'}")
    print(f"bundles made by bulk imports ({bundles} x {changes} rows, one batch entry each): first merge "
          f"{batch_first:.2f} s, ratio to raw {raw_s / batch_first:.2f}")


if __name__ == "__main__":
    args = [int(a) for a in sys.argv[1:3]]
    main(*args)
