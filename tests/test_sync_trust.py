"""The sync boundary: hostile and mistaken bundles are refused with one clear line and change nothing.

Every case of issue 12's list is built from a real demo tablet's bundle, re-signed by the sender's
real key where the case is about the content (so the check under test is reached, not the
signature check), and each asserts the refusal's words and that the receiving store (every table,
every media file) is unchanged.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import tracemalloc
import zipfile
from datetime import timedelta

import pytest

from fieldapp.catalog import SHIPPED_PROGRAMS
from fieldapp.cli import main
from fieldapp.core.fields import ValidationError
from fieldapp.evidence.ingest import library
from fieldapp.store import ops
from fieldapp.store.base import Store
from sync.bundle import make_device_bundle, make_office_bundle
from sync.bundle_check import check
from sync.merge import merge
from sync.trust import enrol, enrol_each_other, public_key, revoke
from tests.conftest import DEMO_NOW, SITE, Wall
from tests.sync_helpers import entries_of, forge, next_entry, snapshot


@pytest.fixture
def office(tmp_path):
    s = Store(tmp_path / "office" / "office.db", actor="office", wall=Wall(DEMO_NOW + timedelta(minutes=5)))
    yield s
    s.close()


@pytest.fixture
def good(demo_store, office, tmp_path):
    enrol_each_other(office, demo_store)
    return make_device_bundle(demo_store, tmp_path / "good.zip").path


def first(es, tbl, op="insert"):
    return next(e for e in es if e["tbl"] == tbl and e["op"] == op)


def refused(store, path, message):
    before = snapshot(store)
    with pytest.raises(ValidationError, match=message):
        merge(store, path)
    assert snapshot(store) == before


# (case, edit of the decoded journal, words of the refusal). Values a form would refuse are named by
# the core parsers' own messages (fieldapp/core/fields.py).
def _old_mismatch(es):
    comp = first(es, "components", "insert_batch")
    row = {name: values[0] for name, values in comp["new"]["columns"].items()} | comp["new"]["same"]
    next_entry(es, tbl="components", row_id=row["id"], op="update", old={**row, "area": "never was"},
               new={**row, "area": "east"})


def _action_delete(es):
    action = first(es, "actions")
    next_entry(es, tbl="actions", row_id=action["row_id"], op="delete", old=action["new"],
               new={**action["new"], "deleted": 1})


def _future(es):
    millis = int((DEMO_NOW + timedelta(hours=48)).timestamp() * 1000)
    es[-1]["hlc"] = f"{millis:015d}" + es[-1]["hlc"][15:]


GATE = [
    ("action_kind_bogus", lambda es: first(es, "actions")["new"].update(kind="bogus"), "kind: 'bogus' is not allowed"),
    ("negative_ppm", lambda es: first(es, "leaks")["new"].update(screening_ppm=-5.0), "must be at least 0"),
    ("complex_ppm", lambda es: first(es, "leaks")["new"].update(screening_ppm="3+4j"), "wrong type"),
    ("ppm_as_object", lambda es: first(es, "leaks")["new"].update(screening_ppm={"re": 3}), "wrong type"),
    ("detected_time_rewritten", lambda es: first(es, "leaks")["new"].update(detected_at="2026-12-01 9am"),
     "detected_at: .* is not a date and time"),
    ("detected_time_without_offset", lambda es: first(es, "leaks")["new"].update(detected_at="2026-12-01T09:00:00"),
     "UTC offset is required"),
    ("row_of_another_record", lambda es: first(es, "leaks")["new"].update(id="01234567-89ab-7cde-8f01-23456789abcd"),
     "not of the record it names"),
    ("unknown_column", lambda es: first(es, "surveys")["new"].update(owner="x"), r"unknown \['owner'\]"),
    ("missing_column", lambda es: first(es, "surveys")["new"].pop("sky"), r"missing \['sky'\]"),
    ("text_not_stored_form", lambda es: first(es, "surveys")["new"].update(operator="  padded  "), "stored form"),
    ("flag_as_json_true", lambda es: first(es, "leaks")["new"].update(hazard=True), "hazard: True has the wrong type"),
    ("rate_without_unit", lambda es: first(es, "leaks")["new"].update(measured_rate=2.0, measured_unit="furlongs"),
     "measured_unit: allowed with a measured rate"),
    ("huge_integer", lambda es: first(es, "actions")["new"].update(seq=2**60), "out of range"),
    ("old_values_never_held", _old_mismatch, "old area 'never was' was never a value"),
    ("action_deleted_by_bundle", _action_delete, "actions are append-only: a bundle may not delete"),
    ("stamp_far_ahead", _future, "48 h ahead of this store's clock"),
]


@pytest.mark.parametrize("case,edit,message", GATE, ids=[g[0] for g in GATE])
def test_entry_a_form_would_refuse_is_refused_whole(demo_store, office, good, tmp_path, case, edit, message):
    refused(office, forge(good, tmp_path / f"{case}.zip", demo_store, entries=edit), message)
    # the refusal names the entry (device and sequence number) and the record
    with pytest.raises(ValidationError, match=r"entry [0-9a-f]{8}:\d+ \("):
        merge(office, tmp_path / f"{case}.zip")


def _deep(n):
    return "[" * n + "]" * n


STRUCTURE = [
    ("bzip2_member", dict(compress={"journal.jsonl": zipfile.ZIP_BZIP2}), "only stored and deflate"),
    ("seq_to_1e8", dict(manifest=lambda m: m.update(seq_to=10**8)), "range does not match its entry count"),
    ("seq_to_1e18", dict(manifest=lambda m: m.update(seq_to=10**18)), "range does not match its entry count"),
    ("seq_to_1e30", dict(manifest=lambda m: m.update(seq_to=10**30)), "seq_to must be a whole number from 0 to"),
    ("entries_text", dict(manifest=lambda m: m.update(entries="abc")), "entries must be a whole number"),
    ("members_not_a_list", dict(manifest=lambda m: m.update(members=5)), "members must each be"),
    ("member_without_hash", dict(manifest=lambda m: m["members"][0].pop("sha256")), "members must each be"),
    ("unknown_manifest_key", dict(manifest=lambda m: m.update(extra=1)), r"unknown \['extra'\]"),
    ("deep_manifest", dict(manifest=lambda m: m.update(created_at=json.loads("[1]"))), "created_at must be a text"),
    ("deep_entry", dict(members=lambda d: d.update({"journal.jsonl": _deep(5000).encode() + b"\n" +
                                                    d["journal.jsonl"].split(b"\n", 1)[1]})), "line 1 is damaged"),
    ("entry_not_object", dict(members=lambda d: d.update({"journal.jsonl": b"[]\n" +
                                                          d["journal.jsonl"].split(b"\n", 1)[1]})),
     "line 1: an entry lacks"),
    ("seq_as_float", dict(entries=lambda es: es[0].update(seq=1.0)), "wrong type"),
    ("stamp_of_another_device", dict(entries=lambda es: es[0].update(hlc=es[0]["hlc"][:23] + "0" * 36)),
     "stamp format of its device"),
]


@pytest.mark.parametrize("case,how,message", STRUCTURE, ids=[s[0] for s in STRUCTURE])
def test_malformed_bundle_is_one_clear_refusal(demo_store, office, good, tmp_path, case, how, message):
    refused(office, forge(good, tmp_path / f"{case}.zip", demo_store, **how), message)


def test_manifest_nested_past_the_json_limit_is_refused(demo_store, office, good, tmp_path):
    bad = tmp_path / "deep.zip"
    with zipfile.ZipFile(good) as zin, zipfile.ZipFile(bad, "w") as zout:
        for name in zin.namelist():
            zout.writestr(name, ('{"a": ' + _deep(100_000) + "}") if name == "manifest.json" else zin.read(name))
    refused(office, bad, "manifest.json is not valid JSON")


def test_flipped_byte_in_the_deflated_manifest(demo_store, office, good, tmp_path):
    raw = bytearray(good.read_bytes())
    with zipfile.ZipFile(good) as zf:
        info = zf.getinfo("manifest.json")
    start = info.header_offset + 30 + len(info.filename) + len(info.extra)
    raw[start + info.compress_size // 2] ^= 0x55
    bad = tmp_path / "flip.zip"
    bad.write_bytes(bytes(raw))
    refused(office, bad, "manifest.json.* (damaged|size)|not valid JSON")


def test_cli_gives_one_line_and_exit_2(demo_store, office, good, tmp_path, capsys):
    bad = forge(good, tmp_path / "bad.zip", demo_store, manifest=lambda m: m.update(seq_to=10**30))
    office.close()
    assert main(["--db", str(tmp_path / "office" / "office.db"), "bundle", "merge", str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err and "whole number" in err


def test_damaged_bundle_is_checked_in_full_when_its_range_is_held(demo_store, office, good, tmp_path):
    merge(office, good)
    altered = forge(good, tmp_path / "altered.zip", demo_store,
                    entries=lambda es: first(es, "surveys")["new"].update(sky="rewritten afterwards"))
    refused(office, altered, "differs from the entry this store already holds")
    invalid = forge(good, tmp_path / "invalid.zip", demo_store,
                    entries=lambda es: first(es, "leaks")["new"].update(screening_ppm=-1.0))
    refused(office, invalid, "must be at least 0")
    assert merge(office, good).new_entries == 0  # the very bundle merged before is still accepted


# Office bundles, received by the tablet.
@pytest.fixture
def office_bundle(demo_store, office, good, tmp_path, monkeypatch):
    monkeypatch.setenv("PLUMEBOOK_PROGRAMS", str(tmp_path / "programs"))
    merge(office, good)
    ops.add_site(office, {**SITE, "name": "Office pad"})
    return make_office_bundle(office, tmp_path / "office.zip", demo_store.device_id).path


def _program(name, text):
    return dict(members=lambda d: d.update({f"programs/{name}": text.encode()}))


SHIPPED = (SHIPPED_PROGRAMS / "us-nsps-oooo-a.toml").read_text(encoding="utf-8")
OFFICE = [
    ("invalid_toml", _program("ours.toml", "id = [unclosed"), "program file ours.toml: not valid TOML"),
    ("program_missing_keys", _program("ours.toml", 'id = "ours"\n'), "program file ours.toml: "),
    ("shipped_id_reused", _program("copy.toml", SHIPPED), "reuses the shipped program id 'us-nsps-oooo-a'"),
    ("ack_1e6_float", dict(manifest=lambda m: m.update(ack_seq=1e6)), "ack_seq must be a whole number"),
    ("ack_text", dict(manifest=lambda m: m.update(ack_seq="abc")), "ack_seq must be a whole number"),
    ("ack_1e30", dict(manifest=lambda m: m.update(ack_seq=10**30)), "ack_seq must be a whole number"),
    ("ack_past_what_was_sent", dict(manifest=lambda m: m.update(ack_seq=10**6)), "acknowledges entries up to 1000000"),
]


@pytest.mark.parametrize("case,how,message", OFFICE, ids=[o[0] for o in OFFICE])
def test_office_bundle_is_checked_as_strictly(demo_store, office, office_bundle, tmp_path, case, how, message):
    refused(demo_store, forge(office_bundle, tmp_path / f"{case}.zip", office, **how), message)
    assert not (tmp_path / "programs").exists()


def test_office_bundle_with_entries_in_the_tablets_own_id_is_refused(demo_store, office, office_bundle, tmp_path):
    me = demo_store.device_id

    def own(es):
        site = first(es, "sites")
        site.update(device_id=me, seq=10**5, hlc=site["hlc"][:23] + me)

    refused(demo_store, forge(office_bundle, tmp_path / "own.zip", office, entries=own),
            "numbered in this tablet's own device id")
    leak = first(entries_of(tmp_path / "good.zip"), "leaks")
    refused(demo_store, forge(office_bundle, tmp_path / "leak.zip", office, entries=lambda es: es.append(
        {**leak, "device_id": office.device_id, "hlc": leak["hlc"][:23] + office.device_id})),
        "office bundle carries only sites and components")


# Signatures and enrolment.
def test_unsigned_bundle_is_refused(demo_store, office, good, tmp_path):
    refused(office, forge(good, tmp_path / "unsigned.zip", None), "is not signed")


def test_bundle_of_an_unknown_device_is_refused(office, tmp_path):
    stranger = Store(tmp_path / "stranger" / "s.db", wall=Wall())
    ops.add_site(stranger, SITE)
    refused(office, make_device_bundle(stranger, tmp_path / "s.zip").path, "which is not an enrolled tablet")


def test_bundle_signed_with_another_key_than_the_enrolled_one(demo_store, office, good, tmp_path):
    impostor = Store(tmp_path / "impostor" / "i.db", wall=Wall())
    refused(office, forge(good, tmp_path / "impostor.zip", impostor), "signature does not match")


def test_revoked_tablet_is_refused_and_revoke_is_one_command(demo_store, office, good, tmp_path):
    office.close()
    db = str(tmp_path / "office" / "office.db")
    assert main(["--db", db, "revoke", demo_store.device_id]) == 0
    again = Store(db)
    refused(again, good, "revoked at")


def test_one_changed_byte_of_the_signature_is_refused(demo_store, office, good, tmp_path):
    bad = tmp_path / "sig.zip"
    with zipfile.ZipFile(good) as zin, zipfile.ZipFile(bad, "w") as zout:
        for name in zin.namelist():
            data = zin.read(name)
            if name == "manifest.sig":
                data = (b"0" if data[:1] != b"0" else b"1") + data[1:]
            zout.writestr(name, data)
    refused(office, bad, "signature does not match")


def test_tablet_merges_only_its_own_office(demo_store, office, good, tmp_path, monkeypatch):
    monkeypatch.setenv("PLUMEBOOK_PROGRAMS", str(tmp_path / "programs"))
    other = Store(tmp_path / "other" / "o.db", wall=Wall())
    enrol(other, demo_store.device_id, public_key(demo_store), "borrowed tablet")
    refused(demo_store, make_office_bundle(other, tmp_path / "other.zip", demo_store.device_id).path,
            "not this tablet's office")
    with pytest.raises(ValidationError, match="already trusts office"):
        enrol(demo_store, other.device_id, public_key(other), "second office", "office")
    revoke(demo_store, office.device_id)
    refused(demo_store, make_office_bundle(office, tmp_path / "o.zip", demo_store.device_id).path, "revoked")
    revoke(office, demo_store.device_id)  # and the office sends nothing to a revoked (or unknown) tablet
    with pytest.raises(ValidationError, match="for_device: tablet .* was revoked at"):
        make_office_bundle(office, tmp_path / "o2.zip", demo_store.device_id)
    with pytest.raises(ValidationError, match="is not enrolled here"):
        make_office_bundle(office, tmp_path / "o3.zip", other.device_id)


def test_enrol_and_device_commands(demo_store, tmp_path, capsys):
    db = str(tmp_path / "o.db")
    assert main(["--db", db, "init"]) == 0  # commands other than init, demo, app and merge never create a store
    capsys.readouterr()
    assert main(["--db", str(demo_store.path), "device"]) == 0
    device_id, key_line = capsys.readouterr().out.splitlines()
    pub = demo_store.path.parent / f"{demo_store.path.stem}-keys" / "device.pub"
    assert key_line.split()[2] == pub.read_text().strip()
    assert main(["--db", db, "enrol", device_id, str(pub), "--name", "Tablet 3"]) == 0
    assert main(["--db", db, "devices", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out.split("\n", 1)[1])
    assert [(r["name"], r["role"], r["revoked_at"]) for r in rows] == [("Tablet 3", "tablet", None)]
    assert main(["--db", db, "enrol", device_id, "not-a-key", "--name", "x"]) == 2


def test_missing_media_folder_is_named(demo_store, tmp_path, capsys):
    shutil.rmtree(library(demo_store).root)
    with pytest.raises(ValidationError, match="demo-media.* is missing: copy the store's media folder"):
        make_device_bundle(demo_store, tmp_path / "b.zip")
    assert main(["--db", str(demo_store.path), "bundle", "make", "--out", str(tmp_path / "b.zip")]) == 2
    assert "is missing" in capsys.readouterr().err
    survey = demo_store.rows("SELECT survey_id FROM leaks l JOIN media m ON m.leak_id = l.id LIMIT 1")[0]["survey_id"]
    assert main(["--db", str(demo_store.path), "report", "survey", survey, "--out", str(tmp_path / "s.pdf")]) == 2
    assert "demo-media/originals is missing" in capsys.readouterr().err


def test_peak_memory_of_checking_stays_bounded(demo_store, office, good, tmp_path):
    """Media are hashed in 1 MiB pieces: checking a bundle with a 32 MiB photo stays far under 2x that
    photo (the bound stated in sync/bundle_check.py: the journal and its entries plus a constant)."""
    big = os.urandom(32 * 1024**2)
    sha = hashlib.sha256(big).hexdigest()
    bundle = forge(good, tmp_path / "big.zip", demo_store, members=lambda d: d.update({f"media/{sha}": big}),
                   compress={f"media/{sha}": zipfile.ZIP_STORED})
    journal = len(zipfile.ZipFile(bundle).read("journal.jsonl"))
    tracemalloc.start()
    check(bundle)
    _now, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    assert peak < 2 * 1024**2 + 30 * journal, (peak, journal)


def test_office_bundle_altering_an_entry_the_tablet_holds_is_refused(demo_store, office, office_bundle, tmp_path):
    merge(demo_store, office_bundle)
    altered = forge(office_bundle, tmp_path / "altered.zip", office,
                    entries=lambda es: first(es, "sites")["new"].update(name="Renamed behind the journal"))
    refused(demo_store, altered, "differs from the entry this store already holds")
    assert merge(demo_store, office_bundle).new_entries == 0
