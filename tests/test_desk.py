"""The office desk: recording commands against the app's ops path, names, actor, and the due list's warnings.

The expected deadlines are the program's own (40 CFR 60.5397a(h): first attempt within 30 calendar
days of finding, final repair within 30 days of the first attempt; eCFR text, see
fieldapp/data/programs); this file checks that the command path gives exactly what the ops path gives
for the same input, so both are held to those rule values by tests/test_deadlines.py.
"""

from __future__ import annotations

import csv
import io
import json

import pytest

from fieldapp.cli import main
from fieldapp.store import ops
from fieldapp.store.base import Store
from fieldapp.store.due import due_list
from fieldapp.store.lookups import component_by_tag
from tests.conftest import SITE

ACTOR = "Office Clerk (invented)"
OPERATOR = "Ira Quenby (invented)"
START = {"method": "ogi", "operator": OPERATOR, "qualification": "OGI course (invented)", "camera_make": "Make",
         "camera_model": "M1", "camera_serial": "S-1", "camera_check": "passed",
         "camera_check_note": "test gas seen at 3 m", "sky": "clear", "areas": "wellheads;tanks"}
DAY = "2026-03-02"
LEAKS = [  # tag, new?, detected at (local), screening ppm, hazard
    ("P-1", False, f"{DAY}T09:10", "12000", False),
    ("P-2", False, f"{DAY}T09:40", None, True),
    ("N-9", True, f"{DAY}T10:05", "800", False),
]
ACTIONS = [  # tag, kind, done_on, extra
    ("P-1", "first_attempt", "2026-03-03", {"note": "packing tightened"}),
    ("P-1", "repaired", "2026-03-04", {}),
    ("P-1", "resurvey_failed", "2026-03-05", {"method": "ogi", "instrument": "camera S-1"}),
    ("P-1", "repaired", "2026-03-06", {}),
    ("P-1", "resurvey_passed", "2026-03-07", {"method": "ogi"}),
    ("P-2", "first_attempt", "2026-03-03", {}),
    ("P-2", "delay_of_repair", "2026-03-04", {"reason": "needs a shutdown", "planned_on": "2026-05-01",
                                              "shutdown_on": "2026-05-01"}),
    ("N-9", "voided", "2026-03-03", {"reason": "was steam, not gas"}),
]


def run(db, *argv: str, capsys=None) -> tuple[int, str, str]:
    code = main(["--db", str(db), "--actor", ACTOR, *argv])
    out, err = capsys.readouterr() if capsys else ("", "")
    return code, out, err


def _base(path) -> Store:
    store = Store(path, actor=ACTOR)
    site = ops.add_site(store, SITE, ACTOR)
    for tag in ("P-1", "P-2"):
        ops.add_component(store, {"site_id": site.id, "tag": tag, "type": "valve", "service": "gas"}, ACTOR)
    return store


def _by_app(store: Store) -> None:
    """The same work through ops, as the tablet screens call it."""
    from datetime import datetime
    from zoneinfo import ZoneInfo

    zone = ZoneInfo(SITE["timezone"])
    site = store.rows("SELECT * FROM sites")[0]
    survey, _ = ops.start_survey(store, {**START, "site_id": site["id"],
                                         "started_at": datetime.fromisoformat(f"{DAY}T08:30").replace(tzinfo=zone),
                                         "ambient_temp_entered": "41", "temp_unit": "°F",
                                         "wind_max_entered": "8", "wind_unit": "mph"}, ACTOR)
    leaks = {}
    for tag, new, at, ppm, hazard in LEAKS:
        values = {"survey_id": survey.id, "detected_at": datetime.fromisoformat(at).replace(tzinfo=zone),
                  "hazard": hazard, "tag_attached": False}
        if ppm:
            values["screening_ppm"] = ppm
        comp = None if new else component_by_tag(store, site["id"], tag)
        if comp:
            values["component_id"] = comp["id"]
        leaks[tag] = ops.add_leak(store, values, {"tag": tag, "type": "flange", "service": "gas"} if new else None,
                                  actor=ACTOR).id
    for tag, kind, on, extra in ACTIONS:
        ops.add_action(store, {"leak_id": leaks[tag], "kind": kind, "done_on": on, "actor": OPERATOR, **extra},
                       actor=ACTOR)
    ops.end_survey(store, survey.id, {"ended_at": datetime.fromisoformat(f"{DAY}T12:00").replace(tzinfo=zone),
                                      "areas_done": "wellheads;tanks", "no_deviations": True}, ACTOR)


