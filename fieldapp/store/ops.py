"""User actions on the store: each validates everything first, then writes in one transaction.

A refused action raises ``ValidationError`` (every problem, each naming its field) and writes nothing.
These are the functions the CLI and the tablet screens call.
"""

from __future__ import annotations

from collections.abc import Mapping
from datetime import UTC, date, datetime
from typing import Any

from fieldapp import catalog
from fieldapp.core import survey_rules
from fieldapp.core.dates import local_date
from fieldapp.core.enums import ActionKind
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.core.lifecycle import summarize
from fieldapp.core.records import (
    RECORD_TYPES,
    Action,
    Component,
    Leak,
    Site,
    Survey,
    as_plain,
    parse_record,
)
from fieldapp.core.records import replace as replace_record
from fieldapp.store.base import NotFoundError, Store, new_id
from fieldapp.store.reads import action_from_row


def _parse(cls: type, values: Mapping[str, Any]) -> Any:
    values = dict(values)
    values.setdefault("id", new_id())
    record, problems = parse_record(cls, values)
    if problems:
        raise ValidationError(problems)
    return record


def _exists(store: Store, table: str, row_id: str, field: str) -> dict[str, Any]:
    try:
        return store.get(table, row_id)
    except NotFoundError:
        raise ValidationError([FieldProblem(field, f"no {table[:-1]} with id {row_id!r}")]) from None


def _record(cls: type, row: Mapping[str, Any]) -> Any:
    """A record from a stored row (store-only columns dropped)."""
    record, problems = parse_record(cls, {k: v for k, v in row.items() if k not in ("deleted", "recorded_at")})
    if problems:
        raise ValidationError(problems)
    return record


def tag_in_use(store: Store, site_id: str, tag: str, own_id: str = "") -> bool:
    """True when another live component of the site has this tag.

    Checked here, not by a unique index: two devices can create the same tag independently, and the
    merge must keep both (listed by ``plumebook conflicts`` until resolved; migration 10).
    """
    return store.conn.execute("SELECT 1 FROM components WHERE site_id = ? AND tag = ? AND deleted = 0 AND id != ?",
                              (site_id, tag, own_id)).fetchone() is not None


def _insert(store: Store, table: str, record: Any, actor: str) -> None:
    if table == "components" and tag_in_use(store, record.site_id, record.tag, record.id):
        raise ValidationError([FieldProblem("tag", f"{record.tag!r} is already used at this site")])
    store.insert(table, as_plain(record), actor)


def add_site(store: Store, values: Mapping[str, Any], actor: str = "") -> Site:
    """Create a site; its program must be a known program."""
    site = _parse(Site, values)
    catalog.program(site.program_id)
    with store.transaction():
        _insert(store, "sites", site, actor)
    return site


def add_component(store: Store, values: Mapping[str, Any], actor: str = "") -> Component:
    """Add one component to a site's inventory (its tag must be new at that site)."""
    component = _parse(Component, values)
    with store.transaction():
        _exists(store, "sites", component.site_id, "site_id")
        _insert(store, "components", component, actor)
    return component


def site_program(store: Store, site_id: str):
    """The program of a site."""
    return catalog.program(store.get("sites", site_id)["program_id"])


def start_survey(store: Store, values: Mapping[str, Any], actor: str = "") -> tuple[Survey, list[str]]:
    """Start a survey; the program's required fields and camera check must be there.

    Returns the survey and any warnings about conditions outside the program's or company's limits.
    """
    site = _exists(store, "sites", str(values.get("site_id", "")), "site_id")
    program = catalog.program(site["program_id"])
    problems = survey_rules.required_problems(program, values)
    survey, parse_problems = parse_record(Survey, {"id": new_id(), **values})
    problems += [p for p in parse_problems if p.field not in {q.field for q in problems}]
    if survey is not None:
        problems += survey_rules.start_problems(program, survey)
    if problems:
        raise ValidationError(problems)
    with store.transaction():
        _insert(store, "surveys", survey, actor)
    return survey, survey_rules.condition_warnings(program, survey)


def end_survey(store: Store, survey_id: str, values: Mapping[str, Any], actor: str = "") -> Survey:
    """End a survey with its end time, areas done, and deviations (or the statement of none)."""
    current = _exists(store, "surveys", survey_id, "survey_id")
    survey, problems = replace_record(_record(Survey, current), values)
    if survey is not None:
        problems = survey_rules.end_problems(survey)
    if problems:
        raise ValidationError(problems)
    with store.transaction():
        store.update("surveys", survey_id, {k: as_plain(survey)[k] for k in values}, actor)
    return survey


