"""Saving a leak with its photos as one user action.

Every photo is checked and its original stored first (files: temp, fsync, rename). Then one
transaction writes the leak (and a tag new on the spot), every media row with its markers, and
clears the form's draft. A kill before the commit leaves the draft and its pending photo files as
they were (the leak is not there); a kill after it leaves the leak with all its photos. Pending
files are removed only after the commit.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from fieldapp.core.records import Leak
from fieldapp.evidence.ingest import prepare_media, read_evidence_file, record_media, remove_files, write_files
from fieldapp.store import ops
from fieldapp.store.base import Store, new_id
from fieldapp.store.drafts import clear_draft


@dataclass(frozen=True)
class PhotoIn:
    """A photo or clip waiting to be saved with its leak: its bytes' file, name and marker, if any."""

    path: Path
    name: str
    marker: tuple[float, float] | None = None


def save_leak_with_media(store: Store, values: Mapping[str, Any], new_component: Mapping[str, Any] | None,
                         photos: Sequence[PhotoIn], marker_label: str = "", actor: str = "",
                         draft: str = "") -> Leak:
    """Record a leak and all its photos in one transaction (clearing ``draft`` in it); returns the leak.

    A photo that fails its check refuses the whole save (ValidationError naming the file); nothing is
    written and the draft is kept.
    """
    leak_id = str(values.get("id") or new_id())
    prepared = []
    for photo in photos:
        data = read_evidence_file(photo.path)
        marks = [(photo.marker[0], photo.marker[1], marker_label)] if photo.marker else []
        prepared.append(prepare_media(store, leak_id, data, photo.name, marks, actor, leak_exists=False))
    created = write_files(store, prepared)  # marked-up copies are drawn in prepare_media, before this
    try:
        with store.transaction():
            leak = ops.add_leak(store, {**values, "id": leak_id}, new_component, actor=actor)
            record_media(store, prepared, actor)
            if draft:
                clear_draft(store, draft)
    except Exception:
        remove_files(created)  # the pending photo files are kept: the draft still names them
        raise
    for photo in photos:  # the originals are in the library now
        Path(photo.path).unlink(missing_ok=True)
    return leak
