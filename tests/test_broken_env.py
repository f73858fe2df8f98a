"""Broken environments: damaged store, full disk, read-only places, newer schema, locked store, the
verify/ingest race, and an unexpected error. Each ends in one line (or a verify report), never a
traceback, and leaves nothing half-written.
"""

from __future__ import annotations

import errno
import io
import os
import sqlite3
import threading
import time

import pytest
from PIL import Image
from test_bad_inputs import snapshot

from fieldapp import atomic
from fieldapp.cli import main
from fieldapp.evidence.ingest import add_media, library
from fieldapp.evidence.library import TEMP_MIN_AGE_S
from fieldapp.evidence.verify import verify
from fieldapp.store.base import Store
from fieldapp.store.schema import LATEST, SchemaTooNewError


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


def one_line(err: str) -> str:
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("plumebook"), err
    return lines[0]


def jpeg() -> bytes:
    out = io.BytesIO()
    Image.new("RGB", (80, 60), (20, 160, 90)).save(out, "JPEG")
    return out.getvalue()


@pytest.fixture
def demo_db(demo_store):
    """The demo store's path, closed and checkpointed so the main file holds everything."""
    demo_store.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    path = demo_store.path
    demo_store.close()
    return path


def a_leak(db) -> str:
    conn = sqlite3.connect(db)
    try:
        return conn.execute("SELECT id FROM leaks WHERE deleted = 0 ORDER BY id LIMIT 1").fetchone()[0]
    finally:
        conn.close()


# --- damaged database ---

def test_damaged_store_is_reported_by_verify_and_refused_in_one_line(demo_db, capsys):
    data = bytearray(demo_db.read_bytes())
    pages = len(data) // 4096
    data[4096 * 8:4096 * (pages - 1)] = b"\x5a" * (4096 * (pages - 9))  # garbage over most pages
    demo_db.write_bytes(bytes(data))
    code, out, _ = run(capsys, "--db", demo_db, "verify")
    assert code == 1 and "PROBLEM: database:" in out and "malformed" in out
    code, _, err = run(capsys, "--db", demo_db, "leaks")
    assert code == 2 and "damaged" in one_line(err) and str(demo_db) in err


def test_a_store_with_a_damaged_first_page_is_reported(demo_db, capsys):
    data = bytearray(demo_db.read_bytes())
    data[0:100] = b"\x00" * 100  # the SQLite header itself
    demo_db.write_bytes(bytes(data))
    code, out, _ = run(capsys, "--db", demo_db, "verify")
    assert code == 1 and "PROBLEM: database:" in out
    code, _, err = run(capsys, "--db", demo_db, "sites")
    assert code == 2 and str(demo_db) in one_line(err)


# --- full disk ---

class FullDisk(io.RawIOBase):
    def write(self, _data):
        raise OSError(errno.ENOSPC, "No space left on device")

    def writable(self):
        return True


def test_full_disk_on_a_report_leaves_no_file_and_no_temp(demo_db, tmp_path, capsys, monkeypatch):
    survey = sqlite3.connect(demo_db).execute("SELECT id FROM surveys LIMIT 1").fetchone()[0]
    monkeypatch.setattr(atomic.os, "fdopen", lambda fd, mode: (os.close(fd), FullDisk())[1])
    out = tmp_path / "r.pdf"
    code, _, err = run(capsys, "--db", demo_db, "report", "survey", survey, "--out", out)
    assert code == 2 and "disk is full" in one_line(err)
    assert not out.exists() and not list(tmp_path.glob(f"{atomic.TEMP_PREFIX}*"))


def test_full_disk_while_storing_a_photo_stores_nothing(demo_db, tmp_path, capsys, monkeypatch):
    photo = tmp_path / "p.jpg"
    photo.write_bytes(jpeg())
    before = snapshot(demo_db)

    def full(*_a, **_k):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(atomic.os, "fdopen", lambda fd, mode: (os.close(fd), FullDisk())[1])  # derivatives
    code, _, err = run(capsys, "--db", demo_db, "evidence", "add", "--leak", a_leak(demo_db), photo)
    assert code == 2 and "disk is full" in one_line(err)
    assert snapshot(demo_db) == before  # no row, no original, no copy left behind
    monkeypatch.setattr("fieldapp.evidence.library.os.fsync", full)  # the original itself
    code, _, err = run(capsys, "--db", demo_db, "evidence", "add", "--leak", a_leak(demo_db), photo)
    assert code == 2 and "disk is full" in one_line(err)
    assert snapshot(demo_db)[1] == before[1]


