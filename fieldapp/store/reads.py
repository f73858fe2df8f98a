"""Read queries shared by the CLI, the screens and the reports."""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable
from datetime import date, datetime
from typing import Any
from zoneinfo import ZoneInfo

from fieldapp.core.enums import ActionKind
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.core.lifecycle import LeakFacts, summarize
from fieldapp.core.records import Action
from fieldapp.store.base import Store

REPEAT_SURVEYS = 4
REPEAT_MIN = 2


def resolve_site(store: Store, key: str) -> dict[str, Any]:
    """A live site by id or by name (case ignored); ValidationError listing the sites otherwise."""
    rows = store.rows("SELECT * FROM sites WHERE deleted = 0 AND (id = ? OR lower(name) = lower(?))", (key, key))
    if len(rows) == 1:
        return rows[0]
    names = [r["name"] for r in store.rows("SELECT name FROM sites WHERE deleted = 0 ORDER BY name")]
    what = "matches several sites" if rows else "is not a site id or name"
    raise ValidationError([FieldProblem("site", f"{key!r} {what}; sites: {', '.join(names) or 'none'}")])


def list_sites(store: Store) -> list[dict[str, Any]]:
    """Live sites ordered by name."""
    return store.rows("SELECT * FROM sites WHERE deleted = 0 ORDER BY name")


def list_surveys(store: Store, site_id: str | None = None) -> list[dict[str, Any]]:
    """Live surveys, newest first, with their site name and leak count."""
    where = "AND v.site_id = ?" if site_id else ""
    return store.rows(
        "SELECT v.*, s.name AS site_name, (SELECT COUNT(*) FROM leaks l WHERE l.survey_id = v.id "
        "AND l.deleted = 0) AS leak_count FROM surveys v JOIN sites s ON s.id = v.site_id "
        f"WHERE v.deleted = 0 {where} ORDER BY v.started_at DESC", (site_id,) if site_id else ()
    )


def action_from_row(row: dict[str, Any]) -> Action:
    """An action record from a trusted store row (no re-validation)."""
    return Action(
        id=row["id"], leak_id=row["leak_id"], kind=ActionKind(row["kind"]),
        done_on=date.fromisoformat(row["done_on"]), actor=row.get("actor", ""), reason=row.get("reason") or "",
        planned_on=date.fromisoformat(row["planned_on"]) if row.get("planned_on") else None,
        shutdown_on=date.fromisoformat(row["shutdown_on"]) if row.get("shutdown_on") else None,
        seq=row.get("seq") or 0,
    )


def local_day(detected_at: str, tz_name: str, zones: dict[str, ZoneInfo] | None = None) -> date:
    """The local calendar date of a stored moment on a site's clock."""
    zone = zones.setdefault(tz_name, ZoneInfo(tz_name)) if zones is not None else ZoneInfo(tz_name)
    return datetime.fromisoformat(detected_at).astimezone(zone).date()


def facts_for(leaks: Iterable[dict[str, Any]], actions: Iterable[dict[str, Any]]) -> dict[str, LeakFacts]:
    """Summarised facts of each leak row (needs keys id, detected_at, timezone, screening_ppm)."""
    by_leak: dict[str, list[Action]] = defaultdict(list)
    for row in actions:
        by_leak[row["leak_id"]].append(action_from_row(row))
    zones: dict[str, ZoneInfo] = {}
    out = {}
    for leak in leaks:
        detected = local_day(leak["detected_at"], leak["timezone"], zones)
        out[leak["id"]] = summarize(detected, by_leak.get(leak["id"], []), leak["screening_ppm"])[0]
    return out


LEAK_SELECT = (
    "SELECT l.*, c.tag, c.type AS component_type, c.service, s.id AS site_id, s.name AS site_name, "
    "s.timezone, s.program_id, s.kind AS site_kind, v.method AS survey_method FROM leaks l "
    "JOIN components c ON c.id = l.component_id JOIN surveys v ON v.id = l.survey_id "
    "JOIN sites s ON s.id = v.site_id WHERE l.deleted = 0"
)


def repeat_leakers(store: Store, site_id: str | None = None) -> set[str]:
    """Component ids found leaking in at least 2 of their site's last 4 surveys."""
    where = "AND site_id = ?" if site_id else ""
    rows = store.rows(
        "WITH ranked AS (SELECT id, ROW_NUMBER() OVER (PARTITION BY site_id ORDER BY started_at DESC) AS rn "
        f"FROM surveys WHERE deleted = 0 {where}) "
        "SELECT l.component_id FROM leaks l JOIN ranked r ON r.id = l.survey_id "
        f"WHERE r.rn <= {REPEAT_SURVEYS} AND l.deleted = 0 GROUP BY l.component_id "
        f"HAVING COUNT(DISTINCT l.survey_id) >= {REPEAT_MIN}", (site_id,) if site_id else ()
    )
    return {r["component_id"] for r in rows}


def list_leaks(store: Store, site_id: str | None = None, open_only: bool = False) -> list[dict[str, Any]]:
    """Live leaks with tag, site, derived state and repeat-leaker flag, newest first."""
    where = " AND s.id = ?" if site_id else ""
    params = (site_id,) if site_id else ()
    leaks = store.rows(LEAK_SELECT + where + " ORDER BY l.detected_at DESC", params)
    actions = store.rows(
        "SELECT a.* FROM actions a JOIN leaks l ON l.id = a.leak_id JOIN surveys v ON v.id = l.survey_id "
        "JOIN sites s ON s.id = v.site_id WHERE l.deleted = 0" + where, params)
    facts = facts_for(leaks, actions)
    repeats = repeat_leakers(store, site_id)
    out = []
    for leak in leaks:
        f = facts[leak["id"]]
        leak["state"] = f.state.value
        leak["detected_on"] = f.detected_on.isoformat()
        leak["repeat_leaker"] = leak["component_id"] in repeats
        if not open_only or f.state.value not in ("closed", "void"):
            out.append(leak)
    return out