def _by_command(db, capsys) -> None:
    survey = f"{SITE['name']}@{DAY}"
    code, out, err = run(db, "survey", "start", "--site", SITE["name"].upper(), "--started-at", f"{DAY}T08:30",
                         "--temperature", "41", "--temp-unit", "°F", "--wind-max", "8", "--wind-unit", "mph",
                         *[a for k, v in START.items() for a in (f"--{k.replace('_', '-')}", v)], capsys=capsys)
    assert code == 0, err
    assert f"acting as {ACTOR}" in out and "backdated" in out
    for tag, new, at, ppm, hazard in LEAKS:
        argv = ["leak", "add", "--survey", survey, "--tag", tag, "--detected-at", at]
        argv += ["--type", "flange", "--service", "gas"] if new else []
        argv += ["--screening-ppm", ppm] if ppm else []
        argv += ["--hazard"] if hazard else []
        code, out, err = run(db, *argv, capsys=capsys)
        assert code == 0, err
    for tag, kind, on, extra in ACTIONS:
        argv = ["action", "add", kind.replace("_", "-"), f"{tag}@{DAY}", "--done-on", on, "--by", OPERATOR]
        argv += [a for k, v in extra.items() for a in (f"--{k.replace('_', '-')}", v)]
        code, out, err = run(db, *argv, capsys=capsys)
        assert code == 0, (kind, err)
    code, out, err = run(db, "survey", "end", survey, "--ended-at", f"{DAY}T12:00", "--areas-done",
                         "wellheads;tanks", "--no-deviations", capsys=capsys)
    assert code == 0, err


ID_COLUMNS = {"id", "site_id", "survey_id", "component_id", "leak_id", "recorded_at"}


def _rows(store: Store) -> dict[str, list[dict]]:
    out = {}
    for table, order in (("surveys", "started_at"), ("components", "tag"), ("leaks", "detected_at"),
                         ("actions", "done_on, seq")):
        rows = store.rows(f"SELECT * FROM {table} ORDER BY {order}")
        out[table] = [{k: v for k, v in r.items() if k not in ID_COLUMNS} for r in rows]
    return out


def _journal(store: Store) -> list[tuple]:
    return [(r["tbl"], r["op"], r["actor"]) for r in store.rows("SELECT * FROM journal ORDER BY seq")]


def _due(store: Store) -> list[tuple]:
    from datetime import date

    items, _ = due_list(store, date(2026, 3, 8))
    return sorted((i.kind, i.tag, i.due, i.rule, i.hazard, i.repeat_leaker, i.status) for i in items)


def test_a_whole_survey_from_the_command_line_matches_the_app_path(tmp_path, capsys):
    app = _base(tmp_path / "app.db")
    _by_app(app)
    desk = _base(tmp_path / "desk.db")
    desk.close()
    _by_command(tmp_path / "desk.db", capsys)
    desk = Store(tmp_path / "desk.db")
    assert _rows(desk) == _rows(app)
    assert _journal(desk) == _journal(app)
    assert "?" not in {a for _t, _o, a in _journal(desk)} and {a for _t, _o, a in _journal(desk)} == {ACTOR}
    assert _due(desk) == _due(app)
    # P-2 has a delay of repair until the shutdown: its deadline is the shutdown day (40 CFR 60.5397a(h)(3)).
    assert [d for d in _due(desk) if d[1] == "P-2"]
    assert len(desk.rows("SELECT * FROM actions")) == len(ACTIONS)


@pytest.fixture
def fresh_db(tmp_path):
    store = _base(tmp_path / "one.db")
    store.close()
    return tmp_path / "one.db"