def test_a_store_that_fills_up_refuses_the_import_and_keeps_nothing(demo_db, tmp_path, capsys, monkeypatch):
    """SQLite's own 'database or disk is full' (a page limit stands in for the disk)."""
    rows = "".join(f"F-{n:06d},valve,gas,area {n},unit {n}\n" for n in range(20_000))
    csv = tmp_path / "many.csv"
    csv.write_text("tag,type,service,area,equipment\n" + rows)
    before = snapshot(demo_db)
    real = Store.__init__

    def small(self, *a, **k):
        real(self, *a, **k)
        pages = self.conn.execute("PRAGMA page_count").fetchone()[0]
        self.conn.execute(f"PRAGMA max_page_count = {pages + 2}")

    monkeypatch.setattr(Store, "__init__", small)
    code, _, err = run(capsys, "--db", demo_db, "import", "components", csv, "--site", "Orrel Mesa Pad 2")
    assert code == 2 and "disk is full" in one_line(err) and str(demo_db) in err
    monkeypatch.undo()
    assert snapshot(demo_db) == before


# --- read-only places ---

def test_read_only_output_folder_is_refused_before_any_work(demo_db, tmp_path, capsys, monkeypatch):
    """Tests run as root here, where chmod does not stop writes, so the permission check is patched."""
    folder = tmp_path / "locked"
    folder.mkdir()
    real = os.access
    monkeypatch.setattr("fieldapp.paths.os.access",
                        lambda p, mode: False if str(p).startswith(str(folder)) and mode & os.W_OK else real(p, mode))
    for argv in (["bundle", "make", "--out", folder / "b.zip"], ["export", "csv", "--out", folder],
                 ["report", "period", "--from", "2026-01-01", "--to", "2026-06-30", "--out", folder / "p.pdf"]):
        code, _, err = run(capsys, "--db", demo_db, *argv)
        assert code == 2 and "not writable" in one_line(err) and str(folder) in err
    assert list(folder.iterdir()) == []


def good_csv(folder):
    path = folder / "good.csv"
    path.write_text("tag,type,service\nNEW-1,valve,gas\n")
    return path


def test_read_only_store_is_one_line(demo_db, tmp_path, capsys, monkeypatch):
    real = sqlite3.connect
    monkeypatch.setattr("fieldapp.store.base.sqlite3.connect",
                        lambda path, **k: real(f"file:{path}?mode=ro", uri=True, **k))
    code, _, err = run(capsys, "--db", demo_db, "rules", "deadlines", "--program", "us-nsps-oooo-a",
                       "--detected", "2026-05-01")
    assert code == 0  # needs no store
    code, _, err = run(capsys, "--db", demo_db, "import", "components", good_csv(tmp_path), "--site",
                       "Orrel Mesa Pad 2")
    assert code == 2 and "read-only" in one_line(err) and str(demo_db) in err


def test_permission_denied_on_a_write_names_the_path(demo_db, tmp_path, capsys, monkeypatch):
    def denied(*_a, **_k):
        raise PermissionError(errno.EACCES, "Permission denied", str(tmp_path / "b.zip"))

    monkeypatch.setattr(atomic.tempfile, "mkstemp", denied)
    code, _, err = run(capsys, "--db", demo_db, "bundle", "make", "--out", tmp_path / "b.zip", "--since", "0")
    assert code == 2 and "permission denied" in one_line(err) and "b.zip" in err


# --- newer schema ---

def test_a_store_of_a_newer_schema_is_refused_naming_both_versions(demo_db, tmp_path, capsys):
    conn = sqlite3.connect(demo_db)
    conn.execute("UPDATE meta SET value = '99' WHERE key = 'schema_version'")
    conn.commit()
    conn.close()
    before, raw = snapshot(demo_db), demo_db.read_bytes()
    csv = tmp_path / "c.csv"
    csv.write_text("tag,type,service\nNEW-1,valve,gas\n")
    for argv in (["sites"], ["import", "components", csv, "--site", "Orrel Mesa Pad 2"], ["verify"], ["init"]):
        code, _, err = run(capsys, "--db", demo_db, *argv)
        line = one_line(err)
        assert code == 2 and "schema version 99" in line and f"up to {LATEST}" in line
    assert demo_db.read_bytes() == raw and snapshot(demo_db) == before
    with pytest.raises(SchemaTooNewError):
        Store(demo_db)


