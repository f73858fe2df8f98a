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
