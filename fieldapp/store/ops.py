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
from fieldapp.core.enums import ActionKind, DelayKind, SurveyMethod
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
from fieldapp.core.weather_units import UnitError, canonical_conditions
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
    _check_kind(site)
    with store.transaction():
        _insert(store, "sites", site, actor)
    return site


def _check_kind(site: Site) -> None:
    """Refuse a site kind that the site's program does not schedule (never mapped to another kind)."""
    problem = catalog.program(site.program_id).kind_problem(site.kind)
    if problem:
        raise ValidationError([FieldProblem("kind", problem)])


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
    try:  # conditions typed in °F or mph are stored in °C and m/s, the typed value and unit kept beside
        values = canonical_conditions(dict(values))
    except UnitError as exc:
        raise ValidationError([FieldProblem("temp_unit" if "temperature" in str(exc) else "wind_unit",
                                            str(exc))]) from None
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
        program = catalog.program(store.get("sites", survey.site_id)["program_id"])
        problems = survey_rules.end_problems(survey, program)
    if problems:
        raise ValidationError(problems)
    with store.transaction():
        store.update("surveys", survey_id, {k: as_plain(survey)[k] for k in values}, actor)
    return survey


def survey_record_warnings(store: Store, survey_id: str) -> list[str]:
    """What the survey's program asks of its leak records that is missing (warnings, nothing refused).

    Today: a leak not repaired during its survey needs a photo or a tag on the component.
    """
    survey = _exists(store, "surveys", survey_id, "survey_id")
    site = store.get("sites", survey["site_id"])
    program = catalog.program(site["program_id"])
    leaks = store.rows(
        "SELECT l.id, l.detected_at, l.tag_attached, c.tag, (SELECT COUNT(*) FROM media m WHERE m.leak_id = l.id "
        "AND m.deleted = 0) AS photos FROM leaks l JOIN components c ON c.id = l.component_id "
        "WHERE l.survey_id = ? AND l.deleted = 0 ORDER BY l.detected_at", (survey_id,))
    end_day = None
    if survey["ended_at"]:
        end_day = local_date(datetime.fromisoformat(survey["ended_at"]), site["timezone"]).isoformat()
    repaired = {r["leak_id"] for r in store.rows(
        "SELECT DISTINCT a.leak_id FROM actions a JOIN leaks l ON l.id = a.leak_id WHERE l.survey_id = ? "
        "AND a.kind = 'repaired' AND a.done_on <= ?", (survey_id, end_day))} if end_day else set()
    for leak in leaks:
        leak["repaired_in_survey"] = leak["id"] in repaired
    problems = survey_rules.compressor_modes_missing(program, site["kind"], survey)
    return [p.message for p in problems + survey_rules.unrepaired_without_record(program, leaks)]


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
        if leak.detection_method is None:
            leak = replace_record(leak, {"detection_method": survey["method"]})[0]
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
        method = leak_method(store, leak_row)
        _check_action_rules(program, action, leak_row["screening_ppm"], method)
        _facts, problems = summarize(detected, [*existing, action], leak_row["screening_ppm"], method)
        if problems:
            raise ValidationError(problems)
        _insert(store, "actions", action, actor)
    return action


def leak_method(store: Store, leak_row: Mapping[str, Any]) -> SurveyMethod:
    """How a leak was found: its own detection method, else its survey's method."""
    if leak_row.get("detection_method"):
        return SurveyMethod(leak_row["detection_method"])
    return SurveyMethod(store.get("surveys", leak_row["survey_id"])["method"])


def _check_action_rules(program, action: Action, screening_ppm: float | None, method: SurveyMethod) -> None:
    """What the leak's program allows of this action: delay routes and resurvey methods."""
    if action.kind is ActionKind.DELAY_OF_REPAIR:
        if program.delay is None:
            raise ValidationError([FieldProblem("kind", f"program {program.id} has no delay of repair")])
        if action.delay_kind is DelayKind.PARTS and program.delay.parts is None:
            raise ValidationError([FieldProblem("delay_kind", f"program {program.id} has no delay for parts; "
                                                "allowed: shutdown")])
        if (action.delay_kind or DelayKind.SHUTDOWN) is DelayKind.SHUTDOWN and program.delay.until_shutdown \
                and program.delay.cap is None and not action.shutdown_on:
            raise ValidationError([FieldProblem("shutdown_on", "is required: the delay lasts until the "
                                                "next shutdown")])
    elif action.delay_kind or action.parts_ordered_on or action.parts_received_on:
        raise ValidationError([FieldProblem("delay_kind", "applies only to a delay of repair")])
    if action.method is not None and action.kind not in (ActionKind.RESURVEY_PASSED, ActionKind.RESURVEY_FAILED):
        raise ValidationError([FieldProblem("method", "is the method of a resurvey; leave it blank for "
                                            f"{action.kind.value.replace('_', ' ')}")])
    if action.method is not None:
        tier = program.tier_for(screening_ppm, method)
        if tier.resurvey_methods and action.method not in tier.resurvey_methods:
            allowed_methods = ", ".join(m.value for m in tier.resurvey_methods)
            raise ValidationError([FieldProblem("method", f"a leak found by {method.value} may be resurveyed by "
                                                f"{allowed_methods} ({tier.citation or program.rule})")])


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
        _check_kind(updated)
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
