"""Bad input on every command: one line naming the field or path, the right exit code, no traceback,
and the store left exactly as it was (SQL dump and media listing compared before and after).

Run in-process through fieldapp.cli.main. The expected behaviour is the project's own contract
(README "Usage", fieldapp/failures.py); physical limits named beside their cases.
"""

from __future__ import annotations

import hashlib
import io
import shutil
import sqlite3
import struct
from pathlib import Path

import pytest
from PIL import Image

from fieldapp.cli import main

PROGRAM = "us-nsps-oooo-a"
DEMO_SITE = "Orrel Mesa Pad 2"


def snapshot(db: Path) -> tuple[str, tuple]:
    """A digest of the store's SQL dump and the list of every file in its media folder with its size."""
    conn = sqlite3.connect(db)
    try:
        digest = hashlib.sha256("\n".join(conn.iterdump()).encode()).hexdigest()
    finally:
        conn.close()
    media = db.parent / f"{db.stem}-media"
    files = tuple(sorted((str(p.relative_to(media)), p.stat().st_size) for p in media.rglob("*") if p.is_file())) \
        if media.exists() else ()
    return digest, files


def jpeg_bytes() -> bytes:
    out = io.BytesIO()
    Image.new("RGB", (64, 48), (200, 60, 20)).save(out, "JPEG")
    return out.getvalue()


def mp4_short_mvhd() -> bytes:
    """An MP4 whose moov holds an mvhd box too short for its fields (ISO/IEC 14496-12 box layout)."""
    ftyp = struct.pack(">I4s", 16, b"ftyp") + b"isom\x00\x00\x02\x00"
    mvhd = struct.pack(">I4s", 12, b"mvhd") + b"\x00\x00\x00\x00"
    moov = struct.pack(">I4s", 8 + len(mvhd), b"moov") + mvhd
    return ftyp + moov


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """A demo store and a folder of bad (and one good) input files."""
    with pytest.MonkeyPatch.context() as env:
        env.delenv("DISPLAY", raising=False)
        env.delenv("WAYLAND_DISPLAY", raising=False)
        yield _world(tmp_path_factory)


def _world(tmp_path_factory):
    root = tmp_path_factory.mktemp("bad")
    db = root / "demo.db"
    assert main(["--db", str(db), "demo", "--no-app"]) == 0
    conn = sqlite3.connect(db)
    leak = conn.execute("SELECT id FROM leaks WHERE deleted = 0 ORDER BY id LIMIT 1").fetchone()[0]
    survey = conn.execute("SELECT id FROM surveys ORDER BY id LIMIT 1").fetchone()[0]
    # the in-process demo store may still be open (WAL): fold the WAL into the file, since tests copy the file
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.close()
    files = root / "files"
    files.mkdir()
    (files / "good.jpg").write_bytes(jpeg_bytes())
    (files / "bad.jpg").write_bytes(b"\xff\xd8\xff\xe0 this is not really a JPEG")
    (files / "empty.jpg").write_bytes(b"")
    (files / "note.txt").write_text("hello")
    (files / "short.mp4").write_bytes(mp4_short_mvhd())
    (files / "folder").mkdir()
    (files / "pic.db").write_bytes(jpeg_bytes())
    (files / "text.db").write_text("not a database at all, just some text " * 200)
    (files / "latin1.csv").write_bytes("tag,type,service\nV-\xe9,valve,gas\n".encode("latin-1"))
    (files / "badtype.csv").write_text("tag,type,service\nN-1,valve,gas\nN-2,valve,steam\n")
    (files / "missingcol.csv").write_text("tag,type\nN-1,valve\n")
    (files / "unknowncol.csv").write_text("tag,type,service,colour\nN-1,valve,gas,red\n")
    (files / "dupcol.csv").write_text("tag,type,service,tag\nN-1,valve,gas,N-2\n")
    (files / "wide.csv").write_text(",".join(f"c{i}" for i in range(100_000)) + "\n")
    (files / "huge-field.csv").write_text('tag,type,service\n"' + "x" * 140_000 + '",valve,gas\n')
    (files / "nul-tag.csv").write_text("tag,type,service\nN\x00-1,valve,gas\n")
    (files / "break-tag.csv").write_text('tag,type,service\n"N-\n1",valve,gas\n')
    (files / "tab-tag.csv").write_text("tag,type,service\nN\t1,valve,gas\n")
    (files / "long-tag.csv").write_text("tag,type,service\n" + "T" * 81 + ",valve,gas\n")
    (files / "repeat-tag.csv").write_text("tag,type,service\nR-1,valve,gas\nR-1,flange,gas\n")
    (files / "extra-values.csv").write_text("tag,type,service\nR-1,valve,gas,oops\n")
    (files / "badflag.csv").write_text("tag,type,service,unsafe_to_monitor\nR-1,valve,gas,maybe\n")
    (files / "empty.csv").write_text("")
    (files / "bundle.zip").write_bytes(b"PK\x03\x04 not really a zip")
    (files / "random.bin").write_bytes(bytes(range(256)) * 4)
    return {"root": root, "db": db, "leak": leak, "survey": survey, "files": files}