# --- locked store ---

def test_a_locked_store_is_one_line(demo_db, tmp_path, capsys, monkeypatch):
    holder = sqlite3.connect(demo_db, isolation_level=None)
    holder.execute("BEGIN EXCLUSIVE")
    real = sqlite3.connect
    monkeypatch.setattr("fieldapp.store.base.sqlite3.connect", lambda path, **k: real(path, **{**k, "timeout": 0.2}))
    try:
        code, _, err = run(capsys, "--db", demo_db, "import", "components", good_csv(tmp_path), "--site",
                           "Orrel Mesa Pad 2")
    finally:
        holder.execute("ROLLBACK")
        holder.close()
    assert code == 2 and "locked" in one_line(err) and str(demo_db) in err


# --- verify and a running ingest ---

def test_verify_leaves_young_temp_files_and_reports_old_orphans(demo_store, wall):
    lib = library(demo_store)
    folder = lib.originals / "ab"
    folder.mkdir(parents=True, exist_ok=True)
    young_tmp = folder / f"{atomic.TEMP_PREFIX}young"
    old_tmp = folder / f"{atomic.TEMP_PREFIX}old"
    young_orphan, old_orphan = folder / ("ab" + "1" * 62), folder / ("ab" + "2" * 62)
    for path in (young_tmp, old_tmp, young_orphan, old_orphan):
        path.write_bytes(b"partial")
    long_ago = time.time() - TEMP_MIN_AGE_S - 60
    for path in (old_tmp, old_orphan):
        os.utime(path, (long_ago, long_ago))
    report = verify(demo_store)
    assert young_tmp.exists() and not old_tmp.exists()
    assert any("removed 1 temp" in n for n in report.notes) and any("left 1 temp" in n for n in report.notes)
    assert [p for p in report.problems if "orphan" in p] == [f"orphan original (no media record; left by an "
                                                             f"interrupted add): {old_orphan}; add it again with "
                                                             "`plumebook evidence add` or move it away"]
    assert any(str(young_orphan) in n for n in report.notes)


def test_verify_running_beside_an_ingest_never_breaks_it(demo_db, tmp_path):
    """Two connections as two programs would: one adds photos, the other verifies over and over."""
    leak = a_leak(demo_db)
    errors: list[BaseException] = []
    done = threading.Event()

    def verifier():
        store = Store(demo_db)
        try:
            while not done.is_set():
                verify(store)
        except BaseException as exc:  # noqa: BLE001 - collected for the assertion
            errors.append(exc)
        finally:
            store.close()

    thread = threading.Thread(target=verifier)
    thread.start()
    adder = Store(demo_db)
    try:
        for n in range(15):
            img = io.BytesIO()
            Image.new("RGB", (64, 48), (n * 15, 30, 200)).save(img, "JPEG")
            add_media(adder, leak, img.getvalue(), f"race-{n}.jpg")
    finally:
        done.set()
        thread.join()
        adder.close()
    assert errors == []
    final = Store(demo_db)
    try:
        assert verify(final).ok
        assert final.rows("SELECT COUNT(*) AS n FROM media WHERE original_name LIKE 'race-%'")[0]["n"] == 15
    finally:
        final.close()


# --- an unexpected error ---

def test_an_unexpected_error_prints_one_line_and_writes_the_trace(tmp_path, capsys, monkeypatch):
    monkeypatch.setenv("PLUMEBOOK_TRACE_DIR", str(tmp_path))

    def broken(_args):
        raise RuntimeError("something nobody expected")

    import fieldapp.commands.records_cmds as records

    monkeypatch.setattr(records, "cmd_init", broken)
    code, _, err = run(capsys, "--db", tmp_path / "s.db", "init")
    line = one_line(err)
    assert code == 3 and "unexpected error" in line and "RuntimeError" in line
    traces = list(tmp_path.glob("plumebook-trace-*.txt"))
    assert len(traces) == 1 and str(traces[0]) in line
    assert "Traceback" in traces[0].read_text() and "something nobody expected" in traces[0].read_text()
