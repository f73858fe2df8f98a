"""Device bundles: one zip file carrying journal entries and the media they reference.

Members::

    manifest.json   format, version, kind, device id, sequence range, created-at, and for every other
                    member its SHA-256 and size; office bundles also carry acknowledgements
    journal.jsonl   one journal entry per line (device_id, seq, hlc, at, actor, tbl, row_id, op, old, new)
    media/<sha256>  each original referenced by a media entry
    programs/<name>.toml   user program files (office bundles)
    manifest.sig    the sender's Ed25519 signature of manifest.json, as hex (sync.trust)

A device bundle holds the device's own entries after the sequence number the office last
acknowledged (``--since auto``), so making it again after a failed hand-over repeats them all.
"""

from __future__ import annotations

import hashlib
import io
import json
import zipfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from fieldapp import catalog
from fieldapp.atomic import write_bytes
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.evidence.ingest import original_bytes
from fieldapp.store.base import JOURNAL_COLUMNS, Store
from sync import trust

FORMAT = "plumebook-bundle"
VERSION = 1
ACK_KEY = "office_ack_seq"
ENTRY_COLUMNS = JOURNAL_COLUMNS
OFFICE_TABLES = ("sites", "components")


@dataclass(frozen=True)
class BundleSummary:
    """What a made bundle holds."""

    path: Path
    kind: str
    device_id: str
    seq_from: int
    seq_to: int
    entries: int
    media: int


def acked_seq(store: Store) -> int:
    """The highest own sequence number the office has acknowledged (0 if none)."""
    row = store.conn.execute("SELECT value FROM meta WHERE key = ?", (ACK_KEY,)).fetchone()
    return int(row[0]) if row else 0


def pending_changes(store: Store) -> int:
    """How many record changes of this device the office has not acknowledged yet.

    An import's batch entry counts once per record it inserted, so the number is what the user changed.
    """
    return store.conn.execute(
        "SELECT COALESCE(SUM(CASE WHEN op = 'insert_batch' THEN json_array_length(new, '$.columns.id') ELSE 1 END), 0) "
        "FROM journal WHERE device_id = ? AND seq > ?", (store.device_id, acked_seq(store))).fetchone()[0]


def _entries(store: Store, where: str, params: tuple) -> list[dict[str, Any]]:
    rows = store.rows(f"SELECT {', '.join(ENTRY_COLUMNS)} FROM journal WHERE {where} ORDER BY device_id, seq", params)
    for row in rows:
        row["old"] = json.loads(row["old"]) if row["old"] else None
        row["new"] = json.loads(row["new"]) if row["new"] else None
    return rows


def _media_hashes(entries: list[dict[str, Any]]) -> list[str]:
    return sorted({e["new"]["sha256"] for e in entries if e["tbl"] == "media" and e["new"]})


def _zip(store: Store, members: dict[str, bytes], manifest: dict[str, Any]) -> bytes:
    manifest["members"] = [{"name": name, "sha256": hashlib.sha256(data).hexdigest(), "size": len(data)}
                           for name, data in sorted(members.items())]
    manifest_bytes = json.dumps(manifest, indent=1, sort_keys=True).encode("utf-8")
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("manifest.json", manifest_bytes)
        zf.writestr("manifest.sig", trust.sign(store, manifest_bytes).hex() + "\n")
        for name, data in sorted(members.items()):
            kind = zipfile.ZIP_STORED if name.startswith("media/") else zipfile.ZIP_DEFLATED
            zf.writestr(zipfile.ZipInfo(name, date_time=(2000, 1, 1, 0, 0, 0)), data, compress_type=kind)
    return out.getvalue()


def _journal_member(entries: list[dict[str, Any]]) -> bytes:
    return "".join(json.dumps(e, sort_keys=True, ensure_ascii=False) + "\n" for e in entries).encode("utf-8")


def make_device_bundle(store: Store, out: Path, since: int | None = None,
                       progress: Callable[[int, int], None] | None = None) -> BundleSummary:
    """Write this device's journal entries after ``since`` (default: the office's acknowledgement).

    ``progress(done, total)`` is called as the media originals are read (total = their count + 1 for the file)."""
    start = acked_seq(store) if since is None else since
    entries = _entries(store, "device_id = ? AND seq > ?", (store.device_id, start))
    members = {"journal.jsonl": _journal_member(entries)}
    hashes = _media_hashes(entries)
    for done, sha in enumerate(hashes):
        members[f"media/{sha}"] = original_bytes(store, sha)
        if progress:
            progress(done + 1, len(hashes) + 1)
    seq_to = entries[-1]["seq"] if entries else start
    manifest = {"format": FORMAT, "version": VERSION, "kind": "device", "device_id": store.device_id,
                "seq_from": start + 1, "seq_to": seq_to, "created_at": store.now_text(), "entries": len(entries)}
    write_bytes(out, _zip(store, members, manifest))
    if progress:
        progress(len(hashes) + 1, len(hashes) + 1)
    return BundleSummary(Path(out), "device", store.device_id, start + 1, seq_to, len(entries), len(hashes))


def make_office_bundle(store: Store, out: Path, for_device: str) -> BundleSummary:
    """Sites, inventory and user programs for an enrolled tablet, with the office's acknowledgement of its entries."""
    enrolled = store.conn.execute("SELECT revoked_at FROM devices WHERE device_id = ? AND role = 'tablet'",
                                  (for_device,)).fetchone()
    if enrolled is None or enrolled[0] is not None:
        state = "is not enrolled here" if enrolled is None else f"was revoked at {enrolled[0]}"
        raise ValidationError([FieldProblem("for_device", f"tablet {for_device} {state}: enrol it with "
                                            "`plumebook enrol DEVICE_ID KEY --name NAME` first")])
    entries = _entries(store, f"tbl IN ({', '.join('?' * len(OFFICE_TABLES))}) AND device_id != ?",
                       (*OFFICE_TABLES, for_device))
    members = {"journal.jsonl": _journal_member(entries)}
    folder = catalog.user_programs_dir()
    if folder.is_dir():
        for path in sorted(folder.glob("*.toml")):
            members[f"programs/{path.name}"] = path.read_bytes()
    row = store.conn.execute("SELECT COUNT(*), MAX(seq) FROM journal WHERE device_id = ?", (for_device,)).fetchone()
    ack = row[1] if row[0] and row[0] == row[1] else 0
    manifest = {"format": FORMAT, "version": VERSION, "kind": "office", "device_id": store.device_id,
                "for_device": for_device, "ack_seq": ack, "seq_from": 0, "seq_to": 0,
                "created_at": store.now_text(), "entries": len(entries)}
    write_bytes(out, _zip(store, members, manifest))
    return BundleSummary(Path(out), "office", store.device_id, 0, 0, len(entries), 0)