# Each case: (argv after --db DB, expected exit code, text the one line must contain).
F = "{files}"
CASES: list[tuple[list[str], int, str]] = [
    # --- argument parsing (argparse, one line) ---
    ([], 2, "required"),
    (["nonsense"], 2, "invalid choice"),
    (["sites", "--bogus"], 2, "unrecognized"),
    (["estimate"], 2, "type"),
    (["estimate", "--type", "valve"], 2, "service"),
    (["estimate", "--type", "valve", "--service", "gas", "--ppm", "5", "--measured", "1"], 2, "not allowed with"),
    (["rules"], 2, "required"),
    (["rules", "deadlines"], 2, "--program"),
    (["rules", "window", "--program", PROGRAM, "--site-kind", "well_site"], 2, "--last"),
    (["rules", "window", "--program", PROGRAM, "--site-kind", "well_site", "--last", "2026-01-01",
      "--inspection", "drone"], 2, "--inspection"),
    (["evidence"], 2, "required"),
    (["evidence", "add", "--leak", "{leak}"], 2, "files"),
    (["bundle", "make"], 2, "--out"),
    (["bundle", "merge"], 2, "files"),
    (["export", "csv"], 2, "--out"),
    (["report", "survey", "{survey}"], 2, "--out"),
    (["report", "period", "--from", "2026-01-01"], 2, "--to"),
    (["programs", "delete"], 2, "invalid choice"),
    (["import"], 2, "required"),
    (["import", "components"], 2, "file"),
    (["due", "--json", "--csv"], 2, "not allowed with"),
    # --- numbers: estimate ---
    *[(["estimate", "--type", "valve", "--service", "gas", "--method", "method21", "--ppm", v], 2, "ppm")
      for v in ("nan", "inf", "-inf", "-5", "1e7", "1000001", "abc", "", "1e400", "0x10", "5 ppm", "NaN")],
    *[(["estimate", "--type", "valve", "--service", "gas", "--measured", v, "--unit", "kg/h"], 2, "measured")
      for v in ("nan", "inf", "-1", "1e308", "1e10", "x", "")],
    (["estimate", "--type", "valve", "--service", "gas", "--measured", "1"], 2, "unit"),
    (["estimate", "--type", "valve", "--service", "gas", "--measured", "1", "--unit", "furlongs"], 2, "unit"),
    *[(["estimate", "--type", "valve", "--service", "gas", "--methane-fraction", v], 2, "methane-fraction")
      for v in ("1.5", "-0.1", "nan", "inf", "", "half")],
    *[(["estimate", "--type", "valve", "--service", "gas", "--methane-weight-fraction", v], 2,
       "methane-weight-fraction") for v in ("2", "-1", "nan")],
    *[(["estimate", "--type", "valve", "--service", "gas", "--method", "method21", "--ppm", "10000",
        "--pegged-at", v], 2, "pegged-at") for v in ("5000", "nan", "-10000")],
    (["estimate", "--type", "teapot", "--service", "gas"], 2, "type"),
    (["estimate", "--type", "valve", "--service", "steam"], 2, "service"),
    (["estimate", "--type", "valve", "--service", "gas", "--method", "sniffing"], 2, "method"),
    (["estimate", "--type", "valve", "--service", "gas", "--factor-set", "nope"], 2, "factor-set"),
    (["estimate", "--type", "valve", "--service", "gas", "--factor-set", ""], 2, "factor-set"),
    (["estimate", "--type", "valve", "--service", "gas", "--gwp", "ar99"], 2, "gwp"),
    (["estimate", "--type", "", "--service", "gas"], 2, "type"),
    # --- rules deadlines ---
    *[(["rules", "deadlines", "--program", PROGRAM, "--detected", "2026-05-01", "--ppm", v], 2, "ppm")
      for v in ("nan", "inf", "-5", "2e6", "lots")],
    *[(["rules", "deadlines", "--program", PROGRAM, "--detected", v], 2, "detected")
      for v in ("9999-12-31", "0001-01-01", "1899-12-31", "3000-01-01", "", "2026-13-01", "2026-02-30",
                "20260501", "yesterday", "2026-05-01T00:00", "2" * 30, "2026-W01-1")],
    (["rules", "deadlines", "--program", PROGRAM, "--detected", "2026-05-01", "--shutdown", "2026-06-01"], 2,
     "shutdown"),
    (["rules", "deadlines", "--program", PROGRAM, "--detected", "2026-05-01", "--delayed", "2026-05-10",
      "--shutdown", "9999-12-31"], 2, "shutdown"),
    (["rules", "deadlines", "--program", PROGRAM, "--detected", "2026-05-01", "--first-attempt", ""], 2,
     "first-attempt"),
    (["rules", "deadlines", "--program", PROGRAM, "--detected", "2026-05-01", "--repaired", "9999-12-31"], 2,
     "repaired"),
    (["rules", "deadlines", "--program", PROGRAM, "--detected", "2026-05-01", "--resurvey-failed", "soon"], 2,
     "resurvey-failed"),
    (["rules", "deadlines", "--program", PROGRAM, "--detected", "2026-05-01", "--delayed", "never"], 2, "delayed"),
    (["rules", "deadlines", "--program", "nope", "--detected", "2026-05-01"], 2, "program"),
    (["rules", "deadlines", "--program", "", "--detected", "2026-05-01"], 2, "program"),
    # --- rules window ---
    *[(["rules", "window", "--program", PROGRAM, "--site-kind", "well_site", "--last", v], 2, "last")
      for v in ("9999-12-31", "", "2026-00-10", "1e5")],
    *[(["rules", "window", "--program", PROGRAM, "--site-kind", "well_site", "--startup", v], 2, "startup")
      for v in ("9999-12-31", "", "tomorrow")],
    (["rules", "window", "--program", PROGRAM, "--site-kind", "castle", "--last", "2026-01-01"], 2, "site-kind"),
    (["rules", "window", "--program", PROGRAM, "--site-kind", "", "--last", "2026-01-01"], 2, "site-kind"),
    (["rules", "window", "--program", "nope", "--site-kind", "well_site", "--last", "2026-01-01"], 2, "program"),
    # --- programs ---
    (["programs", "show"], 2, "program_id"),
    (["programs", "show", "nope"], 2, "program"),
    # --- due ---
    *[(["due", "--as-of", v], 2, "as-of") for v in ("", "9999-12-31", "2026-1-1", "today", "   ")],
    *[(["due", "--within", v], 2, "within") for v in ("-1", "1e3", "x", "", "99999999999999999999999999999",
                                                      "36501", "nan")],
    (["due", "--site", ""], 2, "site"),
    (["due", "--site", "No Such Pad"], 2, "No Such Pad"),
    # --- emissions ---
    (["emissions", "--from", "2026-01-01", "--to", "2025-01-01"], 2, "to"),
    (["emissions", "--from", "", "--to", "2026-01-01"], 2, "from"),
    (["emissions", "--from", "2026-01-01", "--to", "9999-12-31"], 2, "to"),
    (["emissions", "--from", "2026-01-01", "--to", "2026-12-01", "--as-of", ""], 2, "as-of"),
    (["emissions", "--from", "2026-01-01", "--to", "2026-12-01", "--site", ""], 2, "site"),
    (["emissions", "--from", "2026-01-01", "--to", "2026-12-01", "--site", "Nowhere"], 2, "Nowhere"),
    (["emissions", "--from", "2026-01-01", "--to", "2026-12-01", "--convention", "magic"], 2, "convention"),
    (["emissions", "--from", "2026-01-01", "--to", "2026-12-01", "--gwp", "ar0"], 2, "gwp"),
    # --- listings ---
    (["surveys", "--site", ""], 2, "site"),
    (["surveys", "--site", "Nowhere Pad"], 2, "Nowhere Pad"),
    (["leaks", "--site", ""], 2, "site"),
    (["leaks", "--site", "Nowhere Pad"], 2, "Nowhere Pad"),
    (["history", "no-such-record"], 2, "no-such-record"),
    (["history", ""], 2, "record"),
    # --- import components ---
    (["import", "components", F + "/missing.csv", "--site", DEMO_SITE], 2, "missing.csv"),
    (["import", "components", F + "/folder", "--site", DEMO_SITE], 2, "folder"),
    (["import", "components", F + "/latin1.csv", "--site", DEMO_SITE], 2, "UTF-8"),
    (["import", "components", F + "/badtype.csv", "--site", DEMO_SITE], 2, "service"),
    (["import", "components", F + "/missingcol.csv", "--site", DEMO_SITE], 2, "service"),
    (["import", "components", F + "/unknowncol.csv", "--site", DEMO_SITE], 2, "colour"),
    (["import", "components", F + "/dupcol.csv", "--site", DEMO_SITE], 2, "twice"),
    (["import", "components", F + "/wide.csv", "--site", DEMO_SITE], 2, "header"),
    (["import", "components", F + "/huge-field.csv", "--site", DEMO_SITE], 2, "131,072"),
    (["import", "components", F + "/nul-tag.csv", "--site", DEMO_SITE], 2, "tag"),
    (["import", "components", F + "/break-tag.csv", "--site", DEMO_SITE], 2, "tag"),
    (["import", "components", F + "/tab-tag.csv", "--site", DEMO_SITE], 2, "tag"),
    (["import", "components", F + "/long-tag.csv", "--site", DEMO_SITE], 2, "tag"),
    (["import", "components", F + "/repeat-tag.csv", "--site", DEMO_SITE], 2, "tag"),
    (["import", "components", F + "/extra-values.csv", "--site", DEMO_SITE], 2, "row"),
    (["import", "components", F + "/badflag.csv", "--site", DEMO_SITE], 2, "unsafe_to_monitor"),
    (["import", "components", F + "/empty.csv", "--site", DEMO_SITE], 2, "tag"),
    (["import", "components", F + "/good.jpg", "--site", DEMO_SITE], 2, "UTF-8"),
    (["import", "components", F + "/badtype.csv", "--site", ""], 2, "site"),
    (["import", "components", F + "/badtype.csv", "--site", "Nowhere"], 2, "Nowhere"),
    # --- evidence ---
    (["evidence", "add", "--leak", "{leak}", F + "/good.jpg", F + "/bad.jpg"], 2, "bad.jpg"),
    (["evidence", "add", "--leak", "{leak}", F + "/good.jpg", F + "/missing.jpg"], 2, "missing.jpg"),
    (["evidence", "add", "--leak", "{leak}", F + "/good.jpg", F + "/folder"], 2, "folder"),
    (["evidence", "add", "--leak", "{leak}", F + "/empty.jpg"], 2, "empty.jpg"),
    (["evidence", "add", "--leak", "{leak}", F + "/note.txt"], 2, "note.txt"),
    (["evidence", "add", "--leak", "{leak}", F + "/random.bin"], 2, "random.bin"),
    (["evidence", "add", "--leak", "{leak}", F + "/short.mp4"], 2, "short.mp4"),
    (["evidence", "add", "--leak", "no-such-leak", F + "/good.jpg"], 2, "leak"),
    (["evidence", "add", "--leak", "", F + "/good.jpg"], 2, "leak"),
    (["evidence", "add", "--leak", "{leak}", F + "/good.jpg", "--label", "x" * 81, "--marker", "0.5,0.5"], 2,
     "label"),
    (["evidence", "add", "--leak", "{leak}", F + "/good.jpg", "--label", "a\x00b", "--marker", "0.5,0.5"], 2,
     "label"),
    (["evidence", "add", "--leak", "{leak}", F + "/good.jpg", "--label", "a\nb", "--marker", "0.5,0.5"], 2,
     "label"),
    *[(["evidence", "add", "--leak", "{leak}", F + "/good.jpg", "--marker", v], 2, "marker")
      for v in ("1.5,0.5", "nan,0.5", "0.5", "0.5,0.5,0.5", "a,b", "-0.1,0.2", "inf,0", "")],
    (["evidence", "add", "--leak", "{leak}", F + "/good.jpg", F + "/good.jpg", "--marker", "0.5,2"], 2, "marker"),
    (["evidence", "list", "--leak", "no-such-leak"], 2, "leak"),
    (["evidence", "list", "--leak", ""], 2, "leak"),
    # --- bundles ---
    (["bundle", "make", "--out", F], 2, "folder"),
    (["bundle", "make", "--out", F + "/no/such/dir/b.zip"], 2, "does not exist"),
    (["bundle", "make", "--out", F + "/good.jpg/b.zip"], 2, "not a folder"),
    (["bundle", "make", "--out", F + "/b.zip", "--since", "1" * 30], 2, "since"),
    (["bundle", "make", "--out", F + "/b.zip", "--since", "-1"], 2, "since"),
    (["bundle", "make", "--out", F + "/b.zip", "--since", "soon"], 2, "since"),
    (["bundle", "make", "--out", F + "/b.zip", "--since", ""], 2, "since"),
    (["bundle", "make", "--out", F + "/b.zip", "--for-device", ""], 2, "for-device"),
    (["bundle", "make", "--out", ""], 2, "out"),
    (["bundle", "merge", F + "/missing.zip"], 2, "missing.zip"),
    (["bundle", "merge", F + "/folder"], 2, "folder"),
    (["bundle", "merge", F + "/bundle.zip"], 2, "bundle.zip"),
    (["bundle", "merge", F + "/good.jpg"], 2, "good.jpg"),
    # --- export and reports ---
    (["export", "csv", "--out", F + "/good.jpg"], 2, "good.jpg"),
    (["export", "csv", "--out", F + "/no/such/dir"], 2, "does not exist"),
    (["export", "csv", "--out", F + "/x", "--from", "2026-06-01", "--to", "2026-01-01"], 2, "to"),
    (["export", "csv", "--out", F + "/x", "--from", "2026-99-01"], 2, "from"),
    (["export", "csv", "--out", F + "/x", "--to", ""], 2, "to"),
    (["export", "csv", "--out", F + "/x", "--site", ""], 2, "site"),
    (["export", "csv", "--out", F + "/x", "--site", "Nowhere"], 2, "Nowhere"),
    (["report", "survey", "{survey}", "--out", F], 2, "folder"),
    (["report", "survey", "{survey}", "--out", F + "/no/such/r.pdf"], 2, "does not exist"),
    (["report", "survey", "no-such-survey", "--out", F + "/r.pdf"], 2, "no-such-survey"),
    (["report", "leak", "{leak}", "--out", F], 2, "folder"),
    (["report", "leak", "no-such-leak", "--out", F + "/k.pdf"], 2, "no-such-leak"),
    (["report", "leak", "{leak}", "--as-of", "2026-02-30", "--out", F + "/k.pdf"], 2, "as-of"),
    (["report", "leak", "", "--out", F + "/k.pdf"], 2, "leak"),
    (["report", "period", "--from", "2026-06-01", "--to", "2026-01-01", "--out", F + "/p.pdf"], 2, "to"),
    (["report", "period", "--from", "2026-01-01", "--to", "9999-12-31", "--out", F + "/p.pdf"], 2, "to"),
    (["report", "period", "--from", "2026-01-01", "--to", "2026-12-01", "--out", F], 2, "folder"),
    (["report", "period", "--from", "2026-01-01", "--to", "2026-12-01", "--site", "", "--out", F + "/p.pdf"], 2,
     "site"),
    # --- app (refused before the window opens) ---
    *[(["app", "--screenshot", F + "/s.png", "--size", v], 2, "size")
      for v in ("0x0", "1x1", "-800x600", "800x", "huge", "99999x800", "800x600x2", "")],
    (["app", "--screen", "bridge"], 2, "screen"),
    (["app", "--screenshot", F, "--size", "800x600"], 2, "folder"),
    # --- who is acting ---
    (["--actor", "a\nb", "sites"], 2, "actor"),
    (["--actor", "a\x00b", "device"], 2, "actor"),
    # --- demo on a store that holds data ---
    (["demo", "--no-app"], 2, "already holds"),
    # --- non-UTF-8 arguments (surrogate-escaped bytes from a Linux command line) ---
    *[(argv, 2, "UTF-8") for argv in (
        ["sites", "--json", "\udcff"], ["leaks", "--site", "Pad\udce9"], ["history", "\udcff\udcfe"],
        ["due", "--site", "\udce9"], ["evidence", "list", "--leak", "\udcff"],
        ["import", "components", F + "/\udce9.csv", "--site", DEMO_SITE],
        ["estimate", "--type", "valve\udcff", "--service", "gas"], ["--actor", "J\udce9", "init"],
        ["export", "csv", "--out", F + "/\udcff"], ["bundle", "merge", F + "/\udcff.zip"])],
]

