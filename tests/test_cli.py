"""The plumebook command driven through main(): exit codes, JSON shapes, messages."""

from __future__ import annotations

import json
import subprocess
import sys

from fieldapp.cli import main


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_init_then_demo_prints_where_it_wrote(tmp_path, capsys, monkeypatch):
    monkeypatch.delenv("DISPLAY", raising=False)
    db = tmp_path / "x.db"
    assert run(capsys, "--db", db, "init")[0] == 0
    code, out, _ = run(capsys, "--db", db, "demo", "--no-app")
    assert code == 0
    assert "plumebook-demo-output" in out and "due.csv" in out
    assert (tmp_path / "plumebook-demo-output" / "due.csv").is_file()
    trip = (tmp_path / "plumebook-demo-output" / "sync-round-trip.txt").read_text()
    assert "signed bundle of" in trip and trip.endswith("same records and journal as the tablet: yes\n")
    code, out, _ = run(capsys, "--db", db, "sites", "--json")
    sites = json.loads(out)
    assert len(sites) == 4 and all("id" in s for s in sites)
    code, out, _ = run(capsys, "--db", db, "leaks", "--json")
    leaks = json.loads(out)
    assert {leak["state"] for leak in leaks} == {"open", "attempted", "repaired", "closed", "delayed", "void"}
    code, out, _ = run(capsys, "--db", db, "surveys", "--site", "Orrel Mesa Pad 2", "--json")
    assert len(json.loads(out)) == 2
    code, out, _ = run(capsys, "--db", db, "history", leaks[0]["id"], "--json")
    story = json.loads(out)  # a leak's history is its whole timeline (tests/test_desk.py)
    assert story["leak"]["id"] == leaks[0]["id"] and story["events"][0]["op"] == "insert"


def test_demo_without_display_says_so_and_exits_zero(tmp_path, capsys, monkeypatch):
    monkeypatch.delenv("DISPLAY", raising=False)
    monkeypatch.delenv("WAYLAND_DISPLAY", raising=False)
    code, out, _ = run(capsys, "--db", tmp_path / "y.db", "demo")
    assert code == 0 and "no display" in out


def test_demo_twice_is_refused_and_reset_reloads(tmp_path, capsys, monkeypatch):
    monkeypatch.delenv("DISPLAY", raising=False)
    db = tmp_path / "z.db"
    run(capsys, "--db", db, "demo", "--no-app")
    code, _, err = run(capsys, "--db", db, "demo", "--no-app")
    assert code == 2 and "store: already holds sites" in err
    assert run(capsys, "--db", db, "demo", "--reset", "--no-app")[0] == 0


def test_bad_import_exits_2_with_line_and_field(tmp_path, capsys):
    db = tmp_path / "x.db"
    run(capsys, "--db", db, "demo", "--no-app")
    bad = tmp_path / "bad.csv"
    bad.write_text("tag,type,service\nN-1,valve,gas\nN-2,valve,steam\n")
    code, _, err = run(capsys, "--db", db, "import", "components", bad, "--site", "Orrel Mesa Pad 2")
    assert code == 2
    assert "line 3: service" in err and "light_liquid" in err
    assert len(err.strip().splitlines()) == 1
    code, _, err = run(capsys, "--db", db, "import", "components", bad, "--site", "Nowhere")
    assert code == 2 and "site: 'Nowhere' is not a site" in err


def test_db_defaults_to_environment_variable(tmp_path, capsys, monkeypatch):
    db = tmp_path / "env.db"
    monkeypatch.setenv("PLUMEBOOK_DB", str(db))
    assert run(capsys, "init")[0] == 0
    assert db.is_file()


def test_module_entry_point_runs():
    result = subprocess.run([sys.executable, "-m", "fieldapp", "--help"], capture_output=True, text=True)
    assert result.returncode == 0 and "plumebook" in result.stdout


def test_programs_commands(capsys):
    assert main(["programs", "--json"]) == 0
    ids = {p["id"] for p in json.loads(capsys.readouterr().out)}
    assert {"us-nsps-oooo-a", "us-nsps-oooo-b", "us-method21-process-unit", "us-tx-hrvoc-fugitive",
            "company-template"} <= ids
    assert main(["programs", "show", "us-tx-hrvoc-fugitive", "--json"]) == 0
    shown = json.loads(capsys.readouterr().out)
    assert shown["repair_tiers"][1]["min_ppm"] == 10000  # 30 TAC 115.782(b)(1) [text]
    assert main(["programs", "show", "no-such-program"]) == 2
    assert "known:" in capsys.readouterr().err


def test_app_without_display_says_so(tmp_path, capsys, monkeypatch):
    monkeypatch.delenv("DISPLAY", raising=False)
    monkeypatch.delenv("WAYLAND_DISPLAY", raising=False)
    assert main(["--db", str(tmp_path / "a.db"), "app"]) == 0
    assert "no display" in capsys.readouterr().out
    assert main(["--db", str(tmp_path / "a.db"), "app", "--screen", "nowhere", "--screenshot", "x.png"]) == 2
