"""Batch journal entries: one entry for one bulk import, holding every row it inserted.

A bulk inventory import is one user action. Its journal entry carries the usual fields (device id,
per-device sequence number, hybrid clock stamp, wall time, actor, table) with ``op`` =
``insert_batch``, ``row_id`` = the first inserted id, ``old`` = null and ``new`` =
``{"columns": {name: [value per row], ...}, "same": {name: value shared by every row}}`` — every
inserted value, by column, ids ascending. One entry instead of one per row halves what a
100,000-row import writes (tests/bench/bench_import.py); every other write journals one entry per
record, and readers (history, merge, bundles) see a batch as one ``insert`` per record.

Finding a record's batch entry needs no extra index: the ids of one batch come from one
``new_ids`` call, so they share the millisecond prefix of their UUIDv7 text and the first id is
the smallest. A record's candidate batches are those whose ``row_id`` lies between its own
millisecond prefix and its own id; membership is then checked exactly (bisect on the ids).
"""

from __future__ import annotations

from bisect import bisect_left
from typing import Any

BATCH_OP = "insert_batch"
BATCH_TABLES = frozenset({"components"})
PREFIX = 13  # "xxxxxxxx-xxxx": the 48-bit millisecond field of a UUIDv7 in text form


def batch_value(columns: dict[str, list], same: dict[str, Any]) -> dict[str, Any]:
    """The ``new`` value of a batch entry."""
    return {"columns": columns, "same": same}


def candidate_range(row_id: str) -> tuple[str, str]:
    """Bounds (inclusive) on the ``row_id`` of any batch entry that can hold this record."""
    return row_id[:PREFIX], row_id


def row_count(value: dict[str, Any]) -> int:
    """How many records a batch entry's ``new`` holds."""
    return len(value["columns"]["id"])


def find_row(value: dict[str, Any], row_id: str) -> dict[str, Any] | None:
    """One record's values in a batch entry's ``new``, or None when the batch does not hold it."""
    ids = value["columns"]["id"]
    i = bisect_left(ids, row_id)
    if i < len(ids) and ids[i] == row_id:
        return {**{name: values[i] for name, values in value["columns"].items()}, **value["same"]}
    return None


def expand(entry: dict[str, Any]) -> list[dict[str, Any]]:
    """A batch entry as one plain ``insert`` entry per record (same device, sequence number, stamp)."""
    columns, same = entry["new"]["columns"], entry["new"]["same"]
    names = list(columns)  # key order is not kept by every JSON writer: find id by name
    at = names.index("id")
    base = {k: v for k, v in entry.items() if k not in ("row_id", "op", "old", "new")}
    return [{**base, "row_id": values[at], "op": "insert", "old": None,
             "new": {**dict(zip(names, values, strict=True)), **same}}
            for values in zip(*columns.values(), strict=True)]


def ids_problem(ids: list[str]) -> str | None:
    """What keeps these ids from being one batch's ids (ascending, one millisecond prefix), or None."""
    if any(a >= b for a, b in zip(ids, ids[1:], strict=False)):
        return "a batch's ids must ascend"
    if ids and ids[-1][:PREFIX] != ids[0][:PREFIX]:
        return "a batch's ids must come from one id batch (same time prefix)"
    return None


def problem(entry: dict[str, Any]) -> str | None:
    """What is wrong with a batch entry received from elsewhere, or None when it is well formed."""
    value = entry.get("new")
    if entry.get("tbl") not in BATCH_TABLES:
        return f"batch entries are only written for {', '.join(sorted(BATCH_TABLES))}"
    if entry.get("old") is not None or not isinstance(value, dict) or set(value) != {"columns", "same"}:
        return "a batch entry must have old = null and new = {columns, same}"
    columns, same = value["columns"], value["same"]
    if not isinstance(columns, dict) or not isinstance(same, dict) or set(columns) & set(same):
        return "a batch entry's columns and shared values must be objects naming each field once"
    ids = columns.get("id")
    if not isinstance(ids, list) or not ids or any(not isinstance(v, list) or len(v) != len(ids)
                                                   for v in columns.values()):
        return "a batch entry's columns must be lists of one length, one of them id"
    if any(not isinstance(i, str) for i in ids) or ids[0] != entry.get("row_id"):
        return "a batch entry's ids must be text, starting with its row_id"
    return ids_problem(ids)
