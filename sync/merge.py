"""Merging bundles into a store: verified first, then applied in one transaction.

Rule for concurrent edits (documented in DEVELOPERS.md): every record is rebuilt by replaying all
of its journal entries in hybrid-logical-clock order (``hlc``: wall milliseconds, counter, device
id); an update sets only the fields it changed. When two devices changed the same field without
one having seen the other's value, the later stamp wins, and the losing value stays in the journal
and is listed in ``conflicts``. The result depends only on the set of entries, so merging the same
bundle twice changes nothing and bundles merge to the same state in any order. Actions and media
are append-only and never conflict.
"""

from __future__ import annotations

import json
import sqlite3
from collections import defaultdict
from collections.abc import Callable
from dataclasses import dataclass, field
from operator import itemgetter
from pathlib import Path
from typing import Any

from fieldapp import catalog
from fieldapp.atomic import write_bytes
from fieldapp.core.fields import ValidationError
from fieldapp.evidence.ingest import library
from fieldapp.store.base import LIST_COLUMNS, Store, dumps, loads, to_sql
from fieldapp.store.batches import BATCH_OP, expand
from fieldapp.store.bulk import gc_paused
from fieldapp.store.clock import Stamp
from fieldapp.store.history import entries_for
from sync import trust
from sync.bundle import ACK_KEY, ENTRY_COLUMNS
from sync.bundle_check import BundleError, CheckedBundle, check, read_member
from sync.entry_gate import entry_name

TABLE_ORDER = ("sites", "components", "surveys", "leaks", "actions", "media", "markers")


@dataclass
class MergeResult:
    """What one merge did."""

    path: Path
    kind: str
    device_id: str
    new_entries: int = 0
    rows: int = 0
    media: int = 0
    conflicts: int = 0
    collisions: int = 0
    notes: list[str] = field(default_factory=list)


def contiguous_seq(store: Store, device: str) -> int:
    """Highest sequence number of a device held without gaps (0 if none)."""
    count, top = store.conn.execute("SELECT COUNT(*), MAX(seq) FROM journal WHERE device_id = ?", (device,)).fetchone()
    return top if count and count == top else 0


JOURNAL_SEEN = "checked_journal:"  # meta key prefix: SHA-256 of a journal member checked in full and merged


def _held_entries(store: Store, device: str, upto: int) -> dict[int, dict[str, Any]]:
    rows = store.rows(f"SELECT {', '.join(ENTRY_COLUMNS)} FROM journal WHERE device_id = ? AND seq <= ?",
                      (device, upto))
    for row in rows:
        row["old"] = loads(row["old"]) if row["old"] else None
        row["new"] = loads(row["new"]) if row["new"] else None
    return {row["seq"]: row for row in rows}


def _same_as_held(bundle: CheckedBundle, entries: list[dict[str, Any]], held: dict[int, dict[str, Any]]) -> None:
    for e in entries:
        mine = held.get(e["seq"])
        if mine is not None and mine != e:
            raise BundleError(bundle.path, f"{entry_name(e)} differs from the entry this store already holds "
                              "under that number: the bundle was altered")