CONDITIONS = ("--temperature", "5", "--wind-max", "3")


def _start(db, capsys):
    code, _out, err = run(db, "survey", "start", "--site", SITE["name"], "--started-at", f"{DAY}T08:30", *CONDITIONS,
                          *[a for k, v in START.items() for a in (f"--{k.replace('_', '-')}", v)], capsys=capsys)
    assert code == 0, err


def test_refused_values_exit_2_naming_the_option_and_write_nothing(fresh_db, capsys):
    _start(fresh_db, capsys)
    before = Store(fresh_db).rows("SELECT COUNT(*) AS n FROM journal")[0]["n"]
    survey = f"{SITE['name']}@{DAY}"
    cases = [
        (["leak", "add", "--survey", survey, "--tag", "P-1", "--screening-ppm", "lots"], "--screening-ppm"),
        (["leak", "add", "--survey", survey, "--tag", "NEW"], "--type: is required"),
        (["leak", "add", "--survey", f"{SITE['name']}@2026-03-09", "--tag", "P-1"], "survey"),
        (["leak", "add", "--survey", survey, "--tag", "P-1", "--detected-at", "2999-01-01T00:00"], "--detected-at"),
        (["action", "add", "mended", "P-1"], "kind: 'mended' is not allowed"),
        (["action", "add", "repaired", "P-1"], "leak: 'P-1'"),
        (["survey", "end", survey], "--deviations"),
    ]
    for argv, expected in cases:
        code, _out, err = run(fresh_db, *argv, capsys=capsys)
        assert code == 2 and expected in err, (argv, err)
    assert Store(fresh_db).rows("SELECT COUNT(*) AS n FROM journal")[0]["n"] == before


def test_a_tag_with_several_open_leaks_is_refused_listing_them(fresh_db, capsys):
    _start(fresh_db, capsys)
    survey = f"{SITE['name']}@{DAY}"
    for at in ("09:00", "11:00"):
        assert run(fresh_db, "leak", "add", "--survey", survey, "--tag", "P-1", "--detected-at", f"{DAY}T{at}",
                   capsys=capsys)[0] == 0
    code, _out, err = run(fresh_db, "action", "add", "first-attempt", "P-1", "--done-on", "2026-03-03",
                          capsys=capsys)
    assert code == 2 and "matches 2 open leaks" in err and err.count(f"P-1@{DAY}") == 2


def test_actor_comes_from_the_store_setting_then_the_login_name(fresh_db, capsys, monkeypatch):
    monkeypatch.delenv("PLUMEBOOK_ACTOR", raising=False)
    monkeypatch.setattr("getpass.getuser", lambda: "loginname")
    assert main(["--db", str(fresh_db), "config", "actor"]) == 0
    assert "acts as loginname (login name)" in capsys.readouterr().out
    assert main(["--db", str(fresh_db), "config", "actor", "Desk Person (invented)"]) == 0
    capsys.readouterr()
    assert main(["--db", str(fresh_db), "survey", "start", "--site", SITE["name"], "--started-at", f"{DAY}T08:30",
                 *CONDITIONS, *[a for k, v in START.items() for a in (f"--{k.replace('_', '-')}", v)]]) == 0
    assert "acting as Desk Person (invented) (store setting)" in capsys.readouterr().out
    last = Store(fresh_db).rows("SELECT actor FROM journal ORDER BY seq DESC LIMIT 1")[0]["actor"]
    assert last == "Desk Person (invented)"
    assert main(["--db", str(fresh_db), "config", "actor", "?"]) == 2


def test_nobody_named_refuses_the_write(fresh_db, capsys, monkeypatch):
    monkeypatch.delenv("PLUMEBOOK_ACTOR", raising=False)

    def no_login():
        raise OSError("no login name")

    monkeypatch.setattr("getpass.getuser", no_login)
    before = _counts(fresh_db)
    code = main(["--db", str(fresh_db), "survey", "start", "--site", SITE["name"], "--started-at", f"{DAY}T08:30",
                 *CONDITIONS, *[a for k, v in START.items() for a in (f"--{k.replace('_', '-')}", v)]])
    assert code == 2 and "--actor: nobody is named" in capsys.readouterr().err
    assert _counts(fresh_db) == before
    assert main(["--db", str(fresh_db), "sites", "--json"]) == 0  # reading needs no name


