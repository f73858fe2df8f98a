"""Reading the journal: the entries of records, a record's history, and a record at a past moment."""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from fieldapp.store.base import JOURNAL_COLUMNS as COLUMNS
from fieldapp.store.base import NotFoundError, Store, dumps, from_sql, loads
from fieldapp.store.batches import BATCH_OP, PREFIX, find_row, row_count


def entries_for(store: Store, row_ids: Iterable[str]) -> list[dict[str, Any]]:
    """Every journal entry of these records, values decoded, in no particular order.

    A bulk import's batch entry appears as each record's own ``insert`` (its values alone) with
    ``batch_size`` = how many records that one entry inserted; each batch is decoded once. Join
    order and indexes are fixed (CROSS JOIN, INDEXED BY): left to itself, the planner of a store
    without statistics scans the whole journal.
    """
    conn = store.conn
    keys = (dumps(sorted(set(row_ids))),)
    cols = ", ".join(f"j.{c}" for c in COLUMNS)
    found = []
    for values in conn.execute(f"SELECT {cols} FROM json_each(?) t CROSS JOIN journal j INDEXED BY journal_row "
                               f"WHERE j.row_id = t.value AND j.op != '{BATCH_OP}'", keys):
        entry = dict(zip(COLUMNS, values, strict=True))
        entry["old"] = loads(entry["old"]) if entry["old"] else None
        entry["new"] = loads(entry["new"]) if entry["new"] else None
        found.append(entry)
    pairs = conn.execute(
        "SELECT t.value, j.device_id, j.seq FROM json_each(?) t CROSS JOIN journal j INDEXED BY journal_batch "
        f"WHERE j.op = '{BATCH_OP}' AND j.row_id BETWEEN substr(t.value, 1, {PREFIX}) AND t.value", keys
    ).fetchall()
    batches: dict[tuple[str, int], dict[str, Any]] = {}
    for device, seq in sorted({(device, seq) for _member, device, seq in pairs}):
        values = conn.execute(f"SELECT {', '.join(COLUMNS)} FROM journal WHERE device_id = ? AND seq = ?",
                              (device, seq)).fetchone()
        batch = dict(zip(COLUMNS, values, strict=True))
        batch["new"] = loads(batch["new"])
        batches[(device, seq)] = batch
    for member, device, seq in pairs:
        batch = batches[(device, seq)]
        values = find_row(batch["new"], member)
        if values is not None:
            found.append({**batch, "row_id": member, "op": "insert", "new": values,
                          "batch_size": row_count(batch["new"])})
    return found


def history(store: Store, row_id: str) -> list[dict[str, Any]]:
    """Every journal entry of one record, oldest first, with old and new values decoded.

    A bulk import's batch entry appears as this record's ``insert`` (see ``entries_for``).
    """
    entries = entries_for(store, [row_id])
    if not entries:
        raise NotFoundError(f"no journal entries for record {row_id}")
    return sorted(entries, key=lambda e: e["hlc"])


def state_at(store: Store, row_id: str, moment: str | None = None) -> dict[str, Any] | None:
    """The record's values as of ``moment`` (ISO 8601 UTC; None = now), rebuilt from the journal alone.

    Returns None when the record did not exist yet at that moment. A deleted record comes back
    with ``deleted = 1``.
    """
    state: dict[str, Any] | None = None
    for entry in history(store, row_id):
        if moment is not None and entry["at"] > moment:
            break
        state = entry["new"]
    return state


# Order of events on one local day: the component, the leak, its photos and clips, its actions, then edits.
ACTION_DETAILS = ("actor", "method", "instrument", "reason", "planned_on", "shutdown_on", "delay_kind",
                  "parts_ordered_on", "parts_received_on", "note")
PHASES = {"component": 0, "leak": 1, "media": 2, "action": 3, "edit": 4}


def _local(moment: str | None, tz: str) -> tuple[str, str]:
    """(local date, local time) of a stored moment; naive moments (camera clocks) are taken as local."""
    if not moment:
        return "", ""
    from datetime import datetime
    from zoneinfo import ZoneInfo

    value = datetime.fromisoformat(moment)
    if value.tzinfo is not None:
        value = value.astimezone(ZoneInfo(tz))
    return value.date().isoformat(), value.time().isoformat(timespec="minutes")


def leak_timeline(store: Store, leak_id: str, as_of: str | None = None) -> dict[str, Any]:
    """One leak's whole story: the leak, its component, every action, photo and clip, and every edit.

    Returns ``{"leak": values, "component": values, "site": name, "events": [...]}``. Each event has
    ``on`` (local date the thing happened on the site's clock), ``at`` (local time when known),
    ``what`` (component, leak, media, action or edit), ``table``, ``row_id``, ``summary``, the
    record's values (``new``; ``old`` too for an edit), and the journal entry that recorded it:
    ``recorded_at`` (UTC), ``recorded_local`` (the same moment on the site's clock, 'YYYY-MM-DD HH:MM'),
    ``actor``, ``device_id``, ``seq`` and ``backdated`` (recorded on a later day than it happened).
    Photos and clips carry their ``sha256``. Events are ordered by the day they happened (the
    component's inventory entry first), then leak, media, action (by sequence), edit, then recording order.

    ``as_of`` (ISO date, UTC) keeps only what had been recorded by the end of that day, and the
    leak and component values are as they stood then (None when not recorded yet). Used by
    ``plumebook history``, the survey report's timelines and ``plumebook report leak``.
    """
    return leak_timelines(store, [leak_id], as_of)[leak_id]


