"""Every write path journals in the same transaction; past states rebuild exactly from the journal."""

from __future__ import annotations

import json

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fieldapp.core.fields import ValidationError
from fieldapp.store import ops
from fieldapp.store.base import NotFoundError, Store
from fieldapp.store.history import history, state_at
from fieldapp.store.importer import import_components
from tests.conftest import SITE


def journal_count(store):
    return store.conn.execute("SELECT COUNT(*) FROM journal").fetchone()[0]


def survey_values(site_id):
    return {"site_id": site_id, "method": "ogi", "started_at": "2026-11-30T08:00:00-07:00",
            "operator": "Tester", "qualification": "trained", "camera_make": "Make", "camera_model": "Model",
            "camera_check": "passed", "ambient_temp_c": "5", "sky": "clear", "wind_max_m_s": "3"}


def test_every_write_path_journals_with_consecutive_sequence_numbers(store, site, tmp_path):
    component = ops.add_component(store, {"site_id": site.id, "tag": "A-1", "type": "valve", "service": "gas"})
    csv_file = tmp_path / "c.csv"
    csv_file.write_text("tag,type,service\nA-2,connector,gas\nA-3,flange,gas\n")
    assert import_components(store, csv_file, site.id) == 2
    survey, _ = ops.start_survey(store, survey_values(site.id))
    ops.end_survey(store, survey.id, {"ended_at": "2026-11-30T11:00:00-07:00", "no_deviations": True})
    leak = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00"},
                        new_component={"tag": "NEW-1", "type": "connector", "service": "gas"})
    action = ops.add_action(store, {"leak_id": leak.id, "kind": "first_attempt", "done_on": "2026-11-30",
                                    "actor": "Tester"})
    ops.edit(store, "components", component.id, {"area": "north"})
    ops.delete(store, "components", component.id)
    entries = store.rows("SELECT tbl, op, row_id, seq FROM journal ORDER BY seq")
    assert [e["seq"] for e in entries] == list(range(1, len(entries) + 1))
    ops_by_row = {(e["row_id"], e["op"]) for e in entries}
    for row_id, op in [(site.id, "insert"), (component.id, "insert"), (survey.id, "insert"),
                       (survey.id, "update"), (leak.id, "insert"), (action.id, "insert"),
                       (component.id, "update"), (component.id, "delete")]:
        assert (row_id, op) in ops_by_row
    assert sum(1 for e in entries if e["tbl"] == "components" and e["op"] == "insert") == 2
    # the import is one user action: one batch entry that holds both rows, seen per record by history()
    (batch,) = [e for e in entries if e["op"] == "insert_batch"]
    imported = store.rows("SELECT * FROM components WHERE tag IN ('A-2', 'A-3') ORDER BY tag")
    assert batch["row_id"] == imported[0]["id"]
    for row in imported:
        (entry,) = history(store, row["id"])
        assert entry["op"] == "insert" and entry["batch_size"] == 2 and entry["seq"] == batch["seq"]
        assert entry["new"] == row
        assert state_at(store, row["id"]) == row


def test_history_of_an_imported_record_follows_later_edits(store, site, tmp_path, wall):
    csv_file = tmp_path / "c.csv"
    csv_file.write_text("tag,type,service,area\n" + "".join(f"B-{i},valve,gas,east\n" for i in range(300)))
    assert import_components(store, csv_file, site.id) == 300
    after_import = store.now_text()
    ids = [r["id"] for r in store.rows("SELECT id FROM components WHERE site_id = ? ORDER BY id", (site.id,))]
    wall.advance(60)
    ops.edit(store, "components", ids[150], {"area": "west"})
    entries = history(store, ids[150])
    assert [e["op"] for e in entries] == ["insert", "update"]
    assert state_at(store, ids[150], after_import)["area"] == "east"
    assert state_at(store, ids[150])["area"] == "west"
    # an id inside the batch's range that the batch does not hold has no history
    with pytest.raises(NotFoundError):
        history(store, ids[0] + "0")


def test_a_refused_action_writes_nothing(store, site):
    before = journal_count(store)
    with pytest.raises(ValidationError) as err:
        ops.add_leak(store, {"survey_id": "nope", "detected_at": "2026-11-30T09:00:00-07:00"})
    assert err.value.problems[0].field == "survey_id"
    survey, _ = ops.start_survey(store, survey_values(site.id))
    before = journal_count(store)
    with pytest.raises(ValidationError):
        # the new component is valid but the leak is not: the component must not be kept either
        ops.add_leak(store, {"survey_id": survey.id, "detected_at": "yesterday"},
                     new_component={"tag": "NEW-2", "type": "valve", "service": "gas"})
    assert journal_count(store) == before
    assert not store.rows("SELECT 1 FROM components WHERE tag = 'NEW-2'")