# Cases that use a --db other than the demo store: (name of db under files, argv, code, text).
DB_CASES: list[tuple[str, list[str], int, str]] = [
    ("folder", ["sites"], 2, "folder"),
    ("folder", ["init"], 2, "folder"),
    ("folder", ["verify"], 2, "folder"),
    ("pic.db", ["sites"], 2, "pic.db"),
    ("pic.db", ["init"], 2, "pic.db"),
    ("pic.db", ["import", "components", F + "/badtype.csv", "--site", DEMO_SITE], 2, "pic.db"),
    ("text.db", ["leaks"], 2, "text.db"),
    ("text.db", ["evidence", "add", "--leak", "x", F + "/good.jpg"], 2, "text.db"),
    ("good.jpg/store.db", ["init"], 2, "good.jpg"),
    ("missing-store.db", ["verify"], 2, "missing-store.db"),
    *[("missing-store.db", argv, 2, "no store there") for argv in (
        ["sites"], ["leaks", "--open"], ["surveys"], ["due", "--as-of", "2026-12-01"], ["device"], ["conflicts"],
        ["history", "x"], ["evidence", "list", "--leak", "x"], ["export", "csv", "--out", F + "/x"],
        ["bundle", "make", "--out", F + "/b.zip"], ["emissions", "--from", "2026-01-01", "--to", "2026-02-01"],
        ["import", "components", F + "/badtype.csv", "--site", DEMO_SITE])],
]


