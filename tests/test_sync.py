"""Bundles and the office merge: round trip, idempotence, order independence, hostile bundles."""

from __future__ import annotations

import hashlib
import itertools
import json
import shutil
import zipfile
from datetime import timedelta

import pytest

from fieldapp.core.fields import ValidationError
from fieldapp.evidence.ingest import library
from fieldapp.store import ops
from fieldapp.store.base import Store
from fieldapp.store.history import history
from fieldapp.store.importer import import_components
from sync.bundle import make_device_bundle, make_office_bundle, pending_changes
from sync.dump import canonical, fingerprint
from sync.merge import conflicts, merge, merge_many
from sync.tables import unguard
from sync.trust import enrol_each_other
from tests.conftest import DEMO_NOW, SITE, Wall


def new_store(tmp_path, name, wall=None):
    return Store(tmp_path / name / "store.db", actor=name, wall=wall or Wall())


def trusted(office, *tablets):
    """Enrol each tablet at the office and the office on each tablet (bundles are signed)."""
    for tablet in tablets:
        enrol_each_other(office, tablet)
    return office


def test_round_trip_reproduces_every_record_and_media_file(demo_store, tmp_path):
    office = trusted(new_store(tmp_path, "office"), demo_store)
    bundle = make_device_bundle(demo_store, tmp_path / "b.zip")
    result = merge(office, bundle.path)
    assert result.media == 22  # one photo per demo leak; 22 since the AVO-found leak of issue 11
    assert canonical(office) == canonical(demo_store)
    for row in office.rows("SELECT sha256 FROM media"):
        assert library(office).original(row["sha256"]).read_bytes() == \
            library(demo_store).original(row["sha256"]).read_bytes()


def test_merging_twice_changes_nothing(demo_store, tmp_path):
    office = trusted(new_store(tmp_path, "office"), demo_store)
    path = make_device_bundle(demo_store, tmp_path / "b.zip").path
    merge(office, path)
    before = fingerprint(office)
    assert merge(office, path).new_entries == 0
    assert fingerprint(office) == before


def test_remade_bundle_after_a_failed_hand_over_repeats_the_changes(demo_store, tmp_path):
    first = make_device_bundle(demo_store, tmp_path / "b1.zip")
    again = make_device_bundle(demo_store, tmp_path / "b2.zip")  # office never acknowledged b1
    assert (again.seq_from, again.seq_to) == (first.seq_from, first.seq_to)


def three_devices(tmp_path):
    """An office that sends one site to three tablets; each tablet edits, two edit the same field."""
    office = new_store(tmp_path, "office")
    site = ops.add_site(office, SITE)
    comp = ops.add_component(office, {"site_id": site.id, "tag": "C-1", "type": "valve", "service": "gas"})
    tablets = []
    for i in range(3):
        tablet = new_store(tmp_path, f"tablet{i}", Wall())
        trusted(office, tablet)
        merge(tablet, make_office_bundle(office, tmp_path / f"o{i}.zip", tablet.device_id).path)
        tablets.append(tablet)
    tablets[0].wall.advance(10)
    ops.edit(tablets[0], "components", comp.id, {"area": "north skid"})
    tablets[1].wall.advance(20)
    ops.edit(tablets[1], "components", comp.id, {"area": "south skid"})
    tablets[2].wall.advance(5)
    ops.edit(tablets[2], "components", comp.id, {"equipment": "separator"})
    ops.add_component(tablets[2], {"site_id": site.id, "tag": "C-2", "type": "flange", "service": "gas"})
    bundles = [make_device_bundle(t, tmp_path / f"t{i}.zip").path for i, t in enumerate(tablets)]
    return office, comp, bundles


