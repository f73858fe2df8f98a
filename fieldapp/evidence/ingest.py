"""Adding photos and clips to a leak, and markers to photos.

Order of work (so a crash leaves nothing, or a complete original without a row, never a row
without its file): read and check the bytes; decode the derivatives in memory; write the original
(temp file, fsync, rename); write the derivatives; then insert the media row and its markers in
one transaction. The marked-up copy is drawn right after, so reports only have to place it.
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from fieldapp.atomic import write_bytes
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.core.records import Marker, PhotoRef, as_plain, parse_record
from fieldapp.evidence import derivatives
from fieldapp.evidence.library import Library
from fieldapp.evidence.probe import probe
from fieldapp.store.base import NotFoundError, Store, new_id


def library(store: Store) -> Library:
    """The media folder of a store."""
    return Library(store.path)


def original_bytes(store: Store, sha: str) -> bytes:
    """The bytes of one original; ValidationError naming the media folder (or file) when it is missing."""
    lib = library(store)
    if not lib.originals.is_dir():
        raise ValidationError([FieldProblem("media folder", f"{lib.originals} is missing: copy the store's media "
                                            f"folder ({lib.root.name}/) beside {store.path.name} and try again")])
    path = lib.original(sha)
    if not path.is_file():
        raise ValidationError([FieldProblem("media folder", f"original {path} is missing: restore it from a backup "
                                            "of the media folder (`plumebook verify` lists every missing file)")])
    return path.read_bytes()


def _parse(cls: type, values: dict[str, Any]) -> Any:
    record, problems = parse_record(cls, values)
    if problems:
        raise ValidationError(problems)
    return record


def add_media(store: Store, leak_id: str, data: bytes, name: str = "",
              markers: Sequence[tuple[float, float, str]] = (), actor: str = "") -> dict[str, Any]:
    """Store one photo or clip of a leak with its markers; returns the media row."""
    try:
        store.get("leaks", leak_id)
    except NotFoundError:
        raise ValidationError([FieldProblem("leak_id", f"no leak with id {leak_id!r}")]) from None
    found = probe(data, name)
    if found.media_kind != "photo" and markers:
        raise ValidationError([FieldProblem("marker", "markers go on photos, not on clips")])
    copies = derivatives.make(data, name) if found.media_kind == "photo" else {}
    sha = hashlib.sha256(data).hexdigest()
    media = _parse(PhotoRef, {
        "id": new_id(), "leak_id": leak_id, "sha256": sha, "media_kind": found.media_kind,
        "original_name": Path(name).name, "byte_size": len(data), "content_type": found.content_type,
        "captured_at": found.captured_at, "gps_lat": found.gps_lat, "gps_lon": found.gps_lon,
        "width": found.width, "height": found.height, "duration_s": found.duration_s,
        "added_by": actor or store.actor, "added_on_device": store.device_id, "added_at": store.now_text(),
    })
    points = [_parse(Marker, {"id": new_id(), "media_id": media.id, "x": x, "y": y, "label": label})
              for x, y, label in markers]
    lib = library(store)
    lib.put(data, sha)
    for kind, blob in copies.items():
        write_bytes(lib.derivative(sha, kind), blob)
    with store.transaction():
        store.insert("media", as_plain(media), actor)
        for point in points:
            store.insert("markers", as_plain(point), actor)
    row = store.get("media", media.id)
    if points:  # drawn now, while the photo is fresh, so reports only place it
        ensure(store, row, "marked")
    return row


def add_file(store: Store, leak_id: str, path: Path | str, markers: Sequence[tuple[float, float, str]] = (),
             actor: str = "") -> dict[str, Any]:
    """Read a file and add it as evidence of a leak."""
    path = Path(path)
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise ValidationError([FieldProblem("file", f"{path}: cannot be read ({exc.strerror})")]) from None
    return add_media(store, leak_id, data, path.name, markers, actor)


def add_marker(store: Store, media_id: str, x: float, y: float, label: str = "", actor: str = "") -> dict:
    """Mark where the leak is on a photo (normalised coordinates); the original is never altered."""
    media = store.get("media", media_id)
    if media["media_kind"] != "photo":
        raise ValidationError([FieldProblem("media_id", "markers go on photos, not on clips")])
    marker = _parse(Marker, {"id": new_id(), "media_id": media_id, "x": x, "y": y, "label": label})
    with store.transaction():
        store.insert("markers", as_plain(marker), actor)
    ensure(store, media, "marked")
    return as_plain(marker)


def media_for(store: Store, leak_id: str) -> list[dict[str, Any]]:
    """Live media rows of a leak with their live markers, oldest first."""
    rows = store.rows("SELECT * FROM media WHERE leak_id = ? AND deleted = 0 ORDER BY added_at, id", (leak_id,))
    for row in rows:
        row["markers"] = store.rows("SELECT id, x, y, label FROM markers WHERE media_id = ? AND deleted = 0 "
                                    "ORDER BY rowid", (row["id"],))
    return rows


def ensure(store: Store, media: dict[str, Any], kind: str) -> Path:
    """Path of a derivative ('thumb', 'report' or 'marked'), rebuilt from the original if missing."""
    lib = library(store)
    sha = media["sha256"]
    if kind == "marked":
        markers = media.get("markers")
        if markers is None:
            markers = store.rows("SELECT x, y, label FROM markers WHERE media_id = ? AND deleted = 0 ORDER BY rowid",
                                 (media["id"],))
        key = hashlib.sha256(repr([(m["x"], m["y"], m["label"]) for m in markers]).encode()).hexdigest()[:12]
        path = lib.derivative(sha, f"marked-{key}")
        if not path.exists():
            report = ensure(store, media, "report").read_bytes()
            points = [derivatives.Point(m["x"], m["y"], m["label"]) for m in markers]
            write_bytes(path, derivatives.marked(report, points))
        return path
    path = lib.derivative(sha, kind)
    if not path.exists():
        copies = derivatives.make(original_bytes(store, sha), media.get("original_name", ""))
        for name, blob in copies.items():
            write_bytes(lib.derivative(sha, name), blob)
    return path