def test_past_state_is_rebuilt_exactly(store, site, wall):
    moments = []
    for name in ("Pad one", "Pad one east", "Pad one east (shut in)"):
        wall.advance(60)
        ops.edit(store, "sites", site.id, {"name": name})
        moments.append(store.now_text())
        wall.advance(60)
    assert state_at(store, site.id, moments[0])["name"] == "Pad one"
    assert state_at(store, site.id, moments[1])["name"] == "Pad one east"
    assert state_at(store, site.id)["name"] == "Pad one east (shut in)"
    assert state_at(store, site.id, "2000-01-01T00:00:00+00:00") is None
    current = store.get("sites", site.id)
    assert state_at(store, site.id) == current


def test_history_lists_old_and_new_values_oldest_first(store, site):
    ops.edit(store, "sites", site.id, {"methane_mole_fraction": 0.9})
    entries = history(store, site.id)
    assert [e["op"] for e in entries] == ["insert", "update"]
    assert entries[1]["old"]["methane_mole_fraction"] == 0.8
    assert entries[1]["new"]["methane_mole_fraction"] == 0.9
    assert entries[1]["actor"] == "tester"


def test_validation_errors_name_the_field(store):
    with pytest.raises(ValidationError) as err:
        ops.add_site(store, {**SITE, "kind": "moon base", "methane_mole_fraction": "1.7", "timezone": "Mars/Base"})
    fields = {p.field: p.message for p in err.value.problems}
    assert "well_site" in fields["kind"]
    assert "at most 1" in fields["methane_mole_fraction"]
    assert "IANA" in fields["timezone"]


def test_duplicate_tag_is_refused_by_name(store, site):
    ops.add_component(store, {"site_id": site.id, "tag": "T-1", "type": "valve", "service": "gas"})
    with pytest.raises(ValidationError, match="tag: 'T-1' is already used"):
        ops.add_component(store, {"site_id": site.id, "tag": "T-1", "type": "flange", "service": "gas"})


def test_rejected_import_writes_nothing_and_names_line_and_field(store, site, tmp_path):
    csv_file = tmp_path / "bad.csv"
    csv_file.write_text("tag,type,service\nB-1,valve,gas\nB-2,teapot,gas\nB-1,flange,gas\n")
    before = journal_count(store)
    with pytest.raises(ValidationError) as err:
        import_components(store, csv_file, site.id)
    found = {(p.line, p.field) for p in err.value.problems}
    assert (3, "type") in found and (4, "tag") in found
    assert journal_count(store) == before
    assert not store.rows("SELECT 1 FROM components")


EDITS = st.lists(st.tuples(
    st.sampled_from(["area", "equipment", "type", "service", "difficult_to_monitor"]),
    st.one_of(st.text(max_size=12), st.sampled_from(["valve", "flange", "gas", "water_oil", "yes", "no"])),
), max_size=12)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(edits=EDITS, imported=st.booleans())
def test_any_sequence_of_edits_replays_to_the_current_state(tmp_path_factory, edits, imported):
    folder = tmp_path_factory.mktemp("prop")
    store = Store(folder / "p.db")
    site = ops.add_site(store, SITE)
    if imported:  # the record starts in a bulk import's batch entry
        (folder / "c.csv").write_text("tag,type,service\nP-0,valve,gas\nP-1,valve,gas\nP-2,flange,gas\n")
        import_components(store, folder / "c.csv", site.id)
        comp_id = store.rows("SELECT id FROM components WHERE tag = 'P-1'")[0]["id"]
    else:
        comp_id = ops.add_component(store, {"site_id": site.id, "tag": "P-1", "type": "valve", "service": "gas"}).id
    for field, value in edits:
        try:
            ops.edit(store, "components", comp_id, {field: value})
        except ValidationError:
            pass
    assert history(store, comp_id)[-1]["new"] == store.get("components", comp_id)
    if not imported:  # and straight from the journal table, without history()
        replayed = {}
        for entry in store.rows("SELECT new FROM journal WHERE row_id = ? ORDER BY hlc", (comp_id,)):
            replayed = json.loads(entry["new"])
        assert replayed == store.get("components", comp_id)
    store.close()
