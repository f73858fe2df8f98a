"""Reading the journal: the entries of records, a record's history, and a record at a past moment."""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from fieldapp.store.base import JOURNAL_COLUMNS as COLUMNS
from fieldapp.store.base import NotFoundError, Store, dumps, loads
from fieldapp.store.batches import BATCH_OP, PREFIX, find_row, row_count


def entries_for(store: Store, row_ids: Iterable[str]) -> list[dict[str, Any]]:
    """Every journal entry of these records, values decoded, in no particular order.

    A bulk import's batch entry appears as each record's own ``insert`` (its values alone) with
    ``batch_size`` = how many records that one entry inserted; each batch is decoded once. Join
    order and indexes are fixed (CROSS JOIN, INDEXED BY): left to itself, the planner of a store
    without statistics scans the whole journal.
    """
    conn = store.conn
    keys = (dumps(sorted(set(row_ids))),)
    cols = ", ".join(f"j.{c}" for c in COLUMNS)
    found = []
    for values in conn.execute(f"SELECT {cols} FROM json_each(?) t CROSS JOIN journal j INDEXED BY journal_row "
                               f"WHERE j.row_id = t.value AND j.op != '{BATCH_OP}'", keys):
        entry = dict(zip(COLUMNS, values, strict=True))
        entry["old"] = loads(entry["old"]) if entry["old"] else None
        entry["new"] = loads(entry["new"]) if entry["new"] else None
        found.append(entry)
    pairs = conn.execute(
        "SELECT t.value, j.device_id, j.seq FROM json_each(?) t CROSS JOIN journal j INDEXED BY journal_batch "
        f"WHERE j.op = '{BATCH_OP}' AND j.row_id BETWEEN substr(t.value, 1, {PREFIX}) AND t.value", keys
    ).fetchall()
    batches: dict[tuple[str, int], dict[str, Any]] = {}
    for device, seq in sorted({(device, seq) for _member, device, seq in pairs}):
        values = conn.execute(f"SELECT {', '.join(COLUMNS)} FROM journal WHERE device_id = ? AND seq = ?",
                              (device, seq)).fetchone()
        batch = dict(zip(COLUMNS, values, strict=True))
        batch["new"] = loads(batch["new"])
        batches[(device, seq)] = batch
    for member, device, seq in pairs:
        batch = batches[(device, seq)]
        values = find_row(batch["new"], member)
        if values is not None:
            found.append({**batch, "row_id": member, "op": "insert", "new": values,
                          "batch_size": row_count(batch["new"])})
    return found


def history(store: Store, row_id: str) -> list[dict[str, Any]]:
    """Every journal entry of one record, oldest first, with old and new values decoded.

    A bulk import's batch entry appears as this record's ``insert`` (see ``entries_for``).
    """
    entries = entries_for(store, [row_id])
    if not entries:
        raise NotFoundError(f"no journal entries for record {row_id}")
    return sorted(entries, key=lambda e: e["hlc"])


def state_at(store: Store, row_id: str, moment: str | None = None) -> dict[str, Any] | None:
    """The record's values as of ``moment`` (ISO 8601 UTC; None = now), rebuilt from the journal alone.

    Returns None when the record did not exist yet at that moment. A deleted record comes back
    with ``deleted = 1``.
    """
    state: dict[str, Any] | None = None
    for entry in history(store, row_id):
        if moment is not None and entry["at"] > moment:
            break
        state = entry["new"]
    return state