def test_three_devices_in_every_order_give_the_same_office_state(tmp_path):
    office, comp, bundles = three_devices(tmp_path)
    seed = tmp_path / "office"
    prints = set()
    for n, order in enumerate(itertools.permutations(bundles)):
        copy = tmp_path / f"copy{n}"
        shutil.copytree(seed, copy)
        store = Store(copy / "store.db")
        for path in order:
            merge(store, path)
        prints.add(fingerprint(store))
        row = store.get("components", comp.id)
        assert (row["area"], row["equipment"]) == ("south skid", "separator")  # later stamp wins the area
        found = conflicts(store)
        assert len(found) == 1 and found[0]["field"] == "area" and json.loads(found[0]["loser_value"]) == "north skid"
        store.close()
    assert len(prints) == 1


def test_office_bundle_acknowledges_the_tablets_entries(demo_store, tmp_path):
    office = trusted(new_store(tmp_path, "office"), demo_store)
    # every record change counts, the imported inventory once per component
    records = sum(demo_store.conn.execute(f"SELECT COUNT(*) FROM {t}").fetchone()[0]
                  for t in ("sites", "components", "surveys", "leaks", "actions", "media", "markers"))
    updates = demo_store.conn.execute("SELECT COUNT(*) FROM journal WHERE op IN ('update', 'delete')").fetchone()[0]
    assert pending_changes(demo_store) == records + updates
    merge(office, make_device_bundle(demo_store, tmp_path / "b.zip").path)
    merge(demo_store, make_office_bundle(office, tmp_path / "o.zip", demo_store.device_id).path)
    nothing_new = make_device_bundle(demo_store, tmp_path / "b2.zip")
    assert nothing_new.entries == 0
    assert pending_changes(demo_store) == 0


def rewrite(src, dst, change):
    """Copy a bundle, letting ``change(name, data) -> (name, data) | None`` alter members."""
    with zipfile.ZipFile(src) as zin, zipfile.ZipFile(dst, "w") as zout:
        for info in zin.infolist():
            out = change(info.filename, zin.read(info))
            if out is not None:
                zout.writestr(out[0], out[1])
    return dst


def manifest_edit(edit):
    def change(name, data):
        if name == "manifest.json":
            m = json.loads(data)
            edit(m)
            return name, json.dumps(m)
        return name, data
    return change


def resigned_journal(good, out, edit):
    """Copy a bundle with its journal entries edited and the manifest's hash and size made to match."""
    with zipfile.ZipFile(good) as zf:
        entries = [json.loads(line) for line in zf.read("journal.jsonl").splitlines()]
    edit(entries)
    body = b"".join(json.dumps(e).encode() + b"\n" for e in entries)

    def change(name, data):
        if name == "journal.jsonl":
            return name, body
        if name == "manifest.json":
            m = json.loads(data)
            for member in m["members"]:
                if member["name"] == "journal.jsonl":
                    member.update(size=len(body), sha256=hashlib.sha256(body).hexdigest())
            return name, json.dumps(m)
        return name, data
    return rewrite(good, out, change)


def first_batch(entries):
    return next(e for e in entries if e["op"] == "insert_batch")


