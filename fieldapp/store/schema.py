"""Schema of the store as registered, transactional migrations.

Each migration runs inside one transaction together with the update of ``schema_version``, so a
file is always at exactly one version. New migrations are appended; old ones are never edited.
"""

from __future__ import annotations

import sqlite3
from collections.abc import Callable

Migration = Callable[[sqlite3.Connection], None]
MIGRATIONS: list[tuple[int, str, Migration]] = []


def migration(version: int, name: str) -> Callable[[Migration], Migration]:
    """Register a migration under a version number (strictly increasing)."""

    def register(fn: Migration) -> Migration:
        if MIGRATIONS and MIGRATIONS[-1][0] >= version:
            raise RuntimeError(f"migration {version} registered out of order")
        MIGRATIONS.append((version, name, fn))
        return fn

    return register


def run_script(conn: sqlite3.Connection, script: str) -> None:
    """Run statements one by one inside the caller's transaction.

    ``executescript`` would commit the open transaction first, so it cannot be used in a migration.
    """
    pending = ""
    for line in script.splitlines(keepends=True):
        pending += line
        if sqlite3.complete_statement(pending):
            conn.execute(pending)
            pending = ""
    if pending.strip():
        raise ValueError(f"incomplete SQL statement: {pending.strip()[:60]}")


APPEND_ONLY = """
CREATE TRIGGER {table}_no_update BEFORE UPDATE ON {table}
BEGIN SELECT RAISE(ABORT, '{table} is append-only'); END;
CREATE TRIGGER {table}_no_delete BEFORE DELETE ON {table}
BEGIN SELECT RAISE(ABORT, '{table} is append-only'); END;
"""


@migration(1, "records and journal")
def _v1(conn: sqlite3.Connection) -> None:
    run_script(
        conn,
        """
        CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
        CREATE TABLE sites (
            id TEXT PRIMARY KEY, name TEXT NOT NULL, kind TEXT NOT NULL, program_id TEXT NOT NULL,
            timezone TEXT NOT NULL, operator TEXT NOT NULL DEFAULT '', startup_date TEXT,
            methane_mole_fraction REAL NOT NULL, methane_weight_fraction REAL,
            location TEXT NOT NULL DEFAULT '', emergency_note TEXT NOT NULL DEFAULT '',
            deleted INTEGER NOT NULL DEFAULT 0);
        CREATE TABLE components (
            id TEXT PRIMARY KEY, site_id TEXT NOT NULL REFERENCES sites(id), tag TEXT NOT NULL,
            type TEXT NOT NULL, service TEXT NOT NULL, area TEXT NOT NULL DEFAULT '',
            equipment TEXT NOT NULL DEFAULT '', difficult_to_monitor INTEGER NOT NULL DEFAULT 0,
            unsafe_to_monitor INTEGER NOT NULL DEFAULT 0, deleted INTEGER NOT NULL DEFAULT 0);
        CREATE UNIQUE INDEX components_site_tag ON components(site_id, tag) WHERE deleted = 0;
        CREATE TABLE surveys (
            id TEXT PRIMARY KEY, site_id TEXT NOT NULL REFERENCES sites(id), method TEXT NOT NULL,
            started_at TEXT NOT NULL, ended_at TEXT, operator TEXT NOT NULL,
            qualification TEXT NOT NULL DEFAULT '', camera_make TEXT NOT NULL DEFAULT '',
            camera_model TEXT NOT NULL DEFAULT '', camera_serial TEXT NOT NULL DEFAULT '',
            camera_check TEXT NOT NULL DEFAULT 'not_done', camera_check_note TEXT NOT NULL DEFAULT '',
            ambient_temp_c REAL, wind_speed_m_s REAL, wind_max_m_s REAL, sky TEXT NOT NULL DEFAULT '',
            areas TEXT NOT NULL DEFAULT '[]', areas_done TEXT NOT NULL DEFAULT '[]',
            deviations TEXT NOT NULL DEFAULT '', no_deviations INTEGER NOT NULL DEFAULT 0,
            deleted INTEGER NOT NULL DEFAULT 0);
        CREATE TABLE leaks (
            id TEXT PRIMARY KEY, survey_id TEXT NOT NULL REFERENCES surveys(id),
            component_id TEXT NOT NULL REFERENCES components(id), detected_at TEXT NOT NULL,
            location_note TEXT NOT NULL DEFAULT '', screening_ppm REAL, measured_rate REAL,
            measured_unit TEXT NOT NULL DEFAULT '', measured_instrument TEXT NOT NULL DEFAULT '',
            hazard INTEGER NOT NULL DEFAULT 0, hazard_note TEXT NOT NULL DEFAULT '',
            deleted INTEGER NOT NULL DEFAULT 0);
        CREATE TABLE actions (
            id TEXT PRIMARY KEY, leak_id TEXT NOT NULL REFERENCES leaks(id), kind TEXT NOT NULL,
            done_on TEXT NOT NULL, actor TEXT NOT NULL, note TEXT NOT NULL DEFAULT '',
            reason TEXT NOT NULL DEFAULT '', planned_on TEXT, shutdown_on TEXT,
            instrument TEXT NOT NULL DEFAULT '', seq INTEGER NOT NULL DEFAULT 0,
            recorded_at TEXT NOT NULL);
        CREATE TABLE journal (
            device_id TEXT NOT NULL, seq INTEGER NOT NULL, hlc TEXT NOT NULL, at TEXT NOT NULL,
            actor TEXT NOT NULL, tbl TEXT NOT NULL, row_id TEXT NOT NULL, op TEXT NOT NULL,
            old TEXT, new TEXT, PRIMARY KEY (device_id, seq));
        CREATE INDEX journal_row ON journal(row_id, hlc);
        """
    )
    run_script(conn, APPEND_ONLY.format(table="actions") + APPEND_ONLY.format(table="journal"))


