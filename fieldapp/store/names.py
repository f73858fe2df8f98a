"""Finding records by the names people use: a site by name, a survey by site and date, a leak by tag.

Every resolver also takes the record's id. A name that matches nothing or several records is
refused with a ``ValidationError`` naming the field and listing the candidates, never guessed.

- survey: ``SITE@YYYY-MM-DD`` (the survey started that local day at the site) or an id;
- leak: ``TAG`` (the one open leak on that tag), ``TAG@YYYY-MM-DD`` (the leak found that local day),
  or an id; ``site`` narrows a tag to one site.
- component: ``TAG`` (the one live component with that tag) or an id; ``site`` narrows a tag to one site.
  Two devices that created the same tag leave two components on it: the refusal lists both with the
  device that created each, so the id to keep or retag can be chosen.
"""

from __future__ import annotations

from datetime import date
from typing import Any

from fieldapp.core.fields import FieldProblem, FieldValueError, ValidationError, iso_date
from fieldapp.store.base import Store
from fieldapp.store.reads import local_day, resolve_site

MAX_LISTED = 8

LEAK_ROWS = (
    "SELECT l.id, l.detected_at, c.tag, s.id AS site_id, s.name AS site_name, s.timezone, NOT EXISTS "
    "(SELECT 1 FROM actions a WHERE a.leak_id = l.id AND a.kind IN ('resurvey_passed', 'voided')) AS open "
    "FROM leaks l JOIN components c ON c.id = l.component_id JOIN surveys v ON v.id = l.survey_id "
    "JOIN sites s ON s.id = v.site_id WHERE l.deleted = 0 AND s.deleted = 0"
)


def _split(key: str, field: str) -> tuple[str, date | None]:
    name, at, day = key.rpartition("@")
    if not at:
        return key, None
    try:
        return name, iso_date(day)
    except FieldValueError as exc:
        raise ValidationError([FieldProblem(field, f"{key!r}: the part after @ {exc}")]) from None


def _listed(names: list[str]) -> str:
    shown = ", ".join(names[:MAX_LISTED])
    return shown + (f" and {len(names) - MAX_LISTED} more" if len(names) > MAX_LISTED else "")


def resolve_survey(store: Store, key: str, field: str = "survey") -> dict[str, Any]:
    """A live survey by id or ``SITE@DATE`` (started that local day); refused listing candidates."""
    rows = store.rows("SELECT * FROM surveys WHERE id = ? AND deleted = 0", (key,))
    if rows:
        return rows[0]
    site_key, day = _split(key, field)
    if day is None:
        raise ValidationError([FieldProblem(field, f"{key!r} is not a survey id; write SITE@YYYY-MM-DD, e.g. "
                                            "'North Pad@2026-11-30'")])
    site = resolve_site(store, site_key)
    surveys = store.rows("SELECT * FROM surveys WHERE site_id = ? AND deleted = 0 ORDER BY started_at", (site["id"],))
    found = [s for s in surveys if local_day(s["started_at"], site["timezone"]) == day]
    if len(found) == 1:
        return found[0]
    if found:
        listed = [f"{s['started_at']} ({s['method']}, {s['operator']}, id {s['id']})" for s in found]
        raise ValidationError([FieldProblem(field, f"{key!r} matches {len(found)} surveys; give the id of one: "
                                            f"{_listed(listed)}")])
    days = sorted({local_day(s["started_at"], site["timezone"]).isoformat() for s in surveys})
    raise ValidationError([FieldProblem(field, f"{key!r}: no survey at {site['name']} that day; its survey days: "
                                        f"{_listed(days[::-1]) or 'none'}")])


def _leak_label(row: dict[str, Any]) -> str:
    state = "open" if row["open"] else "closed or void"
    return f"{row['tag']}@{local_day(row['detected_at'], row['timezone'])} at {row['site_name']} ({state})"


def resolve_leak(store: Store, key: str, site_id: str | None = None, field: str = "leak",
                 closed_too: bool = False) -> dict[str, Any]:
    """A live leak by id, ``TAG`` (its one open leak) or ``TAG@DATE``; the row carries tag, site and ``open``.

    ``closed_too`` (for reading, e.g. history): a bare tag with no open leak names its only leak.
    """
    rows = store.rows(LEAK_ROWS + " AND l.id = ?", (key,))
    if rows:
        return rows[0]
    tag, day = _split(key, field)
    where, params = " AND c.tag = ?", [tag]
    if site_id:
        where, params = where + " AND s.id = ?", [*params, site_id]
    candidates = store.rows(LEAK_ROWS + where + " ORDER BY l.detected_at", params)
    if day is not None:
        found = [r for r in candidates if local_day(r["detected_at"], r["timezone"]) == day]
    else:
        found = [r for r in candidates if r["open"]]
        if not found and closed_too and len(candidates) == 1:
            found = candidates
    if len(found) == 1:
        return found[0]
    if found:
        listed = [_leak_label(r) for r in found]
        hint = "name the site (--site) or the id" if day is not None else "write TAG@YYYY-MM-DD or name the site"
        raise ValidationError([FieldProblem(field, f"{key!r} matches {len(found)} open leaks; {hint}: "
                                            f"{_listed(listed)}" if day is None else
                                            f"{key!r} matches {len(found)} leaks; {hint}: {_listed(listed)}")])
    if candidates:
        what = "that day" if day is not None else "open"
        raise ValidationError([FieldProblem(field, f"{key!r}: no leak {what} on that tag; its leaks: "
                                            f"{_listed([_leak_label(r) for r in candidates])}")])
    raise ValidationError([FieldProblem(field, f"{key!r} is not a leak id or the tag of a leak"
                                        + (" at that site" if site_id else ""))])


COMPONENT_ROWS = (
    "SELECT c.id, c.tag, c.type, c.service, c.area, s.id AS site_id, s.name AS site_name, "
    "(SELECT COALESCE(d.name, j.device_id) FROM journal j LEFT JOIN devices d ON d.device_id = j.device_id "
    " WHERE j.row_id = c.id AND j.tbl = 'components' AND j.op = 'insert' LIMIT 1) AS made_on "
    "FROM components c JOIN sites s ON s.id = c.site_id WHERE c.deleted = 0 AND s.deleted = 0"
)


def _component_label(row: dict[str, Any]) -> str:
    made = f", made on {row['made_on']}" if row["made_on"] else ""
    area = f", area {row['area']}" if row["area"] else ""
    return f"{row['id']} ({row['tag']} at {row['site_name']}: {row['type']}, {row['service']}{area}{made})"


def resolve_component(store: Store, key: str, site_id: str | None = None, field: str = "component") -> dict[str, Any]:
    """A live component by id or by ``TAG`` (the one live component with it); refused listing candidates."""
    rows = store.rows(COMPONENT_ROWS + " AND c.id = ?", (key,))
    if rows:
        return rows[0]
    where, params = " AND c.tag = ?", [key]
    if site_id:
        where, params = where + " AND s.id = ?", [*params, site_id]
    found = store.rows(COMPONENT_ROWS + where + " ORDER BY s.name, c.id", params)
    if len(found) == 1:
        return found[0]
    if found:
        raise ValidationError([FieldProblem(field, f"{key!r} matches {len(found)} components; give the id of one"
                                            + ("" if site_id else " or name the site (--site)") + ": "
                                            + _listed([_component_label(r) for r in found]))])
    raise ValidationError([FieldProblem(field, f"{key!r} is not a component id or the tag of a live component"
                                        + (" at that site" if site_id else ""))])