def leak_timelines(store: Store, leak_ids: Iterable[str], as_of: str | None = None) -> dict[str, dict[str, Any]]:
    """``leak_timeline`` of several leaks, read in one pass: one query per table and one journal read for all."""
    ids = list(dict.fromkeys(leak_ids))
    if not ids:
        return {}
    cutoff = f"{as_of}T99" if as_of else None
    keys = (dumps(ids),)
    leaks = {r["id"]: r for r in store.rows("SELECT l.*, s.name AS site_name, s.timezone AS site_zone FROM "
                                             "json_each(?) t JOIN leaks l ON l.id = t.value JOIN surveys v ON "
                                             "v.id = l.survey_id JOIN sites s ON s.id = v.site_id", keys)}
    for leak_id in ids:
        if leak_id not in leaks:
            raise NotFoundError(f"no leak with id {leak_id}")
    owners: dict[str, list[tuple[str, str]]] = {}  # row id -> (leak id, what) of every leak it belongs to
    for leak_id, leak in leaks.items():
        owners.setdefault(leak_id, []).append((leak_id, "leak"))
        owners.setdefault(leak["component_id"], []).append((leak_id, "component"))
    for table, what in (("actions", "action"), ("media", "media")):
        for r in store.rows(f"SELECT x.id, x.leak_id FROM json_each(?) t JOIN {table} x ON x.leak_id = t.value", keys):
            owners.setdefault(r["id"], []).append((r["leak_id"], what))
    journal: dict[str, list[dict[str, Any]]] = {}
    for entry in entries_for(store, owners):
        journal.setdefault(entry["row_id"], []).append(entry)
    events: dict[str, list[dict[str, Any]]] = {leak_id: [] for leak_id in ids}
    for row_id, entries in journal.items():
        for leak_id, what in owners[row_id]:
            tz = leaks[leak_id]["site_zone"]
            events[leak_id] += [_event(entry, what if entry["op"] == "insert" else "edit", tz)
                                for entry in entries if not (cutoff and entry["at"] > cutoff)]
    out = {}
    for leak_id in ids:
        story = sorted(events[leak_id], key=lambda e: e["_key"])
        for e in story:
            del e["_key"]
        leak = leaks[leak_id]
        comp_id = leak["component_id"]
        out[leak_id] = {"leak": _as_of(journal.get(leak_id, []), cutoff) if cutoff else _plain(leak),
                        "component": _as_of(journal.get(comp_id, []), cutoff) if cutoff
                        else store.get("components", comp_id, include_deleted=True),
                        "site": leak["site_name"], "as_of": as_of, "events": story}
    return out


def _plain(leak: dict[str, Any]) -> dict[str, Any]:
    return from_sql({k: v for k, v in leak.items() if k not in ("site_name", "site_zone")})


def _as_of(entries: list[dict[str, Any]], cutoff: str) -> dict[str, Any] | None:
    """A record's values after its last entry recorded by ``cutoff`` (what ``state_at`` gives)."""
    state = None
    for entry in sorted(entries, key=lambda e: e["hlc"]):
        if entry["at"] > cutoff:
            break
        state = entry["new"]
    return state


def _event(entry: dict[str, Any], what: str, tz: str) -> dict[str, Any]:
    """One journal entry of a leak's record as a timeline event (see ``leak_timeline``)."""
    values = entry["new"] or {}
    if what == "action":
        on, at = values.get("done_on", ""), ""
        summary = values["kind"].replace("_", " ") + "".join(
            f"; {k.replace('_', ' ')} {values[k]}" for k in ACTION_DETAILS if values.get(k))
    elif what == "media":
        on, at = _local(values.get("captured_at") or entry["at"], tz)
        kind = "clip" if values.get("media_kind") == "video" else values.get("media_kind", "media")
        summary = f"{kind} {values.get('original_name', '')} sha256 {values['sha256']}"
    elif what == "leak":
        on, at = _local(values["detected_at"], tz)
        summary = "leak found" + "".join(f"; {k.replace('_', ' ')} {values[k]}" for k in (
            "detection_method", "screening_ppm", "measured_rate", "measured_unit", "location_note")
            if values.get(k) not in (None, "")) + ("; HAZARD " + (values.get("hazard_note") or "")
                                                   if values.get("hazard") else "")
    elif what == "component":
        on, at = _local(entry["at"], tz)
        summary = (f"component {values.get('tag')} ({str(values.get('type')).replace('_', ' ')}, "
                   f"{str(values.get('service')).replace('_', ' ')}) added")
    else:
        on, at = _local(entry["at"], tz)
        old = entry["old"] or {}
        changed = {k: (old.get(k), v) for k, v in values.items() if old.get(k) != v}
        summary = f"{entry['op']} {entry['tbl'][:-1]}: " + ", ".join(
            f"{k.replace('_', ' ')} {a!r} -> {b!r}" for k, (a, b) in changed.items())
    recorded_on, recorded_time = _local(entry["at"], tz)
    return {
        "on": on, "at": at, "what": what, "table": entry["tbl"], "row_id": entry["row_id"], "op": entry["op"],
        "summary": summary, "new": values, "old": entry["old"], "recorded_at": entry["at"],
        "recorded_local": f"{recorded_on} {recorded_time}",
        "actor": entry["actor"], "device_id": entry["device_id"], "seq": entry["seq"],
        "backdated": bool(on) and recorded_on > on, "sha256": values.get("sha256") if what == "media" else None,
        "_key": ("" if what == "component" else on, PHASES[what],
                 values.get("seq", 0) if what == "action" else 0, at, entry["hlc"]),
    }