@migration(2, "media and form drafts")
def _v2(conn: sqlite3.Connection) -> None:
    run_script(
        conn,
        """
        CREATE TABLE media (
            id TEXT PRIMARY KEY, leak_id TEXT NOT NULL REFERENCES leaks(id), sha256 TEXT NOT NULL,
            media_kind TEXT NOT NULL, original_name TEXT NOT NULL DEFAULT '', byte_size INTEGER NOT NULL,
            deleted INTEGER NOT NULL DEFAULT 0);
        CREATE INDEX media_leak ON media(leak_id);
        CREATE TABLE drafts (form TEXT PRIMARY KEY, payload TEXT NOT NULL, saved_at TEXT NOT NULL);
        """
    )


@migration(3, "indexes for the due list")
def _v3(conn: sqlite3.Connection) -> None:
    run_script(
        conn,
        """
        CREATE INDEX actions_leak ON actions(leak_id, kind, done_on);
        CREATE INDEX actions_terminal ON actions(leak_id) WHERE kind IN ('resurvey_passed', 'voided');
        CREATE INDEX leaks_survey ON leaks(survey_id);
        CREATE INDEX leaks_component ON leaks(component_id);
        CREATE INDEX surveys_site ON surveys(site_id, method, started_at);
        """
    )


@migration(4, "survey order per site for repeat leakers")
def _v4(conn: sqlite3.Connection) -> None:
    run_script(conn, "CREATE INDEX surveys_site_time ON surveys(site_id, started_at) WHERE deleted = 0;")