def _fill(value: str, world) -> str:
    return value.replace("{files}", str(world["files"])).replace("{leak}", world["leak"]) \
        .replace("{survey}", world["survey"])


def _check(capsys, argv, code, text, watched: Path, is_store: bool):
    state = snapshot if is_store else _file_state
    before = state(watched)
    got = main(argv)
    out, err = capsys.readouterr()
    after = state(watched)
    lines = err.splitlines()
    assert got == code, (argv, got, err, out)
    assert len(lines) == 1, (argv, err)
    assert lines[0].startswith("plumebook"), (argv, err)
    assert text.lower() in lines[0].lower(), (argv, text, err)
    assert "Traceback" not in err + out
    assert before == after, f"{argv} changed the store"


def _file_state(path: Path):
    if path.is_file():
        return hashlib.sha256(path.read_bytes()).hexdigest()
    return path.exists()


def test_there_are_at_least_150_cases():
    assert len(CASES) + len(DB_CASES) >= 150


@pytest.mark.parametrize(("argv", "code", "text"), CASES, ids=[" ".join(c[0])[:60] for c in CASES])
def test_bad_input_is_one_line_and_changes_nothing(world, capsys, argv, code, text):
    argv = ["--db", str(world["db"]), *(_fill(a, world) for a in argv)]
    _check(capsys, argv, code, text, world["db"], True)
    for leftover in ("b.zip", "r.pdf", "p.pdf", "s.png", "x"):
        assert not (world["files"] / leftover).exists(), f"{argv} left {leftover}"