def _new_entries(store: Store, bundle: CheckedBundle) -> list[dict[str, Any]]:
    m = bundle.manifest
    if m["kind"] == "device":
        device = m["device_id"]
        if device == store.device_id:
            raise BundleError(bundle.path, "was made by this same device")
        have = contiguous_seq(store, device)
        if m["seq_from"] > have + 1:
            raise BundleError(bundle.path, f"is out of order: this store holds device {device[:8]}'s entries up to "
                              f"{have}, the bundle starts at {m['seq_from']}; merge the earlier bundle first")
        if bundle.entries_decoded and m["seq_from"] <= have:
            _same_as_held(bundle, [e for e in bundle.entries if e["seq"] <= have], _held_entries(store, device, have))
        return [e for e in bundle.entries if e["seq"] > have]
    if m["for_device"] != store.device_id:
        raise BundleError(bundle.path, "was made for another device")
    own = [e for e in bundle.entries if e["device_id"] == store.device_id]
    if own:
        raise BundleError(bundle.path, f"{entry_name(own[0])} is numbered in this tablet's own device id: only "
                          "this tablet writes those")
    sent = store.conn.execute("SELECT COALESCE(MAX(seq), 0) FROM journal WHERE device_id = ?",
                              (store.device_id,)).fetchone()[0]
    if m["ack_seq"] > sent:
        raise BundleError(bundle.path, f"acknowledges entries up to {m['ack_seq']}, but this tablet has written "
                          f"only {sent}")
    check_programs(bundle)
    keys = dumps([[e["device_id"], e["seq"]] for e in bundle.entries])
    held = {(r["device_id"], r["seq"]): r for r in store.rows(
        f"SELECT {', '.join(f'j.{c}' for c in ENTRY_COLUMNS)} FROM json_each(?) t CROSS JOIN journal j "
        "ON j.device_id = t.value ->> 0 AND j.seq = t.value ->> 1", (keys,))}
    for row in held.values():
        row["old"] = loads(row["old"]) if row["old"] else None
        row["new"] = loads(row["new"]) if row["new"] else None
    for e in bundle.entries:
        mine = held.get((e["device_id"], e["seq"]))
        if mine is not None and mine != e:
            raise BundleError(bundle.path, f"{entry_name(e)} differs from the entry this store already holds "
                              "under that number: the bundle was altered")
    return [e for e in bundle.entries if (e["device_id"], e["seq"]) not in held]


def check_programs(bundle: CheckedBundle) -> None:
    """Program files of an office bundle: each valid, none reusing a shipped id, ids unique with the user's."""
    shipped = {p.id for p, origin in catalog.programs().values() if origin == "shipped"} \
        if catalog.user_programs_dir().is_dir() else None
    if shipped is None:
        shipped = {catalog.read_program_file(p).id for p in sorted(catalog.SHIPPED_PROGRAMS.glob("*.toml"))}
    ids: dict[str, str] = {}
    folder = catalog.user_programs_dir()
    if folder.is_dir():
        for path in sorted(folder.glob("*.toml")):
            if path.name not in bundle.programs:
                ids[catalog.read_program_file(path).id] = path.name
    for name, blob in sorted(bundle.programs.items()):
        try:
            program = catalog.parse_program_text(name, blob.decode("utf-8"))
        except UnicodeDecodeError:
            raise BundleError(bundle.path, f"program file {name} is not UTF-8 text") from None
        except ValidationError as exc:
            raise BundleError(bundle.path, f"program file {exc}") from None
        if program.id in shipped:
            raise BundleError(bundle.path, f"program file {name} reuses the shipped program id {program.id!r}")
        if program.id in ids:
            raise BundleError(bundle.path, f"program file {name} reuses the id {program.id!r} of {ids[program.id]}")
        ids[program.id] = name


def merge(store: Store, path: Path | str) -> MergeResult:
    """Verify one bundle completely, then apply what is new in one transaction."""
    return merge_many(store, [path])[0]


