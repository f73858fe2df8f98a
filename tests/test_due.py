"""The due list over a store, and program files that are invalid."""

from __future__ import annotations

import json
from datetime import date

import pytest

from fieldapp import catalog
from fieldapp.cli import main
from fieldapp.core.fields import ValidationError
from fieldapp.store import ops
from fieldapp.store.due import due_list
from fieldapp.store.reads import list_leaks

TODAY = date(2026, 12, 1)  # the demo is loaded relative to this day (tests/conftest.py DEMO_NOW)


def test_demo_due_list_puts_overdue_first_with_rule_and_citation(demo_store):
    items, problems = due_list(demo_store, TODAY)
    assert not problems
    overdue = [i for i in items if i.overdue(TODAY)]
    assert overdue and items[: len(overdue)] == overdue
    first_attempts = [i for i in overdue if i.kind == "first_attempt"]
    assert [i.tag for i in first_attempts] == ["TD-0051"]
    # 30 days after detection on 2026-10-22 [memory, 40 CFR 60.5397a(h)(1)]
    assert first_attempts[0].due == date(2026, 11, 21) and "60.5397a" in first_attempts[0].citation
    surveys = {(i.site_name, i.method) for i in overdue if i.kind == "survey"}
    assert ("Brackwater Tank Battery 1", "ogi") in surveys  # last survey 230 days ago: past 7 months
    assert all(i.leak_id for i in items if i.kind != "survey")


def test_due_list_changes_when_an_action_is_logged(demo_store):
    leak = next(r for r in list_leaks(demo_store) if r["tag"] == "TD-0051")
    before = {(i.leak_id, i.kind) for i in due_list(demo_store, TODAY)[0]}
    assert (leak["id"], "first_attempt") in before
    ops.add_action(demo_store, {"leak_id": leak["id"], "kind": "first_attempt", "done_on": "2026-12-01",
                                "actor": "tester"})
    after = {(i.leak_id, i.kind) for i in due_list(demo_store, TODAY)[0]}
    assert (leak["id"], "first_attempt") not in after and (leak["id"], "final_repair") in after


def test_within_filter_and_site_filter(demo_store):
    site = demo_store.rows("SELECT id FROM sites WHERE name = 'Orrel Mesa Pad 2'")[0]["id"]
    items, _ = due_list(demo_store, TODAY, site_id=site, within_days=7)
    assert items and all(i.site_id == site for i in items)
    assert all(i.days_left(TODAY) <= 7 for i in items)


def test_repeat_leaker_is_flagged_on_due_list_and_leaks(demo_store):
    # TD-0033 leaked in both of its site's last surveys: 2 of the last 4 (issue rule).
    items, _ = due_list(demo_store, TODAY)
    assert any(i.tag == "TD-0033" and i.repeat_leaker for i in items)
    flagged = {r["tag"] for r in list_leaks(demo_store) if r["repeat_leaker"]}
    assert flagged == {"TD-0033"}


def test_due_command_json_shape(demo_store, capsys):
    code = main(["--db", str(demo_store.path), "due", "--as-of", "2026-12-01", "--json"])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    row = data["items"][0]
    assert row["standing"] == "overdue"
    for key in ("kind", "due", "site", "tag", "rule", "citation", "days_left"):
        assert key in row


def test_rules_deadlines_command_shape(capsys):
    code = main(["rules", "deadlines", "--program", "us-method21-process-unit", "--detected", "2026-03-02",
                 "--json"])
    assert code == 0
    items = json.loads(capsys.readouterr().out)["items"]
    # 40 CFR 61.242-7(d) [text]
    assert [(i["kind"], i["due"]) for i in items] == [("first_attempt", "2026-03-07"), ("final_repair", "2026-03-17")]


def test_rules_deadlines_refuses_an_impossible_sequence(capsys):
    code = main(["rules", "deadlines", "--program", "us-nsps-oooo-a", "--detected", "2026-03-02",
                 "--repaired", "2026-03-01", "--json"])
    assert code == 2 and "before the leak was detected" in capsys.readouterr().err


def test_invalid_program_file_names_the_key(tmp_path):
    text = (catalog.SHIPPED_PROGRAMS / "company-template.toml").read_text()
    bad = tmp_path / "mine.toml"
    bad.write_text(text.replace('unit = "calendar_days" }, from = "detection", citation = "company standard '
                                'section 4.1"', 'unit = "weeks" }, from = "detection", citation = "company '
                                'standard section 4.1"'))
    with pytest.raises(ValidationError) as err:
        catalog.read_program_file(bad)
    assert "mine.toml: repair_tiers[0].first_attempt.within.unit" in str(err.value)
    assert "calendar_days" in str(err.value)


def test_user_program_copy_is_loaded_with_its_own_id(tmp_path, monkeypatch):
    text = (catalog.SHIPPED_PROGRAMS / "company-template.toml").read_text()
    (tmp_path / "ours.toml").write_text(text.replace('id = "company-template"', 'id = "ours"'))
    monkeypatch.setenv("PLUMEBOOK_PROGRAMS", str(tmp_path))
    assert catalog.programs()["ours"][1] == "user"
    (tmp_path / "dup.toml").write_text(text)
    with pytest.raises(ValidationError, match="already used"):
        catalog.programs()


def test_every_shipped_value_has_a_citation_and_status():
    for program, origin in catalog.programs().values():
        assert origin == "shipped"
        rules = [r for t in program.repair_tiers for r in t.rules.values()]
        for cited in [*rules, *program.inspections, *program.leak_definition.values()]:
            assert cited.citation and cited.status in ("text", "memory", "summary", "company")