@pytest.mark.parametrize(("db", "argv", "code", "text"), DB_CASES, ids=[f"{c[0]} {' '.join(c[1])}" for c in DB_CASES])
def test_bad_store_paths_are_one_line(world, capsys, db, argv, code, text):
    path = world["files"] / db
    argv = ["--db", str(path), *(_fill(a, world) for a in argv)]
    _check(capsys, argv, code, text, path, False)
    assert not (world["files"] / "missing-store.db").exists()


def test_the_wide_header_check_stays_short(world, capsys):
    """100,000 columns: refused with a short line (it printed 11.9 MB once)."""
    main(["--db", str(world["db"]), "import", "components", str(world["files"] / "wide.csv"), "--site", DEMO_SITE])
    _, err = capsys.readouterr()
    assert len(err) < 700


def test_good_input_still_works_after_the_bad(world, capsys, tmp_path):
    """The refusals above are refusals of bad input only: the same commands with good values succeed."""
    db = tmp_path / "copy.db"
    shutil.copy(world["db"], db)
    shutil.copytree(world["root"] / "demo-media", tmp_path / "copy-media")
    files = world["files"]
    assert main(["--db", str(db), "evidence", "add", "--leak", world["leak"], str(files / "good.jpg")]) == 0
    assert main(["--db", str(db), "bundle", "make", "--out", str(tmp_path / "b.zip"), "--since", "0"]) == 0
    assert main(["--db", str(db), "export", "csv", "--out", str(tmp_path / "csv")]) == 0
    assert main(["--db", str(db), "rules", "deadlines", "--program", PROGRAM, "--detected", "2999-12-31"]) == 0
    assert main(["--db", str(db), "estimate", "--type", "valve", "--service", "gas", "--method", "method21",
                 "--ppm", "1000000", "--segment", "onshore_production"]) == 0
    capsys.readouterr()


