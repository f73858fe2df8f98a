"""Reading the journal: a record's history, and any record as it stood at a past moment."""

from __future__ import annotations

import json
from typing import Any

from fieldapp.store.base import NotFoundError, Store


def history(store: Store, row_id: str) -> list[dict[str, Any]]:
    """Every journal entry of one record, oldest first, with old and new values decoded."""
    entries = store.rows(
        "SELECT device_id, seq, hlc, at, actor, tbl, row_id, op, old, new FROM journal "
        "WHERE row_id = ? ORDER BY hlc", (row_id,)
    )
    for entry in entries:
        entry["old"] = json.loads(entry["old"]) if entry["old"] else None
        entry["new"] = json.loads(entry["new"]) if entry["new"] else None
    if not entries:
        raise NotFoundError(f"no journal entries for record {row_id}")
    return entries


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