def add_leak(store: Store, values: Mapping[str, Any], new_component: Mapping[str, Any] | None = None,
             actor: str = "") -> Leak:
    """Record a leak found in a survey; ``new_component`` creates its tag on the spot, same transaction."""
    values = dict(values)
    survey = _exists(store, "surveys", str(values.get("survey_id", "")), "survey_id")
    with store.transaction():
        if new_component is not None:
            component = add_component(store, {**new_component, "site_id": survey["site_id"]}, actor)
            values["component_id"] = component.id
        leak = _parse(Leak, values)
        comp = _exists(store, "components", leak.component_id, "component_id")
        if comp["site_id"] != survey["site_id"]:
            raise ValidationError([FieldProblem("component_id", "belongs to another site than the survey")])
        if leak.measured_rate is not None and leak.measured_unit not in ("kg/h", "lb/h", "scf/h", "m3/h"):
            raise ValidationError([FieldProblem("measured_unit", "allowed: kg/h, lb/h, scf/h, m3/h")])
        _insert(store, "leaks", leak, actor)
    return leak


def leak_actions(store: Store, leak_id: str) -> list[Action]:
    """All actions of a leak as records."""
    return [action_from_row(r) for r in store.rows("SELECT * FROM actions WHERE leak_id = ?", (leak_id,))]


def leak_context(store: Store, leak_id: str) -> tuple[dict, dict, date]:
    """A leak's row, its site's row, and its local detection date."""
    leak = store.get("leaks", leak_id)
    site = store.rows(
        "SELECT s.* FROM sites s JOIN surveys v ON v.site_id = s.id WHERE v.id = ?", (leak["survey_id"],)
    )[0]
    detected = local_date(datetime.fromisoformat(leak["detected_at"]), site["timezone"])
    return leak, site, detected


def add_action(store: Store, values: Mapping[str, Any], actor: str = "") -> Action:
    """Append an action to a leak after checking the whole sequence stays possible."""
    values = dict(values)
    leak_row = _exists(store, "leaks", str(values.get("leak_id", "")), "leak_id")
    with store.transaction():
        existing = leak_actions(store, leak_row["id"])
        values.setdefault("seq", len(existing))
        action = _parse(Action, values)
        _leak, site, detected = leak_context(store, action.leak_id)
        today = local_date(datetime.fromtimestamp(store.wall(), UTC), site["timezone"])
        if action.done_on > today:
            raise ValidationError([FieldProblem("done_on", f"is in the future (today is {today} at the site)")])
        program = catalog.program(site["program_id"])
        if action.kind is ActionKind.DELAY_OF_REPAIR:
            if program.delay is None:
                raise ValidationError([FieldProblem("kind", f"program {program.id} has no delay of repair")])
            if program.delay.until_shutdown and program.delay.cap is None and not action.shutdown_on:
                raise ValidationError([FieldProblem("shutdown_on", "is required: the delay lasts until the "
                                                    "next shutdown")])
        _facts, problems = summarize(detected, [*existing, action], leak_row["screening_ppm"])
        if problems:
            raise ValidationError(problems)
        _insert(store, "actions", action, actor)
    return action


def edit(store: Store, table: str, row_id: str, changes: Mapping[str, Any], actor: str = "") -> dict:
    """Change fields of a record after re-validating it whole; the journal keeps the old values."""
    if table not in RECORD_TYPES:
        raise ValidationError([FieldProblem("table", f"allowed: {', '.join(RECORD_TYPES)}")])
    current = _exists(store, table, row_id, "id")
    cls = RECORD_TYPES[table]
    record = _record(cls, current)
    if "id" in changes and changes["id"] != row_id:
        raise ValidationError([FieldProblem("id", "cannot be changed")])
    updated, problems = replace_record(record, changes)
    if problems:
        raise ValidationError(problems)
    if table == "sites":
        catalog.program(updated.program_id)
    plain = as_plain(updated)
    with store.transaction():
        moved = table == "components" and {"tag", "site_id"} & set(changes)
        if moved and tag_in_use(store, plain["site_id"], plain["tag"], row_id):
            raise ValidationError([FieldProblem("tag", "is already used at this site")])
        return store.update(table, row_id, {k: plain[k] for k in changes}, actor)


def delete(store: Store, table: str, row_id: str, actor: str = "") -> None:
    """Tombstone a record (never actions: void the leak instead)."""
    _exists(store, table, row_id, "id")
    with store.transaction():
        store.delete(table, row_id, actor)
