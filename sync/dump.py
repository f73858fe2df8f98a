"""A canonical dump of a store's records and journal, for comparing two stores."""

from __future__ import annotations

import hashlib
import json

from fieldapp.store.base import Store
from sync.merge import TABLE_ORDER


def canonical(store: Store, journal: bool = True) -> dict[str, list]:
    """Every record table (rows sorted by id) and, optionally, the journal (sorted by device and seq)."""
    out: dict[str, list] = {}
    for table in TABLE_ORDER:
        out[table] = [list(r) for r in store.conn.execute(f"SELECT * FROM {table} ORDER BY id")]
    if journal:  # old and new values compared as data, not as JSON text (key order may differ)
        out["journal"] = [[*r[:8], json.loads(r[8]) if r[8] else None, json.loads(r[9]) if r[9] else None]
                          for r in store.conn.execute("SELECT * FROM journal ORDER BY device_id, seq")]
    return out


def fingerprint(store: Store, journal: bool = True) -> str:
    """SHA-256 of the canonical dump."""
    return hashlib.sha256(json.dumps(canonical(store, journal), sort_keys=True).encode()).hexdigest()
