"""The due list over a whole store with set-based queries.

Closed and void leaks are dropped in SQL through the partial index on terminal actions, so only
leaks that can still be due are read; their actions come in one joined query and the deadlines are
computed by the core (one state machine for every caller).
"""

from __future__ import annotations

from collections import defaultdict
from datetime import date
from typing import Any

from fieldapp import catalog
from fieldapp.core import due as due_core
from fieldapp.core.enums import SiteKind, SurveyMethod
from fieldapp.core.lifecycle import outstanding, summarize
from fieldapp.core.records import Action
from fieldapp.core.windows import PastSurvey, WindowError, next_window
from fieldapp.store.base import Store
from fieldapp.store.reads import REPEAT_COUNT, REPEAT_MIN, local_day, make_action

OPEN_LEAKS = (
    "WITH open AS MATERIALIZED (SELECT l.id, l.detected_at, l.screening_ppm, l.component_id, s.id AS site_id, "
    "s.name AS site_name, s.timezone, s.program_id, c.tag, c.type AS component_type, "
    f"{REPEAT_COUNT} AS seen_in, COALESCE(l.detection_method, v.method) AS method, l.hazard FROM leaks l "
    "JOIN components c ON c.id = l.component_id JOIN surveys v ON v.id = l.survey_id "
    "JOIN sites s ON s.id = v.site_id WHERE l.deleted = 0 AND s.deleted = 0 {site} AND NOT EXISTS "
    "(SELECT 1 FROM actions t WHERE t.leak_id = l.id AND t.kind IN ('resurvey_passed', 'voided'))) "
    "SELECT open.*, a.id AS action_id, a.kind, a.done_on, a.seq, a.reason, a.planned_on, a.shutdown_on, "
    "a.method AS resurvey_method, a.delay_kind, a.parts_ordered_on, a.parts_received_on "
    "FROM open LEFT JOIN actions a ON a.leak_id = open.id ORDER BY open.id"
)


def leak_items(store: Store, site_id: str | None = None) -> list[due_core.DueItem]:
    """Outstanding deadlines of every leak that is not closed or void, from one joined query."""
    cursor = store.conn.execute(OPEN_LEAKS.format(site="AND s.id = ?" if site_id else ""),
                                (site_id,) if site_id else ())
    programs: dict[str, Any] = {}
    zones: dict[str, Any] = {}
    items: list[due_core.DueItem] = []
    current: tuple | None = None
    actions: list[Action] = []

    def flush(row: tuple) -> None:
        leak_id, detected_at, ppm, _comp, site, site_name, tz, program_id, tag, ctype, seen_in, method, hazard = (
            row[:13])
        program = programs.get(program_id)
        if program is None:
            program = programs[program_id] = (catalog.program(program_id),
                                              catalog.holidays_for(catalog.program(program_id)))
        facts = summarize(local_day(detected_at, tz, zones), actions, ppm, SurveyMethod(method))[0]
        for deadline in outstanding(program[0], facts, program[1]):
            items.append(due_core.from_deadline(site, site_name, deadline, leak_id, tag, ctype,
                                                seen_in >= REPEAT_MIN, bool(hazard)))

    for row in cursor:
        if current is not None and row[0] != current[0]:
            flush(current)
            actions = []
        current = row
        if row[13] is not None:
            actions.append(make_action(row[13], row[0], *row[14:20], "", "", "", *row[20:24]))
    if current is not None:
        flush(current)
    return items


def survey_items(store: Store, site_id: str | None = None) -> tuple[list[due_core.DueItem], list[str]]:
    """The next survey window of every inspection of every site, and problems computing them."""
    where = "AND s.id = ?" if site_id else ""
    params = (site_id,) if site_id else ()
    sites = store.rows(f"SELECT * FROM sites s WHERE s.deleted = 0 {where}", params)
    surveys = store.rows(
        "SELECT v.site_id, v.method, v.started_at, s.timezone, (SELECT COUNT(*) FROM leaks l "
        "WHERE l.survey_id = v.id AND l.deleted = 0) AS leaks_found FROM surveys v "
        f"JOIN sites s ON s.id = v.site_id WHERE v.deleted = 0 {where}", params)
    by_site: dict[tuple[str, str], list[PastSurvey]] = defaultdict(list)
    zones: dict[str, Any] = {}
    for row in surveys:
        on = local_day(row["started_at"], row["timezone"], zones)
        by_site[(row["site_id"], row["method"])].append(PastSurvey(on, row["leaks_found"]))
    items, problems = [], []
    for site in sites:
        program = catalog.program(site["program_id"])
        kind = SiteKind(site["kind"])
        startup = date.fromisoformat(site["startup_date"]) if site["startup_date"] else None
        problem = program.kind_problem(kind)
        if problem:
            problems.append(f"{site['name']}: {problem}")
            continue
        for insp in program.inspections_for(kind):
            past = [p for m in insp.satisfied_by() for p in by_site.get((site["id"], m.value), [])]
            try:
                window = next_window(program, kind, SurveyMethod(insp.method), past, startup)
            except WindowError as exc:
                problems.append(f"{site['name']}: {exc}")
                continue
            items.append(due_core.from_window(site["id"], site["name"], window))
    return items, problems


def due_list(store: Store, as_of: date, site_id: str | None = None, within_days: int | None = None
             ) -> tuple[list[due_core.DueItem], list[str]]:
    """Every due item as of a date, overdue first, and any site whose windows could not be computed."""
    windows, problems = survey_items(store, site_id)
    return due_core.select([*windows, *leak_items(store, site_id)], as_of, within_days), problems