# -- the due list warns -------------------------------------------------------------------------------


def test_the_hazardous_demo_leak_carries_its_hazard_in_json_csv_and_table(demo_store, capsys):
    # TD-0051 is the demo's hazardous leak (demo_site/scenario.toml: hazard = true, may carry H2S).
    db = str(demo_store.path)
    assert main(["--db", db, "due", "--as-of", "2026-12-01", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)["items"]
    assert {r["tag"] for r in rows if r["hazard"]} == {"TD-0051"}
    assert all(r["hazard"] is False for r in rows if r["tag"] != "TD-0051")
    assert main(["--db", db, "due", "--as-of", "2026-12-01", "--csv"]) == 0
    table = list(csv.DictReader(io.StringIO(capsys.readouterr().out)))
    assert "hazard" in table[0] and "repeat_leaker" in table[0]
    assert {r["tag"] for r in table if r["hazard"] == "true"} == {"TD-0051"}
    assert main(["--db", db, "due", "--as-of", "2026-12-01"]) == 0
    out = capsys.readouterr().out
    header = out.splitlines()[0]
    assert "hazard" in header and "repeat leaker" in header and " ! " not in header
    lines = [line for line in out.splitlines() if "TD-0051" in line]
    assert lines and all("HAZARD" in line for line in lines)
    assert any("REPEAT LEAKER" in line for line in out.splitlines() if "TD-0033" in line)
    assert "personal gas monitor" in out


def test_standings_are_words_explained_in_help(demo_store, capsys):
    from sync.tables import STANDINGS

    assert main(["--db", str(demo_store.path), "due", "--as-of", "2026-12-01", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)["items"]
    words = {r["standing"] for r in rows}
    assert "open" not in words and "due" not in words
    for r in rows:
        s = r["standing"]
        if s.startswith("window opens "):
            assert s == f"window opens {r['earliest']}" and r["earliest"] > "2026-12-01"
        elif s.startswith("due in "):
            assert s.split()[2] == str(r["days_left"])
        else:
            assert s in {"overdue", "due now", "due today", "no fixed date"}, s
    assert {"overdue", "due now"} <= words and any(w.startswith("window opens") for w in words)
    assert main(["due", "--help"]) == 0
    helptext = capsys.readouterr().out
    for word, _meaning in STANDINGS:
        assert word in helptext


def test_cut_table_text_ends_with_an_ellipsis_at_a_word():
    from fieldapp.cmdkit import clip

    text = "first attempt within 30 calendar days of startup of the well site"
    cut = clip(text, 48)
    assert cut.endswith("…") and len(cut) <= 48
    assert text.startswith(cut[:-1]) and text[len(cut) - 1] == " "  # cut at a word boundary
    assert clip("short", 48) == "short"


# -- a leak's story -------------------------------------------------------------------------------------


def test_history_of_the_demos_repaired_and_resurveyed_leak_lists_its_story_in_order(demo_store, capsys):
    # TD-0007 (demo_site/scenario.toml): first attempt, repair, resurvey passed, and one photo.
    assert main(["--db", str(demo_store.path), "history", "TD-0007", "--json"]) == 0
    story = json.loads(capsys.readouterr().out)
    whats = [(e["what"], (e["new"] or {}).get("kind")) for e in story["events"]]
    assert whats == [("component", None), ("leak", None), ("media", None), ("action", "first_attempt"),
                     ("action", "repaired"), ("action", "resurvey_passed")]
    photo = story["events"][2]
    sha = demo_store.rows("SELECT sha256 FROM media WHERE id = ?", (photo["row_id"],))[0]["sha256"]
    assert photo["sha256"] == sha and len(sha) == 64
    assert all(e["actor"] and e["device_id"] and e["recorded_at"] for e in story["events"])
    days = [e["on"] for e in story["events"][1:]]
    assert days == sorted(days)
    assert main(["--db", str(demo_store.path), "history", "TD-0007"]) == 0
    text = capsys.readouterr().out
    assert text.index("first attempt") < text.index("repaired") < text.index("resurvey passed")
    assert f"sha256 {sha}" in text


def test_history_shows_edits_with_old_and_new_values_and_as_of(tmp_path, capsys):
    from datetime import datetime
    from zoneinfo import ZoneInfo

    from tests.conftest import Wall

    wall = Wall(datetime(2026, 3, 2, 20, 0, tzinfo=ZoneInfo("UTC")))
    store = Store(tmp_path / "edit.db", actor=ACTOR, wall=wall)
    site = ops.add_site(store, SITE, ACTOR)
    comp = ops.add_component(store, {"site_id": site.id, "tag": "P-1", "type": "valve", "service": "gas"}, ACTOR)
    survey, _ = ops.start_survey(store, {**START, "site_id": site.id, "ambient_temp_c": 5, "wind_max_m_s": 3,
                                         "started_at": f"{DAY}T08:30:00-07:00"}, ACTOR)
    leak = ops.add_leak(store, {"survey_id": survey.id, "component_id": comp.id, "screening_ppm": 500,
                                "detected_at": f"{DAY}T09:00:00-07:00"}, actor=ACTOR)
    wall.advance(10 * 86400)
    ops.edit(store, "leaks", leak.id, {"screening_ppm": 900.0}, "Corrector (invented)")
    store.close()
    db = str(tmp_path / "edit.db")
    assert main(["--db", db, "history", "P-1", "--json"]) == 0
    story = json.loads(capsys.readouterr().out)
    edit = [e for e in story["events"] if e["what"] == "edit"]
    assert len(edit) == 1 and edit[0]["old"]["screening_ppm"] == 500.0 and edit[0]["new"]["screening_ppm"] == 900.0
    assert "500.0 -> 900.0" in edit[0]["summary"] and edit[0]["actor"] == "Corrector (invented)"
    assert main(["--db", db, "history", "P-1", "--as-of", "2026-03-05", "--json"]) == 0
    then = json.loads(capsys.readouterr().out)
    assert then["leak"]["screening_ppm"] == 500.0 and not [e for e in then["events"] if e["what"] == "edit"]
    assert story["leak"]["screening_ppm"] == 900.0


# -- a contractor's work ---------------------------------------------------------------------------------

WORK_HEADER = "tag,kind,date,who,instrument,method,note\n"


def _two_leaks(db, capsys, same_tag: bool = False):
    _start(db, capsys)
    for tag, at in (("P-1", "09:00"), ("P-1" if same_tag else "P-2", "11:00")):
        assert run(db, "leak", "add", "--survey", f"{SITE['name']}@{DAY}", "--tag", tag, "--detected-at",
                   f"{DAY}T{at}", capsys=capsys)[0] == 0


def _counts(db) -> tuple[int, int]:
    store = Store(db)
    try:
        return (store.rows("SELECT COUNT(*) AS n FROM actions")[0]["n"],
                store.rows("SELECT COUNT(*) AS n FROM journal")[0]["n"])
    finally:
        store.close()


def test_contractor_work_applies_in_one_transaction_and_a_reimport_is_refused(fresh_db, tmp_path, capsys):
    _two_leaks(fresh_db, capsys)
    work = tmp_path / "work.csv"
    work.write_text(WORK_HEADER + "P-1,first-attempt,2026-03-03,Tess Harrow (invented),,,tightened\n"
                    "P-1,repaired,2026-03-04,Tess Harrow (invented),,,replaced packing\n"
                    f"P-2@{DAY},repaired,2026-03-04,Tess Harrow (invented),,,\n"
                    "P-1,resurvey_passed,2026-03-05,Tess Harrow (invented),camera S-1,ogi,\n", encoding="utf-8")
    before = _counts(fresh_db)
    code, out, err = run(fresh_db, "import", "work", str(work), capsys=capsys)
    assert code == 0, err
    assert "imported 4 action(s)" in out
    after = _counts(fresh_db)
    assert after == (before[0] + 4, before[1] + 4)
    store = Store(fresh_db)
    seqs = store.rows("SELECT seq FROM journal ORDER BY seq DESC LIMIT 4")
    assert len({r["seq"] for r in seqs}) == 4
    assert {r["actor"] for r in store.rows("SELECT actor FROM actions")} == {"Tess Harrow (invented)"}
    store.close()
    # Re-import: refused, every line named, nothing changes (tests the decision in fieldapp/store/work_import.py).
    code, _out, err = run(fresh_db, "import", "work", str(work), capsys=capsys)
    assert code == 2 and "already recorded" in err and "nothing was imported" in err
    assert all(f"line {n}:" in err for n in (2, 3, 4, 5))
    assert _counts(fresh_db) == after


def test_contractor_work_with_one_bad_row_imports_nothing_and_names_the_line(fresh_db, tmp_path, capsys):
    _two_leaks(fresh_db, capsys)
    work = tmp_path / "work.csv"
    work.write_text(WORK_HEADER + "P-1,first-attempt,2026-03-03,Tess Harrow (invented),,,\n"
                    "P-2,repaired,2026-02-30,Tess Harrow (invented),,,\n"
                    "P-1,repaired,2026-03-04,Tess Harrow (invented),,,\n", encoding="utf-8")
    before = _counts(fresh_db)
    code, _out, err = run(fresh_db, "import", "work", str(work), capsys=capsys)
    assert code == 2 and "line 3: date:" in err and "nothing was imported" in err
    assert "line 2:" not in err and "line 4:" not in err
    assert _counts(fresh_db) == before


def test_contractor_work_refuses_a_tag_with_several_open_leaks_naming_them(fresh_db, tmp_path, capsys):
    _two_leaks(fresh_db, capsys, same_tag=True)
    work = tmp_path / "work.csv"
    work.write_text(WORK_HEADER + "P-1,repaired,2026-03-04,Tess Harrow (invented),,,\n", encoding="utf-8")
    code, _out, err = run(fresh_db, "import", "work", str(work), capsys=capsys)
    assert code == 2 and "line 2: tag: 'P-1' matches 2 open leaks" in err and err.count(f"P-1@{DAY}") >= 2
    assert _counts(fresh_db)[0] == 0


def test_progress_is_silent_when_stderr_is_not_a_terminal(capsys):
    from fieldapp.cmdkit import progress

    with progress(3, "rows") as bar:
        for _ in range(3):
            bar.update(1)
    assert capsys.readouterr().err == ""


def test_progress_shows_on_a_terminal(monkeypatch):
    import io
    import sys

    from fieldapp.cmdkit import progress

    class Tty(io.StringIO):
        def isatty(self):
            return True

    fake = Tty()
    monkeypatch.setattr(sys, "stderr", fake)
    with progress(3, "rows") as bar:
        bar.update(3)
    assert "rows:" in fake.getvalue() and "/3" in fake.getvalue()


def test_a_survey_day_with_two_surveys_is_refused_listing_both(fresh_db, capsys):
    _start(fresh_db, capsys)
    code, _out, err = run(fresh_db, "survey", "start", "--site", SITE["name"], "--started-at", f"{DAY}T13:30",
                          *CONDITIONS, *[a for k, v in START.items() for a in (f"--{k.replace('_', '-')}", v)],
                          capsys=capsys)
    assert code == 0, err
    code, _out, err = run(fresh_db, "leak", "add", "--survey", f"{SITE['name']}@{DAY}", "--tag", "P-1",
                          capsys=capsys)
    assert code == 2 and "matches 2 surveys" in err and "T08:30" in err and "T13:30" in err
    code, _out, err = run(fresh_db, "survey", "end", "Nowhere@2026-03-02", "--no-deviations", capsys=capsys)
    assert code == 2 and "site: 'Nowhere' is not a site id or name" in err and SITE["name"] in err
