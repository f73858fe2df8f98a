"""Schema versions and migrations, including the upgrade of an old file."""

from __future__ import annotations

import sqlite3

import pytest

from fieldapp.store import schema
from fieldapp.store.base import Store


def test_fresh_store_is_at_latest_version_with_wal_and_foreign_keys(store):
    assert schema.current_version(store.conn) == schema.LATEST
    assert store.conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    assert store.conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
    assert len(store.device_id) == 36


def test_version_1_file_upgrades_and_keeps_its_rows(tmp_path):
    path = tmp_path / "old.db"
    conn = sqlite3.connect(path, isolation_level=None)
    assert schema.migrate(conn, target=1) == [1]
    conn.execute("INSERT INTO meta VALUES ('device_id', 'old-device')")
    conn.execute("INSERT INTO sites (id, name, kind, program_id, timezone, methane_mole_fraction) "
                 "VALUES ('s1', 'Old pad', 'well_site', 'us-nsps-oooo-a', 'America/Denver', 0.8)")
    conn.close()
    store = Store(path)
    assert schema.current_version(store.conn) == schema.LATEST
    assert store.device_id == "old-device"
    assert store.get("sites", "s1")["name"] == "Old pad"
    tables = {r[0] for r in store.conn.execute("SELECT name FROM sqlite_master WHERE type='table'")}
    assert {"media", "drafts"} <= tables


def test_failed_migration_leaves_the_file_at_its_old_version(tmp_path, monkeypatch):
    path = tmp_path / "old.db"
    conn = sqlite3.connect(path, isolation_level=None)
    schema.migrate(conn, target=1)

    def broken(c):
        c.execute("CREATE TABLE half_done (x)")
        raise RuntimeError("boom")

    monkeypatch.setattr(schema, "MIGRATIONS", [schema.MIGRATIONS[0], (2, "broken", broken)])
    with pytest.raises(RuntimeError):
        schema.migrate(conn, target=2)
    assert schema.current_version(conn) == 1
    assert not conn.execute("SELECT 1 FROM sqlite_master WHERE name = 'half_done'").fetchone()


def test_actions_and_journal_are_append_only(demo_store):
    for sql in ("UPDATE journal SET actor = 'x'", "DELETE FROM journal", "UPDATE actions SET note = 'x'",
                "DELETE FROM actions"):
        with pytest.raises(sqlite3.DatabaseError, match="append-only"):
            demo_store.conn.execute(sql)


def test_version_7_file_upgrades_with_no_segment_and_defaults_from_an_unambiguous_kind(tmp_path):
    path = tmp_path / "old.db"
    conn = sqlite3.connect(path, isolation_level=None)
    assert schema.migrate(conn, target=7) == [1, 2, 3, 4, 5, 6, 7]
    for sid, kind in (("s1", "well_site"), ("s2", "compressor_station")):
        conn.execute("INSERT INTO sites (id, name, kind, program_id, timezone, methane_mole_fraction) "
                     "VALUES (?, ?, ?, 'us-nsps-oooo-a', 'America/Denver', 0.8)", (sid, f"Old {kind}", kind))
    conn.close()
    store = Store(path)
    assert schema.current_version(store.conn) == schema.LATEST >= 9
    pad, station = store.get("sites", "s1"), store.get("sites", "s2")
    assert pad["segment"] is None and station["segment"] is None  # nothing rewritten outside the journal
    from fieldapp.store.estimates import site_segment

    segment, note = site_segment(pad)
    assert segment == "onshore_production" and "defaulted from the site kind well_site" in note
    # a compressor station may be gathering and boosting or transmission: no default
    segment, note = site_segment(station)
    assert segment is None and "ambiguous" in note and "plumebook segment" in note


def test_version_7_file_upgrades_to_keep_survey_conditions_as_typed(tmp_path):
    path = tmp_path / "v7.db"
    conn = sqlite3.connect(path, isolation_level=None)
    schema.migrate(conn, target=7)
    conn.execute("INSERT INTO sites (id, name, kind, program_id, timezone, methane_mole_fraction) "
                 "VALUES ('s1', 'Old pad', 'well_site', 'us-nsps-oooo-a', 'America/Denver', 0.8)")
    conn.execute("INSERT INTO surveys (id, site_id, method, started_at, operator, ambient_temp_c, wind_max_m_s) "
                 "VALUES ('v1', 's1', 'ogi', '2026-11-30T08:00:00-07:00', 'T', 4.5, 3.0)")
    conn.close()
    store = Store(path)
    row = store.get("surveys", "v1")
    # no backfill (no row changes outside the journal): the canonical values stand, nothing "typed" is invented
    assert (row["ambient_temp_c"], row["wind_max_m_s"]) == (4.5, 3.0)
    assert (row["ambient_temp_entered"], row["temp_unit"], row["wind_max_entered"], row["wind_unit"]) == (
        None, "", None, "")


