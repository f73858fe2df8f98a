"""Helpers for sync tests: a dump of a whole store, and forged bundles signed by a chosen store."""

from __future__ import annotations

import hashlib
import json
import zipfile
from pathlib import Path

from fieldapp.evidence.ingest import library
from fieldapp.store.base import Store
from sync import trust


def snapshot(store: Store) -> dict:
    """Every table of the store, row by row, and every file of its media folder with its SHA-256."""
    out: dict = {}
    for (table,) in store.conn.execute("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name"):
        out[table] = sorted(map(repr, store.conn.execute(f"SELECT * FROM {table}")))
    root = library(store).root
    out["media files"] = sorted((str(p.relative_to(root)), hashlib.sha256(p.read_bytes()).hexdigest())
                                for p in root.rglob("*") if p.is_file()) if root.exists() else []
    return out


def members_of(path: Path) -> dict[str, bytes]:
    with zipfile.ZipFile(path) as zf:
        return {name: zf.read(name) for name in zf.namelist()}


def entries_of(path: Path) -> list[dict]:
    return [json.loads(line) for line in members_of(path)["journal.jsonl"].splitlines()]


def forge(good: Path, out: Path, signer: Store | None, entries=None, manifest=None, members=None,
          compress: dict[str, int] | None = None) -> Path:
    """Copy a bundle, editing its entries / manifest / members, with hashes made to match, signed by ``signer``.

    ``entries(list)`` edits the decoded journal in place (the manifest's count and range follow);
    ``manifest(dict)`` edits the manifest after that; ``members(dict)`` edits the member bytes.
    """
    data = members_of(good)
    m = json.loads(data.pop("manifest.json"))
    data.pop("manifest.sig", None)
    if entries is not None:
        es = [json.loads(line) for line in data["journal.jsonl"].splitlines()]
        entries(es)
        data["journal.jsonl"] = b"".join(json.dumps(e).encode() + b"\n" for e in es)
        m["entries"] = len(es)
        if m["kind"] == "device" and es:
            m["seq_to"] = max(m["seq_to"], max(e["seq"] for e in es))
    if members is not None:
        members(data)
    m["members"] = [{"name": n, "sha256": hashlib.sha256(b).hexdigest(), "size": len(b)}
                    for n, b in sorted(data.items())]
    if manifest is not None:
        manifest(m)
    raw = json.dumps(m, indent=1).encode()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("manifest.json", raw)
        if signer is not None:
            zf.writestr("manifest.sig", trust.sign(signer, raw).hex())
        for name, blob in sorted(data.items()):
            zf.writestr(name, blob, compress_type=(compress or {}).get(name, zipfile.ZIP_DEFLATED))
    return out


def next_entry(es: list[dict], **values) -> dict:
    """A new entry after the last one of a device bundle (next sequence number, next stamp)."""
    last = es[-1]
    millis, counter, device = last["hlc"].split("-", 2)
    entry = {**last, "seq": last["seq"] + 1, "hlc": f"{millis}-{int(counter) + 1:06d}-{device}", **values}
    es.append(entry)
    return entry