def merge_many(store: Store, paths: list[Path | str],
               progress: Callable[[int, int], None] | None = None) -> list[MergeResult]:
    """Verify every bundle completely, then apply them in the order given in one transaction.

    One refused bundle (damaged, hostile, out of order) changes nothing at all. A device bundle
    whose whole range this store already holds is verified (every member's size and SHA-256) but
    its entries are not decoded again: there is nothing new in it. Media originals are stored once
    every check has passed, just before the commit; program files carried by office bundles are
    written after it.
    """
    now_ms = int(store.wall() * 1000)

    def signed(manifest: dict[str, Any], raw: bytes, sig: bytes | None) -> str | None:
        return trust.signature_problem(store, manifest, raw, sig)

    def known_journal(sha: str) -> bool:
        return store.conn.execute("SELECT 1 FROM meta WHERE key = ?", (JOURNAL_SEEN + sha,)).fetchone() is not None

    total = 2 * len(paths) + 1  # check each, apply each, then store the media and commit
    tick = progress or (lambda done, total: None)
    bundles: list[CheckedBundle] = []
    with gc_paused():
        for path in paths:
            bundles.append(_checked(path, lambda device: contiguous_seq(store, device), signed, now_ms, known_journal))
            tick(len(bundles), total)
    programs: dict[str, bytes] = {}
    media: dict[str, tuple[Path, str]] = {}
    written: dict[str, set[str]] = defaultdict(set)
    conn = store.conn
    enforcing = conn.execute("PRAGMA foreign_keys").fetchone()[0]
    conn.execute("PRAGMA foreign_keys = OFF")  # checked below for the written rows only (a no-op inside a transaction)
    try:
        with gc_paused(), store.transaction():
            conn.execute("PRAGMA defer_foreign_keys = ON")
            try:
                results = []
                for bundle in bundles:
                    results.append(_apply(store, bundle, programs, media, written))
                    tick(len(bundles) + len(results), total)
            except (sqlite3.Error, KeyError, TypeError, ValueError) as exc:  # rolled back; still one clear line
                if isinstance(exc, ValidationError):
                    raise
                raise BundleError(" + ".join(b.path.name for b in bundles),
                                  f"could not be merged ({type(exc).__name__}: {str(exc)[:200]}); nothing was "
                                  "changed") from None
            if problems := dangling_references(conn, written):
                raise BundleError(" + ".join(b.path.name for b in bundles),
                                  f"would leave records pointing at nothing: {'; '.join(problems)}")
            if written.get("components") and any_tag_collision(store):
                results[-1].collisions = len(tag_collisions(store, written["components"]))
            conn.executemany("INSERT OR IGNORE INTO meta(key, value) VALUES (?, ?)",
                             [(JOURNAL_SEEN + b.journal_sha256, b.manifest["device_id"]) for b in bundles
                              if b.manifest["kind"] == "device" and b.entries_decoded])
            lib = library(store)
            for sha, (source, name) in sorted(media.items()):  # stored (and synced) before the rows that name them
                lib.put(read_member(source, name, sha), sha)
        tick(total, total)
    finally:
        conn.execute(f"PRAGMA foreign_keys = {'ON' if enforcing else 'OFF'}")
    folder = catalog.user_programs_dir()
    for name, blob in programs.items():
        target = folder / name
        if not target.exists() or target.read_bytes() != blob:
            write_bytes(target, blob)
            results[-1].notes.append(f"program file {name} updated")
    return results


def _checked(path: Path | str, held, signed, now_ms: int, known_journal) -> CheckedBundle:
    """``check`` with one more guarantee: whatever goes wrong reading a file ends in one BundleError line."""
    try:
        return check(path, held=held, trust=signed, now_ms=now_ms, known_journal=known_journal)
    except ValidationError:
        raise
    except (Exception, RecursionError) as exc:  # a case the checks above do not name: still one clear line
        raise BundleError(path, f"could not be checked ({type(exc).__name__}: {str(exc)[:200]}); nothing was "
                          "changed") from None


def any_tag_collision(store: Store) -> bool:
    """True when two live components of a site share a tag (one pass over the (site, tag) index)."""
    return store.conn.execute("SELECT 1 FROM components INDEXED BY components_site_tag_live WHERE deleted = 0 "
                              "GROUP BY site_id, tag HAVING COUNT(*) > 1 LIMIT 1").fetchone() is not None


def tag_collisions(store: Store, among: set[str] | None = None) -> list[dict[str, Any]]:
    """Live components sharing a site and tag (two devices tagged the same component), oldest id first.

    ``among`` limits the answer to collisions involving these component ids. Resolve one with
    ``plumebook resolve join`` or ``plumebook resolve retag`` (``fieldapp.store.resolve``).
    """
    sql = ("SELECT c.site_id, s.name AS site, c.tag, json_group_array(c.id) AS ids FROM "
           "(SELECT site_id, tag, id FROM components WHERE deleted = 0 ORDER BY id) c "
           "JOIN sites s ON s.id = c.site_id GROUP BY c.site_id, c.tag HAVING COUNT(*) > 1 ORDER BY s.name, c.tag")
    rows = store.rows(sql)
    for row in rows:
        row["component_ids"] = loads(row.pop("ids"))
    if among is not None:
        rows = [r for r in rows if among.intersection(r["component_ids"])]
    return rows


