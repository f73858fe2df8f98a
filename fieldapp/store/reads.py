"""Read queries shared by the CLI, the screens and the reports."""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable
from datetime import date, datetime
from typing import Any
from zoneinfo import ZoneInfo

from fieldapp.core.enums import ActionKind, DelayKind, SurveyMethod
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


def _day(text: str | None) -> date | None:
    return date.fromisoformat(text) if text else None


def make_action(action_id: str, leak_id: str, kind: str, done_on: str, seq: int | None, reason: str | None,
                planned_on: str | None, shutdown_on: str | None, actor: str = "", note: str = "",
                instrument: str = "", method: str | None = None, delay_kind: str | None = None,
                parts_ordered_on: str | None = None, parts_received_on: str | None = None) -> Action:
    """An action record from trusted stored values (no re-validation)."""
    return Action(
        id=action_id, leak_id=leak_id, kind=ActionKind(kind), done_on=date.fromisoformat(done_on), actor=actor or "",
        reason=reason or "", planned_on=_day(planned_on), shutdown_on=_day(shutdown_on), seq=seq or 0,
        note=note or "", instrument=instrument or "", method=SurveyMethod(method) if method else None,
        delay_kind=DelayKind(delay_kind) if delay_kind else None, parts_ordered_on=_day(parts_ordered_on),
        parts_received_on=_day(parts_received_on),
    )


# The action columns the state machine needs, in make_action's order after (id, leak_id).
ACTION_FACT_COLUMNS = ("kind", "done_on", "seq", "reason", "planned_on", "shutdown_on")
ACTION_ROUTE_COLUMNS = ("method", "delay_kind", "parts_ordered_on", "parts_received_on")


def action_from_row(row: dict[str, Any]) -> Action:
    """An action record from a stored row (a dict of actions columns)."""
    return make_action(row["id"], row["leak_id"], row["kind"], row["done_on"], row.get("seq"), row.get("reason"),
                       row.get("planned_on"), row.get("shutdown_on"), row.get("actor", ""), row.get("note", ""),
                       row.get("instrument", ""), row.get("method"), row.get("delay_kind"),
                       row.get("parts_ordered_on"), row.get("parts_received_on"))


def leak_method_of(row: dict[str, Any]) -> SurveyMethod | None:
    """How a leak row was found: its detection method, else its survey's method (``survey_method``)."""
    name = row.get("detection_method") or row.get("survey_method")
    return SurveyMethod(name) if name else None


def local_day(moment: str, tz_name: str, zones: dict[str, ZoneInfo] | None = None) -> date:
    """The local calendar date of a stored moment on a site's clock."""
    zone = zones.setdefault(tz_name, ZoneInfo(tz_name)) if zones is not None else ZoneInfo(tz_name)
    return datetime.fromisoformat(moment).astimezone(zone).date()


def facts_for(leaks: Iterable[dict[str, Any]], actions: Iterable[dict[str, Any]]) -> dict[str, LeakFacts]:
    """Summarised facts of each leak row (needs keys id, detected_at, timezone, screening_ppm)."""
    by_leak: dict[str, list[Action]] = defaultdict(list)
    for row in actions:
        by_leak[row["leak_id"]].append(action_from_row(row))
    zones: dict[str, ZoneInfo] = {}
    out = {}
    for leak in leaks:
        detected = local_day(leak["detected_at"], leak["timezone"], zones)
        out[leak["id"]] = summarize(detected, by_leak.get(leak["id"], []), leak["screening_ppm"],
                                    leak_method_of(leak))[0]
    return out


LEAK_SELECT = (
    "SELECT l.*, c.tag, c.type AS component_type, c.service, s.id AS site_id, s.name AS site_name, "
    "s.timezone, s.program_id, s.kind AS site_kind, v.method AS survey_method FROM leaks l "
    "JOIN components c ON c.id = l.component_id JOIN surveys v ON v.id = l.survey_id "
    "JOIN sites s ON s.id = v.site_id WHERE l.deleted = 0"
)


# A component is a repeat leaker when leaks on it were found in at least REPEAT_MIN of its site's last
# REPEAT_SURVEYS surveys. One SQL expression (per leak row ``l``) serves the leak list and the due list.
REPEAT_COUNT = (
    "(SELECT COUNT(DISTINCT l2.survey_id) FROM leaks l2 JOIN surveys v2 ON v2.id = l2.survey_id "
    "WHERE l2.component_id = l.component_id AND l2.deleted = 0 AND v2.deleted = 0 AND "
    "(SELECT COUNT(*) FROM surveys v3 WHERE v3.site_id = v2.site_id AND v3.deleted = 0 "
    f"AND v3.started_at > v2.started_at) < {REPEAT_SURVEYS})"
)


def list_leaks(store: Store, site_id: str | None = None, open_only: bool = False) -> list[dict[str, Any]]:
    """Live leaks with tag, site, derived state and repeat-leaker flag, newest first."""
    where = " AND s.id = ?" if site_id else ""
    params = (site_id,) if site_id else ()
    leaks = store.rows(LEAK_SELECT.replace("FROM leaks l", f", {REPEAT_COUNT} AS seen_in FROM leaks l")
                       + where + " ORDER BY l.detected_at DESC", params)
    actions = store.rows(
        "SELECT a.* FROM actions a JOIN leaks l ON l.id = a.leak_id JOIN surveys v ON v.id = l.survey_id "
        "JOIN sites s ON s.id = v.site_id WHERE l.deleted = 0" + where, params)
    facts = facts_for(leaks, actions)
    out = []
    for leak in leaks:
        f = facts[leak["id"]]
        leak["state"] = f.state.value
        leak["detected_on"] = f.detected_on.isoformat()
        leak["repeat_leaker"] = leak.pop("seen_in") >= REPEAT_MIN
        if not open_only or f.state.value not in ("closed", "void"):
            out.append(leak)
    return out