@migration(5, "media metadata and markers")
def _v5(conn: sqlite3.Connection) -> None:
    run_script(
        conn,
        """
        ALTER TABLE media ADD COLUMN captured_at TEXT;
        ALTER TABLE media ADD COLUMN gps_lat REAL;
        ALTER TABLE media ADD COLUMN gps_lon REAL;
        ALTER TABLE media ADD COLUMN width INTEGER;
        ALTER TABLE media ADD COLUMN height INTEGER;
        ALTER TABLE media ADD COLUMN duration_s REAL;
        ALTER TABLE media ADD COLUMN content_type TEXT NOT NULL DEFAULT '';
        ALTER TABLE media ADD COLUMN added_by TEXT NOT NULL DEFAULT '';
        ALTER TABLE media ADD COLUMN added_on_device TEXT NOT NULL DEFAULT '';
        ALTER TABLE media ADD COLUMN added_at TEXT NOT NULL DEFAULT '';
        CREATE INDEX media_sha ON media(sha256);
        CREATE TABLE markers (
            id TEXT PRIMARY KEY, media_id TEXT NOT NULL REFERENCES media(id), x REAL NOT NULL, y REAL NOT NULL,
            label TEXT NOT NULL DEFAULT '', deleted INTEGER NOT NULL DEFAULT 0);
        CREATE INDEX markers_media ON markers(media_id);
        """,
    )


@migration(6, "merge conflicts")
def _v6(conn: sqlite3.Connection) -> None:
    run_script(
        conn,
        """
        CREATE TABLE conflicts (
            tbl TEXT NOT NULL, row_id TEXT NOT NULL, field TEXT NOT NULL,
            winner_device TEXT NOT NULL, winner_seq INTEGER NOT NULL, winner_value TEXT,
            loser_device TEXT NOT NULL, loser_seq INTEGER NOT NULL, loser_value TEXT,
            PRIMARY KEY (row_id, field, loser_device, loser_seq));
        """,
    )


@migration(7, "batch journal entries of bulk imports")
def _v7(conn: sqlite3.Connection) -> None:
    run_script(conn, "CREATE INDEX journal_batch ON journal(row_id) WHERE op = 'insert_batch';")


@migration(8, "leak detection method, resurvey method and the parts route of delay of repair")
def _v8(conn: sqlite3.Connection) -> None:
    # No backfill: a leak without a detection method was found by its survey's method (reads use
    # COALESCE), so no row changes outside the journal.
    run_script(
        conn,
        """
        ALTER TABLE leaks ADD COLUMN detection_method TEXT;
        ALTER TABLE leaks ADD COLUMN tag_attached INTEGER NOT NULL DEFAULT 0;
        ALTER TABLE actions ADD COLUMN method TEXT;
        ALTER TABLE actions ADD COLUMN delay_kind TEXT;
        ALTER TABLE actions ADD COLUMN parts_ordered_on TEXT;
        ALTER TABLE actions ADD COLUMN parts_received_on TEXT;
        """,
    )


@migration(9, "industry segment of a site")
def _v9(conn: sqlite3.Connection) -> None:
    # NULL = not set; estimates then default it from the site kind where that is unambiguous
    # (fieldapp.store.estimates.site_segment), so no row is rewritten outside the journal.
    run_script(conn, "ALTER TABLE sites ADD COLUMN segment TEXT;")


@migration(10, "tag collisions from merges, enrolled devices")
def _v10(conn: sqlite3.Connection) -> None:
    """Two devices may create the same tag at a site; the merge keeps both (listed as a collision
    until joined or re-tagged), so the (site, tag) index is no longer unique. Local writes still
    refuse a tag in use (fieldapp.store.ops). ``devices`` holds the public keys of enrolled tablets
    (at the office) and of the office (on a tablet)."""
    run_script(
        conn,
        """
        DROP INDEX components_site_tag;
        CREATE INDEX components_site_tag_live ON components(site_id, tag) WHERE deleted = 0;
        CREATE TABLE devices (
            device_id TEXT PRIMARY KEY, name TEXT NOT NULL, role TEXT NOT NULL CHECK (role IN ('tablet', 'office')),
            public_key TEXT NOT NULL, enrolled_at TEXT NOT NULL, revoked_at TEXT);
        """,
    )