def dangling_references(conn: sqlite3.Connection, written: dict[str, set[str]]) -> list[str]:
    """Foreign keys of the written records that point at no record (at most five named).

    Records are never removed (deletes are tombstones), so checking the written records' own
    references covers everything a merge can break; it replaces SQLite's per-row check, which
    doubled the cost of writing the rows (tests/bench/bench_merge.py).
    """
    problems: list[str] = []
    for tbl in TABLE_ORDER:
        ids = written.get(tbl)
        if not ids:
            continue
        keys = dumps(sorted(ids))
        for fk in conn.execute(f"PRAGMA foreign_key_list({tbl})").fetchall():
            parent, column, target = fk[2], fk[3], fk[4] or "id"
            for row_id, value in conn.execute(
                    f"SELECT c.id, c.{column} FROM json_each(?) t CROSS JOIN {tbl} c ON c.id = t.value "
                    f"LEFT JOIN {parent} p ON p.{target} = c.{column} "
                    f"WHERE c.{column} IS NOT NULL AND p.{target} IS NULL LIMIT 5", (keys,)):
                problems.append(f"{tbl[:-1]} {row_id}: {column} {value} is not in {parent}")
    return problems[:5]


def _apply(store: Store, bundle: CheckedBundle, programs: dict[str, bytes], media: dict[str, tuple[Path, str]],
           written: dict[str, set[str]]) -> MergeResult:
    m = bundle.manifest
    result = MergeResult(bundle.path, m["kind"], m["device_id"])
    new = _new_entries(store, bundle)
    result.new_entries = len(new)
    lib = library(store)
    needed = {e["new"]["sha256"] for e in new if e["tbl"] == "media" and e["new"]}
    for sha in sorted(needed):
        if not lib.original(sha).exists() and sha not in media:
            media[sha] = (bundle.path, f"media/{sha}")
            result.media += 1
    if new:
        plain = [p for e in new for p in (expand(e) if e["op"] == BATCH_OP else (e,))]
        known = entries_for(store, {e["row_id"] for e in plain})
        head = itemgetter(*ENTRY_COLUMNS[:8])
        store.conn.executemany(
            f"INSERT OR IGNORE INTO journal ({', '.join(ENTRY_COLUMNS)}) VALUES ({', '.join('?' * 10)})",
            [(*head(e), None if e["old"] is None else dumps(e["old"]), None if e["new"] is None else dumps(e["new"]))
             for e in new])
        store.clock.observe(Stamp.parse(max(e["hlc"] for e in new)))
        try:
            result.rows, result.conflicts = rebuild(store, plain, known, written)
        except HistoryMismatch as exc:
            raise BundleError(bundle.path, str(exc)) from None
    if m["kind"] == "office":
        store.conn.execute("INSERT INTO meta(key, value) VALUES (?, ?) ON CONFLICT(key) DO UPDATE SET "
                           "value = MAX(CAST(value AS INTEGER), CAST(excluded.value AS INTEGER))",
                           (ACK_KEY, str(m["ack_seq"])))
        programs.update(bundle.programs)
    return result


class HistoryMismatch(ValueError):
    """An entry's old values are not values its record ever held: it was not written against this record."""


def replay(entries: list[dict[str, Any]]) -> tuple[dict[str, Any] | None, list[tuple]]:
    """A record's state from its entries (sorted by hlc), and its conflicts (field, winner, loser).

    An update or delete must come after the record's insert, and the old value of each field it
    changes must be a value that field held before it (by stamp order): otherwise HistoryMismatch.
    """
    state: dict[str, Any] | None = None
    writer: dict[str, dict[str, Any]] = {}
    inserts: list[dict[str, Any]] = []
    later: dict[str, list] = defaultdict(list)  # values fields took after the insert
    conflicts = []
    for e in entries:
        if e["op"] == "insert" or state is None:
            if e["op"] != "insert":
                raise HistoryMismatch(f"{entry_name(e)} changes a record no entry created")
            state = dict(e["new"]) if state is None else {**e["new"], **state}
            for k in state:
                writer[k] = e
            inserts.append(e["new"])
            continue
        old, new = e["old"] or {}, e["new"] or {}
        for key, value in new.items():
            was = old.get(key)
            if was == value:
                continue
            if not any(i.get(key) == was for i in inserts) and was not in later[key]:
                raise HistoryMismatch(f"{entry_name(e)}: its old {key} {str(was)[:40]!r} was never a value "
                                      "of that record")
            previous = writer.get(key)
            if previous is not None and previous["device_id"] != e["device_id"] and was != state.get(key) \
                    and value != state.get(key):
                conflicts.append((key, e, previous, state.get(key)))
            state[key] = value
            writer[key] = e
            later[key].append(value)
    return state, conflicts