def test_a_real_command_line_with_bytes_that_are_not_utf8(world, tmp_path):
    """Through the installed entry point, as a shell passes a Latin-1 file name: one line, exit 2."""
    import os
    import subprocess
    import sys

    name = os.fsencode(str(world["files"])) + b"/caf\xe9.csv"
    result = subprocess.run([sys.executable, "-m", "fieldapp", "--db", os.fsencode(str(world["db"])), "import",
                             "components", name, "--site", DEMO_SITE], capture_output=True)
    err = result.stderr.decode("utf-8", "replace")
    assert result.returncode == 2 and "Traceback" not in err
    assert len(err.splitlines()) == 1 and "UTF-8" in err and "caf\\xe9.csv" in err


EXTREMES = [
    *[["--measured", "1e9", "--unit", u, "--methane-fraction", f] for u in ("kg/h", "lb/h", "t/yr", "scf/h", "m3/h")
      for f in ("0", "1", "1e-300")],
    ["--method", "method21", "--ppm", "1000000"], ["--method", "method21", "--ppm", "1e-300"],
    ["--method", "method21", "--ppm", "0", "--methane-weight-fraction", "0"],
    ["--method", "method21", "--ppm", "100000", "--pegged-at", "100000"],
]


@pytest.mark.parametrize("extra", EXTREMES, ids=[" ".join(e) for e in EXTREMES])
def test_estimate_json_at_the_limits_is_strict_json(capsys, extra):
    """RFC 8259 JSON has no NaN or Infinity: parsing refuses them here (parse_constant)."""
    import json

    assert main(["estimate", "--type", "valve", "--service", "gas", "--segment", "onshore_production", *extra,
                 "--json"]) == 0
    out = capsys.readouterr().out

    def refuse(name):
        raise AssertionError(f"{name} in JSON output")

    assert json.loads(out, parse_constant=refuse)["label"] == "engineering estimate"


def test_json_output_refuses_nan_rather_than_printing_it():
    from fieldapp.cli import emit_json

    with pytest.raises(ValueError):
        emit_json({"x": float("nan")})


def test_date_arithmetic_past_the_calendar_is_one_line(capsys, monkeypatch):
    """Should a program's span run past year 9999, the OverflowError becomes one line naming the range."""
    import fieldapp.core.lifecycle as lifecycle

    def overflow(*_a, **_k):
        raise OverflowError("date value out of range")

    monkeypatch.setattr(lifecycle, "deadlines", overflow)
    code = main(["rules", "deadlines", "--program", PROGRAM, "--detected", "2999-12-31"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.splitlines()) == 1 and "1900-01-01 to 2999-12-31" in err
