"""Saving a leak with its photos is one user action: a kill at any point loses nothing.

After a kill the store holds either the leak with all of its photos (and no draft), or no leak and
the draft with every pending photo file - never a leak with some photos and the draft gone.
"""

from __future__ import annotations

import io
import json
import subprocess
import sys
import textwrap

import pytest
from PIL import Image

from fieldapp.core.fields import ValidationError
from fieldapp.evidence.ingest import library
from fieldapp.evidence.leak_save import PhotoIn, save_leak_with_media
from fieldapp.store import ops
from fieldapp.store.base import Store
from fieldapp.store.drafts import load_draft, save_draft

DRAFT = "leak:test"


def jpeg(colour) -> bytes:
    out = io.BytesIO()
    Image.new("RGB", (640, 480), colour).save(out, "JPEG")
    return out.getvalue()


@pytest.fixture
def survey(store, site):
    survey, _ = ops.start_survey(store, {
        "site_id": site.id, "method": "ogi", "started_at": "2026-11-30T08:00:00-07:00", "operator": "T",
        "qualification": "q", "camera_make": "m", "camera_model": "x", "camera_check": "passed",
        "ambient_temp_c": 5, "sky": "clear", "wind_max_m_s": 2})
    return survey


def pending_photos(store, n=3) -> list[PhotoIn]:
    folder = library(store).root / "pending"
    folder.mkdir(parents=True, exist_ok=True)
    photos = []
    for i in range(n):
        path = folder / f"p{i}.jpg"
        path.write_bytes(jpeg((40 * i, 90, 200)))
        photos.append(PhotoIn(path, f"IR_{i}.jpg", (0.5, 0.5) if i == 0 else None))
    save_draft(store, DRAFT, {"tag": "KILL-1", "pending": [{"path": str(p.path), "name": p.name} for p in photos]})
    return photos


def test_leak_and_three_photos_in_one_transaction(store, survey):
    photos = pending_photos(store)
    seq_before = store.conn.execute("SELECT COALESCE(MAX(seq), 0) FROM journal").fetchone()[0]
    leak = save_leak_with_media(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00"},
                                {"tag": "KILL-1", "type": "valve", "service": "gas"}, photos, "KILL-1", draft=DRAFT)
    assert len(store.rows("SELECT id FROM media WHERE leak_id = ?", (leak.id,))) == 3
    assert load_draft(store, DRAFT) is None
    assert not any(p.path.exists() for p in photos)
    # one transaction: the new tag, the leak, 3 media rows and the first photo's marker, in that order
    tables = [r["tbl"] for r in store.rows("SELECT tbl FROM journal WHERE seq > ? ORDER BY seq", (seq_before,))]
    assert tables == ["components", "leaks", "media", "markers", "media", "media"]


def test_a_bad_photo_refuses_the_whole_save(store, survey):
    photos = pending_photos(store)
    photos[2].path.write_bytes(b"not an image at all")
    with pytest.raises(ValidationError):
        save_leak_with_media(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00"},
                             {"tag": "KILL-1", "type": "valve", "service": "gas"}, photos, "KILL-1", draft=DRAFT)
    assert store.rows("SELECT id FROM leaks") == []
    assert load_draft(store, DRAFT) is not None and all(p.path.exists() for p in photos)


CHILD = textwrap.dedent("""
    import os, sys, json
    from pathlib import Path
    from fieldapp.store.base import Store
    from fieldapp.evidence import leak_save
    from fieldapp.evidence.leak_save import PhotoIn, save_leak_with_media
    db, point, survey_id, photos = sys.argv[1], sys.argv[2], sys.argv[3], json.loads(sys.argv[4])
    store = Store(db, actor="T")
    count = {"media": 0, "put": 0}
    real_insert, real_unlink, real_put = Store.insert, Path.unlink, None
    def insert(self, table, row, actor=""):
        if point == "after-leak-row" and table == "media":
            os._exit(9)
        out = real_insert(self, table, row, actor)
        if table == "media":
            count["media"] += 1
            if point == "mid-media" and count["media"] == 2:
                os._exit(9)
        return out
    Store.insert = insert
    from fieldapp.evidence.library import Library
    real_put = Library.put
    def put(self, data, sha):
        count["put"] += 1
        if point == "second-original" and count["put"] == 2:
            os._exit(9)
        return real_put(self, data, sha)
    Library.put = put
    def unlink(self, missing_ok=False):
        if point == "after-commit":
            os._exit(9)
        return real_unlink(self, missing_ok=missing_ok)
    Path.unlink = unlink
    save_leak_with_media(store, {"survey_id": survey_id, "detected_at": "2026-11-30T09:00:00-07:00"},
                         {"tag": "KILL-1", "type": "valve", "service": "gas"},
                         [PhotoIn(Path(p), f"IR_{i}.jpg") for i, p in enumerate(photos)], "KILL-1", draft="leak:test")
    os._exit(0)
""")


@pytest.mark.parametrize("point", ["second-original", "after-leak-row", "mid-media", "after-commit", "none"])
def test_a_kill_during_the_save_loses_nothing(tmp_path, wall, point):
    from tests.conftest import SITE

    db = tmp_path / "kill.db"
    store = Store(db, actor="T", wall=wall)
    site = ops.add_site(store, SITE)
    survey, _ = ops.start_survey(store, {
        "site_id": site.id, "method": "ogi", "started_at": "2026-11-30T08:00:00-07:00", "operator": "T",
        "qualification": "q", "camera_make": "m", "camera_model": "x", "camera_check": "passed",
        "ambient_temp_c": 5, "sky": "clear", "wind_max_m_s": 2})
    photos = pending_photos(store)
    store.close()
    result = subprocess.run([sys.executable, "-c", CHILD, str(db), point, survey.id,
                             json.dumps([str(p.path) for p in photos])], capture_output=True, text=True)
    assert result.returncode == (0 if point == "none" else 9), result.stderr[-1500:]
    store = Store(db, actor="T", wall=wall)
    leaks = store.rows("SELECT id FROM leaks")
    draft = load_draft(store, DRAFT)
    if leaks:  # the whole save committed: the leak with all three photos, each original stored
        media = store.rows("SELECT sha256 FROM media WHERE leak_id = ?", (leaks[0]["id"],))
        assert len(media) == 3 and draft is None
        assert all(library(store).original(m["sha256"]).exists() for m in media)
        assert point in ("after-commit", "none")
    else:  # nothing committed: the draft and every pending photo file are still there
        assert draft is not None and len(draft["pending"]) == 3
        assert all(p.path.exists() for p in photos)
        assert store.rows("SELECT id FROM media") == [] and store.rows("SELECT id FROM components") == []
    store.close()
