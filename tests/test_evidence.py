"""Photo and clip evidence: exact originals, derivatives, bad input refused, crash safety, verify."""

from __future__ import annotations

import hashlib
import io
import os
import random
import signal
import struct
import subprocess
import sys
import time
from pathlib import Path

import pytest
from PIL import Image

from fieldapp.core.fields import ValidationError
from fieldapp.evidence.ingest import add_file, add_marker, add_media, ensure, library, media_for
from fieldapp.evidence.library import TEMP_MIN_AGE_S
from fieldapp.evidence.verify import verify
from fieldapp.store import ops
from fieldapp.store.base import Store


@pytest.fixture
def leak(store, site):
    survey, _ = ops.start_survey(store, {
        "site_id": site.id, "method": "ogi", "started_at": "2026-11-30T08:00:00-07:00", "operator": "T",
        "qualification": "q", "camera_make": "m", "camera_model": "x", "camera_check": "passed",
        "ambient_temp_c": 5, "sky": "clear", "wind_max_m_s": 2})
    return ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00"},
                        new_component={"tag": "EV-1", "type": "valve", "service": "gas"})


def jpeg(size=(1200, 800), orientation=None, exif_time=None, colour=(200, 60, 20)) -> bytes:
    img = Image.new("RGB", size, colour)
    img.paste((10, 10, 200), (0, 0, size[0] // 4, size[1] // 4))  # a blue block at the top-left
    exif = Image.Exif()
    if orientation:
        exif[0x0112] = orientation
    if exif_time:
        exif[0x0132] = exif_time
    out = io.BytesIO()
    img.save(out, "JPEG", quality=90, exif=exif)
    return out.getvalue()


def originals(store):
    folder = library(store).originals
    return sorted(p for p in folder.rglob("*") if p.is_file()) if folder.exists() else []


def test_original_is_stored_byte_for_byte_and_named_by_its_hash(store, leak):
    data = jpeg(exif_time="2026:11:30 09:05:00")
    row = add_media(store, leak.id, data, "IR_0001.jpg")
    stored = library(store).original(row["sha256"])
    assert stored.read_bytes() == data
    assert row["sha256"] == hashlib.sha256(data).hexdigest() == stored.name
    assert (row["width"], row["height"], row["byte_size"]) == (1200, 800, len(data))
    assert row["captured_at"] == "2026-11-30T09:05:00"  # as found in EXIF, no zone invented
    assert row["added_on_device"] == store.device_id


def test_no_exif_time_means_no_capture_time(store, leak):
    row = add_media(store, leak.id, jpeg(), "plain.jpg")
    assert row["captured_at"] == "" and row["gps_lat"] is None


def test_derivatives_have_expected_size_and_are_upright(store, leak):
    # EXIF orientation 6 = rotate 90° clockwise to display (TIFF/EXIF 2.3 Orientation tag [memory])
    row = add_media(store, leak.id, jpeg((1600, 1000), orientation=6), "rotated.jpg")
    report = Image.open(ensure(store, row, "report"))
    thumb = Image.open(ensure(store, row, "thumb"))
    assert report.size == (1000, 1600)  # upright portrait, longest side 1600
    assert max(thumb.size) == 320 and thumb.size[0] < thumb.size[1]
    # the blue block (top-left of the stored pixels) is at the top-right once upright
    assert report.getpixel((report.width - 20, 20))[2] > 150


def test_derivatives_are_rebuilt_when_missing(store, leak):
    row = add_media(store, leak.id, jpeg(), "a.jpg")
    path = ensure(store, row, "thumb")
    path.unlink()
    assert ensure(store, row, "thumb").exists()


def test_marker_is_stored_normalised_and_drawn_on_a_copy(store, leak):
    data = jpeg((1000, 1000), colour=(0, 0, 0))
    row = add_media(store, leak.id, data, "m.jpg", [(0.5, 0.5, "EV-1")])
    add_marker(store, row["id"], 0.9, 0.9)
    media = media_for(store, leak.id)[0]
    assert [(m["x"], m["y"], m["label"]) for m in media["markers"]] == [(0.5, 0.5, "EV-1"), (0.9, 0.9, "")]
    marked = Image.open(ensure(store, media, "marked"))
    ring = marked.getpixel((500 + 1000 // 14, 500))  # on the ring, one radius right of the centre
    assert min(ring) > 200
    assert library(store).original(row["sha256"]).read_bytes() == data  # original untouched
    with pytest.raises(ValidationError, match="x: must be at most 1"):
        add_marker(store, row["id"], 1.5, 0.2)


def mp4(duration_units=4500, timescale=1000) -> bytes:
    ftyp = struct.pack(">I4s4sI4s", 20, b"ftyp", b"isom", 0, b"isom")
    mvhd_body = b"\x00\x00\x00\x00" + struct.pack(">IIII", 0, 0, timescale, duration_units) + b"\x00" * 80
    mvhd = struct.pack(">I4s", 8 + len(mvhd_body), b"mvhd") + mvhd_body
    moov = struct.pack(">I4s", 8 + len(mvhd), b"moov") + mvhd
    mdat = struct.pack(">I4s", 16, b"mdat") + b"\x00" * 8
    return ftyp + mdat + moov


def test_clip_is_stored_with_duration_from_its_header(store, leak):
    row = add_media(store, leak.id, mp4(), "clip.mp4")
    assert row["media_kind"] == "video" and row["duration_s"] == 4.5
    assert library(store).original(row["sha256"]).read_bytes() == mp4()


def bomb_png() -> bytes:
    img = Image.new("1", (12_000, 12_000))  # 144 MP, above the 80 MP limit
    out = io.BytesIO()
    img.save(out, "PNG")
    return out.getvalue()


def gif() -> bytes:
    out = io.BytesIO()
    Image.new("RGB", (10, 10)).save(out, "GIF")
    return out.getvalue()


@pytest.mark.parametrize("name, data, words", [
    ("notes.txt", b"this is not an image at all", "not an image"),
    ("empty.jpg", b"", "is empty"),
    ("cut.jpg", jpeg((2000, 1500))[:30_000], "truncated"),
    ("bomb.png", bomb_png(), "decompression bomb"),
    ("anim.gif", gif(), "not supported"),
])
def test_bad_input_is_refused_and_nothing_is_written(store, leak, name, data, words):
    before = store.conn.execute("SELECT COUNT(*) FROM journal").fetchone()[0]
    with pytest.raises(ValidationError, match=words):
        add_media(store, leak.id, data, name)
    assert store.conn.execute("SELECT COUNT(*) FROM journal").fetchone()[0] == before
    assert not store.rows("SELECT 1 FROM media")
    assert originals(store) == []


def test_verify_finds_a_flipped_byte_and_a_deleted_file(store, leak, capsys):
    from fieldapp.cli import main

    a = add_media(store, leak.id, jpeg(colour=(1, 2, 3)), "a.jpg")
    b = add_media(store, leak.id, jpeg(colour=(4, 5, 6)), "b.jpg")
    assert verify(store).ok
    path_a = library(store).original(a["sha256"])
    raw = bytearray(path_a.read_bytes())
    raw[len(raw) // 2] ^= 0x01
    path_a.write_bytes(bytes(raw))
    library(store).original(b["sha256"]).unlink()
    report = verify(store)
    assert any("altered original" in p and a["id"] in p for p in report.problems)
    assert any("missing original" in p and b["id"] in p for p in report.problems)
    assert main(["--db", str(store.path), "verify"]) == 1
    assert "PROBLEM" in capsys.readouterr().out


CHILD = """
import sys, io
from fieldapp.store.base import Store
from fieldapp.evidence.ingest import add_media
from PIL import Image
store = Store(sys.argv[1])
leak = sys.argv[2]
n = 0
while True:
    img = Image.new("RGB", (1600, 1200), (n % 255, 80, 160))
    out = io.BytesIO(); img.save(out, "JPEG"); n += 1
    add_media(store, leak, out.getvalue(), f"loop-{n}.jpg", [(0.5, 0.5, "EV-1")])
"""


def test_killed_ingest_never_leaves_a_row_without_its_file(store, leak, tmp_path):
    path = str(store.path)
    store.close()
    rng = random.Random(11)
    env = {**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parent.parent)}
    for _ in range(6):
        child = subprocess.Popen([sys.executable, "-c", CHILD, path, leak.id], env=env)
        time.sleep(rng.uniform(0.6, 1.6))
        child.send_signal(signal.SIGKILL)
        child.wait()
        reopened = Store(path)
        report = verify(reopened)
        assert report.ok, report.problems
        for row in reopened.rows("SELECT sha256 FROM media"):
            assert library(reopened).original(row["sha256"]).exists()
        reopened.close()
    final = Store(path)
    assert final.rows("SELECT COUNT(*) AS n FROM media")[0]["n"] > 0
    verify(final, now=time.time() + TEMP_MIN_AGE_S + 1)  # an hour on: temp files of the killed adds go
    assert not list(library(final).originals.rglob(".plumebook-tmp-*"))


def test_evidence_commands(store, leak, tmp_path, capsys):
    from fieldapp.cli import main

    photo = tmp_path / "IR_7.jpg"
    photo.write_bytes(jpeg())
    assert main(["--db", str(store.path), "evidence", "add", "--leak", leak.id, str(photo),
                 "--marker", "0.4,0.6"]) == 0
    assert main(["--db", str(store.path), "evidence", "list", "--leak", leak.id, "--json"]) == 0
    out = capsys.readouterr().out
    assert "IR_7.jpg" in out and '"label": "EV-1"' in out
    bad = tmp_path / "bad.jpg"
    bad.write_bytes(b"nope")
    assert main(["--db", str(store.path), "evidence", "add", "--leak", leak.id, str(bad)]) == 2


def test_add_file_reads_from_disk(store, leak, tmp_path):
    photo = tmp_path / "x.png"
    Image.new("RGB", (64, 48), (9, 9, 9)).save(photo)
    row = add_file(store, leak.id, photo)
    assert row["content_type"] == "image/png" and (row["width"], row["height"]) == (64, 48)
    reopened = Store(store.path)
    assert reopened.get("media", row["id"])["sha256"] == row["sha256"]