def rebuild(store: Store, new: list[dict[str, Any]], known: list[dict[str, Any]],
            written: dict[str, set[str]] | None = None) -> tuple[int, int]:
    """Rebuild the records the new entries touch from all their entries; returns (rows written, conflicts).

    ``new`` are the merged entries and ``known`` the entries the store held before for the same
    records (both with batch entries expanded to one insert per record).
    """
    conn = store.conn
    grouped: dict[tuple[str, str], list[dict[str, Any]]] = defaultdict(list)
    held = {(e["device_id"], e["seq"], e["row_id"]) for e in known}
    for e in known:
        grouped[(e["tbl"], e["row_id"])].append(e)
    for e in new:  # an entry already held and merged again counts once
        if not held or (e["device_id"], e["seq"], e["row_id"]) not in held:
            grouped[(e["tbl"], e["row_id"])].append(e)
    by_table: dict[str, list[dict[str, Any]]] = defaultdict(list)
    conflict_rows = []
    replayed: list[tuple[str]] = []  # their conflicts are those of this full replay, whatever was seen before
    for (tbl, row_id), entries in grouped.items():
        if len(entries) == 1 and entries[0]["op"] == "insert":  # new to this store, inserted once
            by_table[tbl].append(entries[0]["new"])
            continue
        entries.sort(key=itemgetter("hlc"))
        state, conflicts = replay(entries)
        replayed.append((row_id,))
        if state is not None:
            by_table[tbl].append(state)
        for key, winner, loser, _value in conflicts:
            conflict_rows.append((tbl, row_id, key, winner["device_id"], winner["seq"],
                                  json.dumps(winner["new"].get(key)), loser["device_id"], loser["seq"],
                                  json.dumps(loser["new"].get(key) if loser["new"] else None)))
    count = 0
    for tbl in TABLE_ORDER:
        rows = by_table.get(tbl)
        if not rows:
            continue
        columns = [c[1] for c in conn.execute(f"PRAGMA table_info({tbl})")]
        cols = [c for c in columns if c in rows[0]]
        if LIST_COLUMNS.intersection(cols):
            rows = [to_sql(r) for r in rows]
        values = [tuple(map(r.get, cols)) for r in rows]
        placeholders = ", ".join("?" * len(cols))
        if tbl == "actions":
            sql = f"INSERT OR IGNORE INTO actions ({', '.join(cols)}) VALUES ({placeholders})"
        else:
            updates = ", ".join(f"{c} = excluded.{c}" for c in cols if c != "id")
            sql = (f"INSERT INTO {tbl} ({', '.join(cols)}) VALUES ({placeholders}) "
                   f"ON CONFLICT(id) DO UPDATE SET {updates}")
        conn.executemany(sql, values)
        count += len(rows)
        if written is not None:
            written[tbl].update(r["id"] for r in rows)
    conn.executemany("DELETE FROM conflicts WHERE row_id = ?", replayed)
    conn.executemany("INSERT OR IGNORE INTO conflicts VALUES (?,?,?,?,?,?,?,?,?)", conflict_rows)
    return count, len(conflict_rows)


def conflicts(store: Store) -> list[dict[str, Any]]:
    """Every concurrent edit resolved by the merge rule, with both values."""
    return store.rows("SELECT * FROM conflicts ORDER BY tbl, row_id, field")