@migration(11, "survey conditions as entered, with their units")
def _v11(conn: sqlite3.Connection) -> None:
    # the canonical columns (ambient_temp_c, wind_*_m_s) stay what every rule and report reads; these
    # keep what the crew typed and in which unit (fieldapp/core/weather_units.py). No backfill: an older
    # survey's values were typed in the canonical units, and no row changes outside the journal.
    run_script(conn, """
        ALTER TABLE surveys ADD COLUMN ambient_temp_entered REAL;
        ALTER TABLE surveys ADD COLUMN temp_unit TEXT NOT NULL DEFAULT '';
        ALTER TABLE surveys ADD COLUMN wind_speed_entered REAL;
        ALTER TABLE surveys ADD COLUMN wind_max_entered REAL;
        ALTER TABLE surveys ADD COLUMN wind_unit TEXT NOT NULL DEFAULT '';
    """)


@migration(15, "site identifiers for filings")
def _v15(conn: sqlite3.Connection) -> None:
    # facility or permit id and the site's coordinates (decimal degrees) for the survey report's site block
    # (OOOOb asks for latitude and longitude to four decimal places for sites in a monitoring plan).
    # No backfill: empty / NULL means not recorded, and the report says so.
    run_script(conn, """
        ALTER TABLE sites ADD COLUMN facility_id TEXT NOT NULL DEFAULT '';
        ALTER TABLE sites ADD COLUMN latitude REAL;
        ALTER TABLE sites ADD COLUMN longitude REAL;
        ALTER TABLE sites ADD COLUMN datum TEXT NOT NULL DEFAULT '';
    """)


@migration(16, "compressor operating modes of a survey")
def _v16(conn: sqlite3.Connection) -> None:
    # 40 CFR 60.5420a(c)(15)(vii)(F), 60.5420b(c)(14)(v)(F): at compressor stations, the mode of each compressor
    run_script(conn, "ALTER TABLE surveys ADD COLUMN compressor_modes TEXT NOT NULL DEFAULT '';")


LATEST = MIGRATIONS[-1][0]


def current_version(conn: sqlite3.Connection) -> int:
    """The schema version a file is at (0 for an empty file)."""
    has_meta = conn.execute("SELECT 1 FROM sqlite_master WHERE type='table' AND name='meta'").fetchone()
    if not has_meta:
        return 0
    row = conn.execute("SELECT value FROM meta WHERE key='schema_version'").fetchone()
    try:
        return int(row[0]) if row else 0
    except ValueError:
        raise sqlite3.DatabaseError(f"schema_version {row[0]!r} is not a number") from None


class SchemaTooNewError(RuntimeError):
    """The file was written by a newer plumebook: its schema version is above the newest known here."""

    def __init__(self, found: int, known: int):
        self.found, self.known = found, known
        super().__init__(f"the store is at schema version {found}, this plumebook knows versions up to {known}; "
                         "open it with a newer plumebook (nothing was changed)")


def refuse_newer(conn: sqlite3.Connection) -> None:
    """Raise ``SchemaTooNewError`` when the file is at a version above the newest known here."""
    found = current_version(conn)
    if found > LATEST:
        raise SchemaTooNewError(found, LATEST)


def migrate(conn: sqlite3.Connection, target: int = LATEST) -> list[int]:
    """Apply every registered migration above the file's version, each in its own transaction.

    Refuses (``SchemaTooNewError``) a file whose version is above ``LATEST`` before writing anything.
    """
    refuse_newer(conn)
    applied = []
    for version, _name, fn in MIGRATIONS:
        if version > target or version <= current_version(conn):
            continue
        conn.execute("BEGIN IMMEDIATE")
        try:
            fn(conn)
            conn.execute(
                "INSERT INTO meta(key, value) VALUES('schema_version', ?) "
                "ON CONFLICT(key) DO UPDATE SET value = excluded.value",
                (str(version),),
            )
            conn.execute("COMMIT")
        except BaseException:
            conn.execute("ROLLBACK")
            raise
        applied.append(version)
    return applied