def hostile(kind, good, tmp_path):
    out = tmp_path / f"{kind}.zip"
    if kind == "truncated":
        out.write_bytes(good.read_bytes()[: len(good.read_bytes()) // 2])
    elif kind == "flipped_byte":
        raw = bytearray(good.read_bytes())
        raw[len(raw) // 3] ^= 0xFF
        out.write_bytes(bytes(raw))
    elif kind == "hash_mismatch":
        rewrite(good, out, lambda n, d: (n, d.replace(b'"op": "insert"', b'"op": "delete"', 1))
                if n == "journal.jsonl" else (n, d))
    elif kind == "size_mismatch":
        rewrite(good, out, manifest_edit(lambda m: m["members"][0].update(size=m["members"][0]["size"] + 1)))
    elif kind == "absolute_path":
        rewrite(good, out, lambda n, d: ("/etc/" + n, d) if n == "journal.jsonl" else (n, d))
    elif kind == "dot_dot":
        rewrite(good, out, lambda n, d: ("../" + n, d) if n == "journal.jsonl" else (n, d))
    elif kind == "link":
        rewrite(good, out, lambda n, d: (n, d))
        with zipfile.ZipFile(out, "a") as zf:
            info = zipfile.ZipInfo("media/" + "0" * 64)
            info.external_attr = (0o120777 << 16)
            zf.writestr(info, "/etc/passwd")
    elif kind == "bomb":
        rewrite(good, out, lambda n, d: (n, d))
        with zipfile.ZipFile(out, "a", zipfile.ZIP_DEFLATED) as zf:
            zf.writestr("programs/zeros.toml", b"\0" * 50_000_000)
    elif kind == "unknown_version":
        rewrite(good, out, manifest_edit(lambda m: m.update(version=99)))
    elif kind == "wrong_value_type":  # consistent hashes, but an entry's new values are a string
        resigned_journal(good, out, lambda es: es[-1].update(new="DROP TABLE sites"))
    elif kind == "bad_stamp":
        resigned_journal(good, out, lambda es: es[0].update(hlc="9999"))
    elif kind == "batch_ids_out_of_order":
        resigned_journal(good, out, lambda es: first_batch(es)["new"]["columns"]["id"].reverse())
    elif kind == "dangling_reference":  # well formed, but a leak points at a component nobody has
        resigned_journal(good, out, lambda es: next(e for e in es if e["tbl"] == "leaks")["new"].update(
            component_id="01234567-89ab-7cde-8f01-23456789abcd"))
    elif kind == "batch_columns_uneven":
        resigned_journal(good, out, lambda es: first_batch(es)["new"]["columns"]["tag"].pop())
    return out


HOSTILE = ["truncated", "flipped_byte", "hash_mismatch", "size_mismatch", "absolute_path", "dot_dot", "link",
           "bomb", "unknown_version", "wrong_value_type", "bad_stamp", "batch_ids_out_of_order",
           "batch_columns_uneven", "dangling_reference"]


@pytest.mark.parametrize("kind", HOSTILE)
def test_hostile_bundle_is_refused_and_changes_nothing(demo_store, tmp_path, kind):
    office = trusted(new_store(tmp_path, "office"), demo_store)
    good = make_device_bundle(demo_store, tmp_path / "good.zip").path
    bad = hostile(kind, good, tmp_path)
    before = fingerprint(office)
    with pytest.raises(ValidationError, match="bundle"):
        merge(office, bad)
    assert fingerprint(office) == before
    assert not list(library(office).root.rglob("*")) or not list(library(office).originals.rglob("*"))


def test_out_of_order_replay_is_refused(demo_store, tmp_path):
    office = trusted(new_store(tmp_path, "office"), demo_store)
    first = make_device_bundle(demo_store, tmp_path / "b1.zip", since=0)
    ops.add_site(demo_store, {**SITE, "name": "Another pad"})
    second = make_device_bundle(demo_store, tmp_path / "b2.zip", since=first.seq_to)
    before = fingerprint(office)
    with pytest.raises(ValidationError, match="out of order"):
        merge(office, second.path)
    assert fingerprint(office) == before
    merge(office, first.path)
    merge(office, second.path)
    assert office.rows("SELECT 1 FROM sites WHERE name = 'Another pad'")


def test_several_bundles_merge_in_one_transaction(demo_store, tmp_path):
    """One command, one transaction: bundles that depend on each other go in together; one bad bundle
    among good ones changes nothing at all."""
    first = make_device_bundle(demo_store, tmp_path / "b1.zip", since=0)
    ops.add_site(demo_store, {**SITE, "name": "Another pad"})
    second = make_device_bundle(demo_store, tmp_path / "b2.zip", since=first.seq_to)
    office = trusted(new_store(tmp_path, "office"), demo_store)
    before = fingerprint(office)
    bad = hostile("flipped_byte", first.path, tmp_path)
    with pytest.raises(ValidationError, match="bundle"):
        merge_many(office, [first.path, second.path, bad])
    with pytest.raises(ValidationError, match="out of order"):
        merge_many(office, [second.path, first.path])
    assert fingerprint(office) == before
    results = merge_many(office, [first.path, second.path])
    assert [r.new_entries for r in results] == [first.entries, second.entries]
    assert canonical(office, journal=False) == canonical(demo_store, journal=False)
    assert canonical(office)["journal"] == canonical(demo_store)["journal"]


def test_an_imported_inventory_edited_on_two_devices_merges_field_by_field(tmp_path):
    """Batch entries of an import take part in the field-level merge like single inserts."""
    office, a, b = (new_store(tmp_path, n, Wall(DEMO_NOW + timedelta(seconds=k)))
                         for k, n in enumerate(("office", "a", "b")))
    site = ops.add_site(office, SITE)
    csv_file = tmp_path / "c.csv"
    csv_file.write_text("tag,type,service\n" + "".join(f"V-{i},valve,gas\n" for i in range(50)))
    import_components(office, csv_file, site.id)
    for tablet in (a, b):
        trusted(office, tablet)
        merge(tablet, make_office_bundle(office, tmp_path / f"to-{tablet.actor}.zip", tablet.device_id).path)
    target = a.rows("SELECT id FROM components WHERE tag = 'V-25'")[0]["id"]
    ops.edit(a, "components", target, {"area": "east"})
    ops.edit(b, "components", target, {"equipment": "separator 2"})
    merge_many(office, [make_device_bundle(t, tmp_path / f"from-{t.actor}.zip").path for t in (a, b)])
    row = office.get("components", target)
    assert (row["area"], row["equipment"], row["tag"]) == ("east", "separator 2", "V-25")
    assert [e["op"] for e in history(office, target)] == ["insert", "update", "update"]
    assert office.conn.execute("SELECT COUNT(*) FROM components").fetchone()[0] == 50


def test_bundle_commands(demo_store, tmp_path, capsys):
    from fieldapp.cli import main

    office = tmp_path / "office.db"
    trusted(Store(office), demo_store)
    out = tmp_path / "cli.zip"
    assert main(["--db", str(demo_store.path), "bundle", "make", "--out", str(out)]) == 0
    assert main(["--db", str(office), "bundle", "merge", str(out), str(out)]) == 0
    text = capsys.readouterr().out
    assert "0 new entries" in text
    out.write_bytes(b"PK not really")
    assert main(["--db", str(office), "bundle", "merge", str(out)]) == 2
    assert "not a readable zip" in capsys.readouterr().err


from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

LEAKS = st.lists(st.fixed_dictionaries({
    "tag": st.text(st.characters(min_codepoint=33, max_codepoint=0x2FFF, exclude_characters=",\x85\u2028\u2029"),
                   min_size=1,  # line breaks are refused in a tag (fieldapp.core.fields.text, single_line)
                   max_size=12).filter(str.strip),  # an all-whitespace tag (e.g. U+00A0) is refused as empty
    "type": st.sampled_from(["valve", "connector", "flange", "open_ended_line", "pump_seal", "thief_hatch"]),
    "service": st.sampled_from(["gas", "light_liquid", "water_oil"]),
    "note": st.text(max_size=30),
    "ppm": st.none() | st.floats(0, 200_000),
    "hazard": st.booleans(),
}), min_size=1, max_size=6, unique_by=lambda d: d["tag"].strip())


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(leaks=LEAKS)
def test_round_trip_record_store_bundle_office_csv(tmp_path_factory, leaks):
    """Property: whatever is recorded on a tablet comes out of the office CSV with the same values."""
    import csv as csv_module

    from sync.export import export_csv, leak_table

    folder = tmp_path_factory.mktemp("rt")
    tablet = Store(folder / "t" / "t.db", wall=Wall())
    site = ops.add_site(tablet, SITE)
    survey, _ = ops.start_survey(tablet, {
        "site_id": site.id, "method": "ogi", "started_at": "2026-11-30T08:00:00-07:00", "operator": "P",
        "qualification": "q", "camera_make": "m", "camera_model": "x", "camera_check": "passed",
        "ambient_temp_c": 1, "sky": "clear", "wind_max_m_s": 2})
    for n, leak in enumerate(leaks):
        values = {"survey_id": survey.id, "detected_at": f"2026-11-30T09:{n:02d}:00-07:00",
                  "location_note": leak["note"], "hazard": leak["hazard"]}
        if leak["ppm"] is not None:
            values["screening_ppm"] = leak["ppm"]
        ops.add_leak(tablet, values, new_component={"tag": leak["tag"], "type": leak["type"],
                                                     "service": leak["service"]})
    office = trusted(Store(folder / "o" / "o.db", wall=Wall()), tablet)
    merge(office, make_device_bundle(tablet, folder / "b.zip").path)
    assert leak_table(office) == leak_table(tablet)
    export_csv(office, folder / "csv")
    with open(folder / "csv" / "leaks.csv", encoding="utf-8", newline="") as fh:
        # text cells read back with the formula guard undone (DEVELOPERS.md, CSV layout)
        rows = {unguard(r["tag"]): {k: unguard(v) for k, v in r.items()} for r in csv_module.DictReader(fh)}
    for leak in leaks:
        row = rows[leak["tag"].strip()]
        assert (row["component_type"], row["service"], row["location_note"]) == (
            leak["type"], leak["service"], leak["note"].strip())
        assert row["hazard"] == ("true" if leak["hazard"] else "false")


def test_bundle_make_merge_and_export_report_their_progress_to_the_caller(demo_store, tmp_path):
    # the commands draw these ticks as a bar on a terminal (fieldapp.cmdkit.steps) and stay silent otherwise
    from sync.export import export_csv

    made, merged, exported = [], [], []
    office = trusted(new_store(tmp_path, "office"), demo_store)
    bundle = make_device_bundle(demo_store, tmp_path / "b.zip", progress=lambda d, t: made.append((d, t)))
    assert made[-1] == (23, 23) and len(made) == 23  # 22 photos read, then the file written
    merge_many(office, [bundle.path], progress=lambda d, t: merged.append((d, t)))
    assert merged == [(1, 3), (2, 3), (3, 3)]  # checked, applied, media stored and committed
    export_csv(office, tmp_path / "csv", progress=lambda d, t: exported.append((d, t)))
    assert exported[-1] == (6, 6) and [d for d, _t in exported] == [1, 2, 3, 4, 5, 6]


def test_bundle_and_export_commands_draw_a_bar_only_on_a_terminal(demo_store, tmp_path, monkeypatch, capsys):
    import io
    import sys

    from fieldapp.cli import main

    db = str(demo_store.path)
    assert main(["--db", db, "bundle", "make", "--out", str(tmp_path / "quiet.zip")]) == 0
    assert capsys.readouterr().err == ""

    class Tty(io.StringIO):
        def isatty(self):
            return True

    fake = Tty()
    monkeypatch.setattr(sys, "stderr", fake)
    assert main(["--db", db, "bundle", "make", "--out", str(tmp_path / "b.zip")]) == 0
    assert main(["--db", db, "export", "csv", "--out", str(tmp_path / "csv")]) == 0
    (tmp_path / "new.csv").write_text("tag,type,service\nZZ-1,valve,gas\n")
    assert main(["--db", db, "import", "components", str(tmp_path / "new.csv"), "--site",
                 "Tamsin Draw Compressor Station"]) == 0
    assert "importing stages:" in fake.getvalue() and "/3" in fake.getvalue()
    assert "writing bundle:" in fake.getvalue() and "/23" in fake.getvalue()
    assert "writing files:" in fake.getvalue() and "/6" in fake.getvalue()
