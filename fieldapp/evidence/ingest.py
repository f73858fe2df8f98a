"""Adding photos and clips to a leak, and markers to photos.

Order of work (so a crash leaves nothing, or a complete original without a row, never a row
without its file): read and check the bytes; decode the derivatives in memory; write the original
(temp file, fsync, rename); write the derivatives; then insert the media row and its markers in
one transaction. The marked-up copy is drawn right after, so reports only have to place it.
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from dataclasses import dataclass, field
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


@dataclass
class Prepared:
    """One checked file, decoded and ready to store: nothing of it is on disk yet."""

    media: PhotoRef
    points: list[Marker]
    data: bytes
    copies: dict[str, bytes] = field(default_factory=dict)


def _marked_key(markers: Sequence[Any]) -> str:
    # "label-2": copies drawn since the marker label was enlarged get a new name, so old ones are redrawn
    drawn = "label-2" + repr([(m["x"], m["y"], m["label"]) for m in markers])
    return hashlib.sha256(drawn.encode()).hexdigest()[:12]


def prepare_media(store: Store, leak_id: str, data: bytes, name: str = "",
                  markers: Sequence[tuple[float, float, str]] = (), actor: str = "",
                  leak_exists: bool = True) -> Prepared:
    """Check one photo or clip and make every copy in memory (the marked-up one too); writes nothing.

    ``leak_exists=False`` is for a leak saved in the same transaction as its photos (leak_save).
    """
    if leak_exists:
        try:
            store.get("leaks", leak_id)
        except NotFoundError:
            raise ValidationError([FieldProblem("leak", f"no leak with id {leak_id!r}")]) from None
    found = probe(data, name)
    if found.media_kind != "photo" and markers:
        raise ValidationError([FieldProblem("marker", f"{Path(name).name}: markers go on photos, not on clips")])
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
    copies = derivatives.make(data, name) if found.media_kind == "photo" else {}
    if points:  # drawn now, before anything is stored, so a failure leaves nothing behind
        plain = [as_plain(p) for p in points]
        copies[f"marked-{_marked_key(plain)}"] = derivatives.marked(
            copies["report"], [derivatives.Point(m["x"], m["y"], m["label"]) for m in plain])
    return Prepared(media, points, data, copies)


def write_files(store: Store, items: Sequence[Prepared]) -> list[Path]:
    """Store the originals and copies of checked files (temp, fsync, rename); returns the files created."""
    lib = library(store)
    created: list[Path] = []
    try:
        for item in items:
            sha = item.media.sha256
            target = lib.original(sha)
            if not target.exists():
                created.append(target)
            lib.put(item.data, sha)
            for kind, blob in item.copies.items():
                path = lib.derivative(sha, kind)
                if not path.exists():
                    created.append(path)
                write_bytes(path, blob)
    except BaseException:
        remove_files(created)
        raise
    return created


def remove_files(paths: Sequence[Path]) -> None:
    """Remove files this action created (after a refused or failed write)."""
    for path in paths:
        path.unlink(missing_ok=True)


def record_media(store: Store, items: Sequence[Prepared], actor: str = "") -> None:
    """Write the rows of stored media and their markers (one transaction, or the caller's)."""
    with store.transaction():
        for item in items:
            store.insert("media", as_plain(item.media), actor)
            for point in item.points:
                store.insert("markers", as_plain(point), actor)


def store_prepared(store: Store, items: Sequence[Prepared], actor: str = "") -> list[dict[str, Any]]:
    """Write the originals and copies of checked files, then their rows in one transaction; all or nothing.

    If anything fails, the files this call created are removed again and no row is written.
    """
    created = write_files(store, items)
    try:
        record_media(store, items, actor)
    except BaseException:
        remove_files(created)
        raise
    return [store.get("media", item.media.id) for item in items]


def add_media(store: Store, leak_id: str, data: bytes, name: str = "",
              markers: Sequence[tuple[float, float, str]] = (), actor: str = "") -> dict[str, Any]:
    """Store one photo or clip of a leak with its markers; returns the media row."""
    return store_prepared(store, [prepare_media(store, leak_id, data, name, markers, actor)], actor)[0]


def read_evidence_file(path: Path | str) -> bytes:
    """The bytes of an evidence file; ValidationError naming the path if it cannot be read."""
    from fieldapp.paths import input_file

    path = input_file(path, "file")
    try:
        return path.read_bytes()
    except OSError as exc:
        raise ValidationError([FieldProblem("file", f"{path}: cannot be read ({exc.strerror})")]) from None


def add_file(store: Store, leak_id: str, path: Path | str, markers: Sequence[tuple[float, float, str]] = (),
             actor: str = "") -> dict[str, Any]:
    """Read a file and add it as evidence of a leak."""
    return add_media(store, leak_id, read_evidence_file(path), Path(path).name, markers, actor)


def add_files(store: Store, leak_id: str, paths: Sequence[Path | str],
              markers: Sequence[tuple[float, float, str]] = (), actor: str = "") -> list[dict[str, Any]]:
    """Add several files to a leak, all or nothing: every file is read and checked before any is stored."""
    items = [prepare_media(store, leak_id, read_evidence_file(p), Path(p).name, markers, actor) for p in paths]
    return store_prepared(store, items, actor)


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
        key = _marked_key(markers)
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
