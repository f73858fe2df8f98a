"""Reading the journal: the entries of records, a record's history, and a record at a past moment."""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from fieldapp.store.base import JOURNAL_COLUMNS as COLUMNS
from fieldapp.store.base import NotFoundError, Store, dumps, loads
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
    ``recorded_at`` (UTC), ``actor``, ``device_id``, ``seq`` and ``backdated`` (recorded on a later
    day than it happened). Photos and clips carry their ``sha256``. Events are ordered by the day
    they happened (the component's inventory entry first), then leak, media, action (by sequence),
    edit, then recording order.

    ``as_of`` (ISO date, UTC) keeps only what had been recorded by the end of that day, and the
    leak and component values are as they stood then. Used by ``plumebook history`` and meant for
    a per-leak page in reports.
    """
    cutoff = f"{as_of}T99" if as_of else None
    leak = store.get("leaks", leak_id, include_deleted=True)
    comp_id = leak["component_id"]
    site = store.rows("SELECT s.name, s.timezone FROM sites s JOIN surveys v ON v.site_id = s.id WHERE v.id = ?",
                      (leak["survey_id"],))[0]
    tz = site["timezone"]
    actions = {r["id"]: r for r in store.rows("SELECT * FROM actions WHERE leak_id = ?", (leak_id,))}
    media = {r["id"]: r for r in store.rows("SELECT * FROM media WHERE leak_id = ?", (leak_id,))}
    kinds = {leak_id: "leak", comp_id: "component", **dict.fromkeys(actions, "action"),
             **dict.fromkeys(media, "media")}
    events = []
    for entry in entries_for(store, kinds):
        if cutoff and entry["at"] > cutoff:
            continue
        what = kinds[entry["row_id"]] if entry["op"] == "insert" else "edit"
        values = entry["new"] or {}
        if what == "action":
            on, at = values.get("done_on", ""), ""
            summary = values["kind"].replace("_", " ") + "".join(
                f"; {k.replace('_', ' ')} {values[k]}" for k in ACTION_DETAILS if values.get(k))
        elif what == "media":
            on, at = _local(values.get("captured_at") or entry["at"], tz)
            summary = f"{values.get('media_kind', 'media')} {values.get('original_name', '')} sha256 {values['sha256']}"
        elif what == "leak":
            on, at = _local(values["detected_at"], tz)
            summary = "leak found" + "".join(f"; {k.replace('_', ' ')} {values[k]}" for k in (
                "detection_method", "screening_ppm", "measured_rate", "measured_unit", "location_note")
                if values.get(k) not in (None, "")) + ("; HAZARD " + (values.get("hazard_note") or "")
                                                       if values.get("hazard") else "")
        elif what == "component":
            on, at = _local(entry["at"], tz)
            summary = f"component {values.get('tag')} ({values.get('type')}, {values.get('service')}) added"
        else:
            on, at = _local(entry["at"], tz)
            old = entry["old"] or {}
            changed = {k: (old.get(k), v) for k, v in values.items() if old.get(k) != v}
            summary = f"{entry['op']} {entry['tbl'][:-1]}: " + ", ".join(
                f"{k} {a!r} -> {b!r}" for k, (a, b) in changed.items())
        recorded_on = _local(entry["at"], tz)[0]
        events.append({
            "on": on, "at": at, "what": what, "table": entry["tbl"], "row_id": entry["row_id"], "op": entry["op"],
            "summary": summary, "new": values, "old": entry["old"], "recorded_at": entry["at"],
            "actor": entry["actor"], "device_id": entry["device_id"], "seq": entry["seq"],
            "backdated": bool(on) and recorded_on > on, "sha256": values.get("sha256") if what == "media" else None,
            "_key": ("" if what == "component" else on, PHASES[what],
                     values.get("seq", 0) if what == "action" else 0, at, entry["hlc"]),
        })
    events.sort(key=lambda e: e["_key"])
    for e in events:
        del e["_key"]
    component = store.get("components", comp_id, include_deleted=True)
    return {"leak": state_at(store, leak_id, cutoff) if cutoff else leak,
            "component": state_at(store, comp_id, cutoff) if cutoff else component,
            "site": site["name"], "as_of": as_of, "events": events}
