"""The store: one SQLite file, its device id, and writes that always journal.

Every insert, edit and delete of a record appends a journal entry (device id, per-device sequence
number, hybrid clock stamp, wall time, actor, table, row id, old and new values) inside the same
transaction as the change. Deletes are tombstones (``deleted = 1``); nothing is overwritten
without its old value being kept.
"""

from __future__ import annotations

import json
import os
import sqlite3
import time
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager
from datetime import UTC, datetime
from itertools import repeat
from pathlib import Path
from typing import Any

from sqlite_utils import Database

try:  # orjson encodes and decodes journal values several times faster than the standard library
    import orjson

    def dumps(value: Any) -> str:
        """Compact JSON text of a journal value."""
        return orjson.dumps(value).decode()

    loads = orjson.loads
except ImportError:  # pragma: no cover - orjson is a declared dependency
    def dumps(value: Any) -> str:
        """Compact JSON text of a journal value."""
        return json.dumps(value, separators=(",", ":"))

    loads = json.loads

from fieldapp.store.batches import BATCH_OP, BATCH_TABLES, batch_value, ids_problem
from fieldapp.store.clock import HybridClock, Stamp
from fieldapp.store.schema import migrate, refuse_newer

LIST_COLUMNS = frozenset({"areas", "areas_done"})
RECORD_TABLES = ("sites", "components", "surveys", "leaks", "actions", "media", "markers")
APPEND_ONLY_TABLES = frozenset({"actions"})
JOURNAL_COLUMNS = ("device_id", "seq", "hlc", "at", "actor", "tbl", "row_id", "op", "old", "new")


class NotFoundError(LookupError):
    """No record with that id (or name) exists."""


def to_sql(row: dict[str, Any]) -> dict[str, Any]:
    """Plain record values to SQL column values (lists as JSON text)."""
    return {k: (json.dumps(v) if k in LIST_COLUMNS else v) for k, v in row.items()}


def from_sql(row: dict[str, Any]) -> dict[str, Any]:
    """SQL column values back to plain record values."""
    return {k: (json.loads(v) if k in LIST_COLUMNS and v is not None else v) for k, v in row.items()}


def new_id() -> str:
    """A fresh time-ordered UUID (version 7, RFC 9562) in text form.

    Time order keeps B-tree inserts of ids and journal rows near the end of the index, which makes
    bulk writes several times faster than random version-4 ids; 54 random bits per millisecond
    keep ids of different devices apart.
    """
    return new_ids(1)[0]


_HEX3 = [f"{i:03x}" for i in range(4096)]


