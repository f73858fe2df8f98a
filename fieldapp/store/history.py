"""Reading the journal: a record's history, and any record as it stood at a past moment."""

from __future__ import annotations

from typing import Any

from fieldapp.store.base import NotFoundError, Store, loads
from fieldapp.store.batches import BATCH_OP, candidate_range, find_row, row_count

COLUMNS = "device_id, seq, hlc, at, actor, tbl, row_id, op, old, new"


def history(store: Store, row_id: str) -> list[dict[str, Any]]:
    """Every journal entry of one record, oldest first, with old and new values decoded.

    A bulk import's batch entry appears as this record's ``insert`` (its values alone), with
    ``batch_size`` = how many records that one entry inserted.
    """
    entries = store.rows(f"SELECT {COLUMNS} FROM journal INDEXED BY journal_row "
                         f"WHERE row_id = ? AND op != '{BATCH_OP}'", (row_id,))
    low, high = candidate_range(row_id)
    for entry in store.rows(f"SELECT {COLUMNS} FROM journal INDEXED BY journal_batch "
                            f"WHERE row_id BETWEEN ? AND ? AND op = '{BATCH_OP}'", (low, high)):
        batch = loads(entry["new"])
        values = find_row(batch, row_id)
        if values is not None:
            entries.append({**entry, "row_id": row_id, "op": "insert", "new": values, "batch_size": row_count(batch)})
    for entry in entries:
        entry["old"] = loads(entry["old"]) if isinstance(entry["old"], str) else entry["old"]
        entry["new"] = loads(entry["new"]) if isinstance(entry["new"], str) else entry["new"]
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
