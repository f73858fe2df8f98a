"""Named reads behind the tablet screens (and any CLI command that wants the same answer).

The screens hold no SQL: each question they ask the store has a name here.
"""

from __future__ import annotations

from typing import Any

from fieldapp.store.base import Store


def components_by_prefix(store: Store, site_id: str, prefix: str, limit: int = 200) -> list[dict[str, Any]]:
    """A page of a site's live components whose tag starts with ``prefix``, by tag (index on site and tag)."""
    return store.rows("SELECT id, tag, type, service, area, difficult_to_monitor, unsafe_to_monitor FROM components "
                      "WHERE site_id = ? AND deleted = 0 AND tag >= ? AND tag < ? ORDER BY tag LIMIT ?",
                      (site_id, prefix, prefix + "\uffff", limit))


def component_by_tag(store: Store, site_id: str, tag: str) -> dict[str, Any] | None:
    """The live component with this tag at a site, or None."""
    rows = store.rows("SELECT * FROM components WHERE site_id = ? AND tag = ? AND deleted = 0", (site_id, tag))
    return rows[0] if rows else None


def survey_leaks(store: Store, survey_id: str) -> list[dict[str, Any]]:
    """The live leaks of one survey with their tag and component type, in the order found."""
    return store.rows("SELECT l.id, c.tag, c.type, l.hazard FROM leaks l JOIN components c ON c.id = "
                      "l.component_id WHERE l.survey_id = ? AND l.deleted = 0 ORDER BY l.detected_at",
                      (survey_id,))


def last_survey(store: Store, site_id: str) -> dict[str, Any] | None:
    """The newest live survey of a site, or None."""
    rows = store.rows("SELECT * FROM surveys WHERE site_id = ? AND deleted = 0 ORDER BY started_at DESC LIMIT 1",
                      (site_id,))
    return rows[0] if rows else None


def latest_survey_id(store: Store) -> str:
    """The id of the newest live survey anywhere in the store ('' when none)."""
    rows = store.rows("SELECT id FROM surveys WHERE deleted = 0 ORDER BY started_at DESC LIMIT 1")
    return rows[0]["id"] if rows else ""


def leak_action_rows(store: Store, leak_id: str) -> list[dict[str, Any]]:
    """A leak's action rows, in the order they were appended."""
    return store.rows("SELECT * FROM actions WHERE leak_id = ? ORDER BY seq", (leak_id,))


def busiest_site_id(store: Store) -> str:
    """The live site with the most leaks ('' when there is no site)."""
    rows = store.rows("SELECT s.id FROM sites s LEFT JOIN surveys v ON v.site_id = s.id LEFT JOIN leaks l ON "
                      "l.survey_id = v.id WHERE s.deleted = 0 GROUP BY s.id ORDER BY COUNT(l.id) DESC, s.name "
                      "LIMIT 1")
    return rows[0]["id"] if rows else ""


def current_survey_id(store: Store, site_id: str) -> str:
    """A site's survey in progress if any, else its newest survey ('' when none)."""
    rows = store.rows("SELECT id FROM surveys WHERE site_id = ? AND deleted = 0 ORDER BY ended_at IS NOT NULL, "
                      "started_at DESC LIMIT 1", (site_id,))
    return rows[0]["id"] if rows else ""


def most_pressing_leak_id(store: Store) -> str:
    """A leak not closed or void, hazardous ones first, then the newest ('' when none)."""
    rows = store.rows("SELECT l.id FROM leaks l WHERE l.deleted = 0 AND NOT EXISTS (SELECT 1 FROM actions a WHERE "
                      "a.leak_id = l.id AND a.kind IN ('resurvey_passed', 'voided')) ORDER BY l.hazard DESC, "
                      "(SELECT COUNT(*) FROM media m WHERE m.leak_id = l.id AND m.deleted = 0) DESC, "
                      "l.detected_at DESC LIMIT 1")
    return rows[0]["id"] if rows else ""