def new_ids(count: int) -> list[str]:
    """``count`` fresh, consecutive time-ordered UUIDs (version 7).

    One clock reading and one random 54-bit start, then +1 per id (the monotonic-counter method of
    RFC 9562 §6.2), so a batch sorts in creation order, indexes grow at their end, and every id of
    the batch shares the same millisecond prefix (``fieldapp.store.batches`` relies on that). The
    text is built 4,096 ids at a time from a precomputed table of the last three hex digits.
    """
    millis = (time.time_ns() // 1_000_000) & 0xFFFF_FFFF_FFFF
    low = int.from_bytes(os.urandom(8), "big") >> 10  # 54 random bits, room left to count
    h = f"{millis:012x}"
    head = f"{h[:8]}-{h[8:]}-7000-"
    out: list[str] = []
    end = low + count
    while low < end:
        block = low >> 12
        stop = min(end, (block + 1) << 12)
        prefix = f"{head}{0x8000 | low >> 48:04x}-{block & 0xF_FFFF_FFFF:09x}"
        out += [prefix + t for t in _HEX3[low & 0xFFF:((stop - 1) & 0xFFF) + 1]]
        low = stop
    return out


class Store:
    """An open store file. Use ``with store.transaction():`` around every user action."""

    def __init__(self, path: str | Path, actor: str = "", wall: Callable[[], float] = time.time):
        self.path = Path(path)
        if str(path) != ":memory:":
            self.path.parent.mkdir(parents=True, exist_ok=True)
        self.conn = sqlite3.connect(str(path), isolation_level=None, timeout=15)
        try:
            refuse_newer(self.conn)  # before any pragma that could change the file
        except BaseException:
            self.conn.close()
            raise
        self.conn.execute("PRAGMA foreign_keys = ON")
        if str(path) != ":memory:":
            self.conn.execute("PRAGMA journal_mode = WAL")
        self.conn.execute("PRAGMA synchronous = FULL")
        migrate(self.conn)
        self.db = Database(self.conn)
        self.actor = actor
        # When set, (field, message) refuses a write naming nobody (the command sets it when it found
        # no name, so the journal never records an unnamed write from there).
        self.unnamed_refusal: tuple[str, str] | None = None
        self.wall = wall
        self.device_id = self._device_id()
        last = self.conn.execute(
            "SELECT MAX(hlc) FROM journal WHERE device_id = ?", (self.device_id,)
        ).fetchone()[0]
        self.clock = HybridClock(self.device_id, wall, Stamp.parse(last) if last else None)
        self._depth = 0
        self._next_seq = 0

    def close(self) -> None:
        """Close the connection."""
        self.conn.close()

    def _device_id(self) -> str:
        row = self.conn.execute("SELECT value FROM meta WHERE key = 'device_id'").fetchone()
        if row:
            return row[0]
        device = new_id()
        self.conn.execute("INSERT OR IGNORE INTO meta(key, value) VALUES('device_id', ?)", (device,))
        return self.conn.execute("SELECT value FROM meta WHERE key = 'device_id'").fetchone()[0]

    @contextmanager
    def transaction(self) -> Iterator[Store]:
        """One transaction; nested calls join the outer one (savepoints), any error rolls back all."""
        if self._depth:
            name = f"sp{self._depth}"
            self.conn.execute(f"SAVEPOINT {name}")
            self._depth += 1
            try:
                yield self
            except BaseException:
                self.conn.execute(f"ROLLBACK TO {name}")
                self.conn.execute(f"RELEASE {name}")
                raise
            else:
                self.conn.execute(f"RELEASE {name}")
            finally:
                self._depth -= 1
            return
        self.conn.execute("BEGIN IMMEDIATE")
        self._depth = 1
        clock_before = self.clock.last
        try:
            self._next_seq = self._max_seq() + 1
            yield self
            self.conn.execute("COMMIT")
        except BaseException:
            if self.conn.in_transaction:
                self.conn.execute("ROLLBACK")
            self.clock.last = clock_before
            raise
        finally:
            self._depth = 0

    def _max_seq(self) -> int:
        row = self.conn.execute("SELECT MAX(seq) FROM journal WHERE device_id = ?", (self.device_id,))
        return row.fetchone()[0] or 0

    def now_text(self) -> str:
        """Wall time now, UTC, ISO 8601."""
        return datetime.fromtimestamp(self.wall(), UTC).isoformat(timespec="milliseconds")

    def _require_tx(self) -> None:
        if not self._depth:
            raise RuntimeError("writes must run inside store.transaction()")

    def _journal_rows(self, entries: list[tuple[str, str, str, Any, Any]], actor: str) -> list[tuple]:
        at = self.now_text()
        device, who, seq = self.device_id, actor or self.actor, self._next_seq
        if not who and self.unnamed_refusal:
            from fieldapp.core.fields import FieldProblem, ValidationError

            raise ValidationError([FieldProblem(*self.unnamed_refusal)])
        stamps = self.clock.many(len(entries))
        rows = [
            (device, seq + i, stamps[i], at, who, tbl, row_id, op, None if old is None else dumps(old),
             None if new is None else dumps(new))
            for i, (tbl, row_id, op, old, new) in enumerate(entries)
        ]
        self._next_seq += len(entries)
        return rows

    def _write_journal(self, rows: list[tuple]) -> None:
        self.conn.executemany("INSERT INTO journal VALUES (?,?,?,?,?,?,?,?,?,?)", rows)

    def insert(self, table: str, row: dict[str, Any], actor: str = "") -> str:
        """Insert one record (plain values) and journal it; returns its id."""
        self.insert_many(table, [row], actor)
        return row["id"]

    def insert_many(self, table: str, rows: list[dict[str, Any]], actor: str = "") -> None:
        """Insert records that share the same columns, journalling each, with two bulk statements."""
        self._require_tx()
        if not rows:
            return
        columns = list(rows[0])
        if table not in APPEND_ONLY_TABLES and "deleted" not in columns:
            columns.append("deleted")
            rows = [{**r, "deleted": 0} for r in rows]
        if table == "actions" and "recorded_at" not in columns:
            columns.append("recorded_at")
            now = self.now_text()
            rows = [{**r, "recorded_at": now} for r in rows]
        sql = f"INSERT INTO {table} ({', '.join(columns)}) VALUES ({', '.join('?' * len(columns))})"
        if LIST_COLUMNS.intersection(columns):
            values = [tuple(to_sql(r)[c] for c in columns) for r in rows]
        else:
            values = [tuple(r[c] for c in columns) for r in rows]
        self.conn.executemany(sql, values)
        self._write_journal(self._journal_rows([(table, r["id"], "insert", None, r) for r in rows], actor))

    def insert_batch(self, table: str, columns: dict[str, list], same: dict[str, Any], actor: str = "") -> int:
        """Insert many new records as one bulk import: one statement and one journal entry for them all.

        ``columns`` maps each varying field to its values (``id`` first, from one ``new_ids`` call:
        ascending, same millisecond); ``same`` holds fields every record shares. Returns the count.
        See ``fieldapp.store.batches``.
        """
        self._require_tx()
        ids = columns.get("id") or []
        if not ids:
            return 0
        if table not in BATCH_TABLES or next(iter(columns)) != "id" or set(columns) & set(same):
            raise ValueError(f"batch inserts need a table in {sorted(BATCH_TABLES)} and columns starting with id")
        if wrong := ids_problem(ids):
            raise ValueError(f"{wrong}: draw them with one new_ids() call")
        names = [*columns, *same]
        sql = f"INSERT INTO {table} ({', '.join(names)}) VALUES ({', '.join('?' * len(names))})"
        values = zip(*columns.values(), *map(repeat, same.values()), strict=False)  # repeat() never ends
        self.conn.executemany(sql, values)
        (entry,) = self._journal_rows([(table, ids[0], BATCH_OP, None, batch_value(columns, same))], actor)
        self._write_journal([entry])
        return len(ids)

    def get(self, table: str, row_id: str, include_deleted: bool = False) -> dict[str, Any]:
        """One record's current plain values; NotFoundError if absent (or deleted)."""
        cursor = self.conn.execute(f"SELECT * FROM {table} WHERE id = ?", (row_id,))
        found = cursor.fetchone()
        if found is None:
            raise NotFoundError(f"no {table[:-1]} with id {row_id}")
        row = from_sql(dict(zip([d[0] for d in cursor.description], found, strict=True)))
        if row.get("deleted") and not include_deleted:
            raise NotFoundError(f"{table[:-1]} {row_id} was deleted")
        return row

    def update(self, table: str, row_id: str, changes: dict[str, Any], actor: str = "") -> dict[str, Any]:
        """Change fields of a record, journalling the old and new values; returns the new row."""
        self._require_tx()
        if table in APPEND_ONLY_TABLES:
            raise PermissionError(f"{table} are append-only; add a new entry instead")
        old = self.get(table, row_id)
        new = {**old, **changes}
        if new == old:
            return old
        assignments = ", ".join(f"{c} = ?" for c in changes)
        self.conn.execute(
            f"UPDATE {table} SET {assignments} WHERE id = ?", (*to_sql(changes).values(), row_id)
        )
        self._write_journal(self._journal_rows([(table, row_id, "update", old, new)], actor))
        return new

    def delete(self, table: str, row_id: str, actor: str = "") -> None:
        """Tombstone a record; its last values stay in the journal."""
        self._require_tx()
        if table in APPEND_ONLY_TABLES:
            raise PermissionError(f"{table} are append-only; void the leak or add a correcting entry")
        old = self.get(table, row_id)
        self.conn.execute(f"UPDATE {table} SET deleted = 1 WHERE id = ?", (row_id,))
        self._write_journal(self._journal_rows([(table, row_id, "delete", old, {**old, "deleted": 1})], actor))

    def rows(self, sql: str, params: Iterable[Any] = ()) -> list[dict[str, Any]]:
        """Run a read query and return dicts."""
        cursor = self.conn.execute(sql, tuple(params))
        names = [d[0] for d in cursor.description]
        return [dict(zip(names, r, strict=True)) for r in cursor.fetchall()]