def test_version_7_file_upgrades_to_8_and_old_leaks_read_with_their_survey_method(tmp_path):
    # Migration 8 keeps the detection method on the leak; a leak stored before it has NULL there and is read
    # with its survey's method (COALESCE). Under OOOOb an AVO-found leak gets its first attempt within 15
    # calendar days of detection: 40 CFR 60.5397b(h)(1)(i) [text, eCFR 9/10/2026]. Detected 2026-11-20 -> 12-05.
    from fieldapp.store import due, reads

    path = tmp_path / "v7.db"
    conn = sqlite3.connect(path, isolation_level=None)
    assert schema.migrate(conn, target=7)[-1] == 7
    conn.execute("INSERT INTO meta VALUES ('device_id', 'old-device')")
    conn.execute("INSERT INTO sites (id, name, kind, program_id, timezone, methane_mole_fraction) "
                 "VALUES ('s1', 'Old station', 'compressor_station', 'us-nsps-oooo-b', 'America/Denver', 0.8)")
    conn.execute("INSERT INTO components (id, site_id, tag, type, service) VALUES ('c1', 's1', 'V-1', 'valve', 'gas')")
    conn.execute("INSERT INTO surveys (id, site_id, method, started_at, operator) "
                 "VALUES ('v1', 's1', 'avo', '2026-11-20T08:00:00-07:00', 'Old hand')")
    conn.execute("INSERT INTO leaks (id, survey_id, component_id, detected_at) "
                 "VALUES ('l1', 'v1', 'c1', '2026-11-20T09:00:00-07:00')")
    conn.close()
    store = Store(path)
    assert schema.current_version(store.conn) == schema.LATEST >= 8
    cols = {t: {r[1] for r in store.conn.execute(f"PRAGMA table_info({t})")} for t in ("leaks", "actions")}
    assert {"detection_method", "tag_attached"} <= cols["leaks"]
    assert {"method", "delay_kind", "parts_ordered_on", "parts_received_on"} <= cols["actions"]
    leak = store.get("leaks", "l1")
    assert leak["detection_method"] is None and leak["tag_attached"] == 0
    items = {i.kind: i.due.isoformat() for i in due.leak_items(store)}
    # (h)(2): repair within 15 days after the first attempt; none yet, so from its due date: 12-20.
    assert items == {"first_attempt": "2026-12-05", "final_repair": "2026-12-20"}
    listed = reads.list_leaks(store)
    assert [row["state"] for row in listed] == ["open"]


ADD_T1 = "INSERT INTO components (id, site_id, tag, type, service) VALUES ('{}', 's1', 'T-1', 'valve', 'gas')"


def test_version_7_file_upgrades_to_non_unique_tags_and_a_devices_table(tmp_path):
    """Migration 10: the (site, tag) index stops being unique (the merge keeps both records of a tag two
    devices created) and the devices table for enrolled keys appears; rows are kept."""
    path = tmp_path / "v7.db"
    conn = sqlite3.connect(path, isolation_level=None)
    schema.migrate(conn, target=7)
    conn.execute("INSERT INTO sites (id, name, kind, program_id, timezone, methane_mole_fraction) "
                 "VALUES ('s1', 'Old pad', 'well_site', 'us-nsps-oooo-a', 'America/Denver', 0.8)")
    conn.execute(ADD_T1.format("c1"))
    with pytest.raises(sqlite3.IntegrityError):
        conn.execute(ADD_T1.format("c2"))
    conn.close()
    store = Store(path)
    assert schema.current_version(store.conn) >= 10
    store.conn.execute(ADD_T1.format("c2"))
    assert store.conn.execute("SELECT COUNT(*) FROM components WHERE tag = 'T-1'").fetchone()[0] == 2
    assert store.rows("SELECT * FROM devices") == []


def test_version_11_file_upgrades_to_site_identifiers_left_unrecorded(tmp_path):
    """Migration 15: facility / permit id and coordinates; an older site reads as not recorded (no backfill)."""
    path = tmp_path / "old.db"
    conn = sqlite3.connect(path, isolation_level=None)
    schema.migrate(conn, target=11)
    conn.execute("INSERT INTO sites (id, name, kind, program_id, timezone, methane_mole_fraction) "
                 "VALUES ('s1', 'Old pad', 'well_site', 'us-nsps-oooo-a', 'America/Denver', 0.8)")
    conn.close()
    store = Store(path)
    assert schema.current_version(store.conn) == schema.LATEST >= 15
    site = store.get("sites", "s1")
    assert site["facility_id"] == "" and site["latitude"] is None and site["longitude"] is None
    from sync.report_model import site_identifiers

    assert dict(site_identifiers(site))["Latitude, longitude (decimal degrees)"] == "not recorded"


def test_version_15_file_upgrades_to_16_with_empty_compressor_modes(tmp_path):
    """Migration 16: surveys gain compressor_modes (40 CFR 60.5420a(c)(15)(vii)(F) [text]); old rows read ''."""
    path = tmp_path / "v15.db"
    conn = sqlite3.connect(path, isolation_level=None)
    assert schema.migrate(conn, target=15)[-1] == 15
    conn.execute("INSERT INTO sites (id, name, kind, program_id, timezone, methane_mole_fraction) "
                 "VALUES ('s1', 'Old station', 'compressor_station', 'us-nsps-oooo-a', 'America/Denver', 0.8)")
    conn.execute("INSERT INTO surveys (id, site_id, method, started_at, operator) "
                 "VALUES ('v1', 's1', 'ogi', '2026-11-30T08:00:00-07:00', 'T')")
    conn.close()
    store = Store(path)
    assert schema.current_version(store.conn) == schema.LATEST >= 16
    assert store.get("surveys", "v1")["compressor_modes"] == ""
