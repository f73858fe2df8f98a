"""The model of one leak's record for an auditor: site, leak, component, deadlines with citations, timeline.

Built from the same pieces as the survey report (``sync.report_model.leak_lines``: the leak's fields,
who did what, photos, clips and the `history` timeline), plus every deadline of the leak with the rule
and citation it comes from. ``as_of`` shows the record as it stood at the end of that day (UTC).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from datetime import UTC, date, datetime
from typing import Any

from fieldapp import catalog
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.core.lifecycle import deadlines
from fieldapp.store.base import NotFoundError, Store
from fieldapp.store.estimates import leak_rows
from fieldapp.store.history import leak_timeline
from fieldapp.store.reads import facts_for
from sync.report_model import (
    CAUTIONS,
    CERTIFICATION,
    GWP_SET,
    LeakLine,
    Progress,
    fingerprint,
    leak_lines,
    local_time,
    record_fields,
    site_identifiers,
    tag_cautions,
    words,
)

# leak_rows columns that come from the component record, and the component field each is
COMPONENT_COLUMNS = {"tag": "tag", "component_type": "type", "service": "service", "equipment": "equipment"}


@dataclass
class LeakReport:
    """What the leak record PDF shows."""

    site: dict[str, Any]
    program: dict[str, Any]
    line: LeakLine
    component: dict[str, Any]
    survey: list[tuple[str, str]]
    deadlines: list[dict[str, str]]
    identifiers: list[tuple[str, str]]
    cautions: tuple[str, ...]
    fingerprint: str
    made_at: str
    made_at_local: str
    as_of: str
    recorded_by: str = ""
    gwp_set: str = GWP_SET
    certification: str = CERTIFICATION
    surveyor: str = ""
    instrument: str = ""
    leak_id: str = ""
    notes: list[str] = field(default_factory=list)


def standing(d, overdue: set[str], state: str) -> str:
    """A deadline's standing in words: met, done late, done, overdue, due by DATE, no date yet, or not counted."""
    if d.done_on is not None:
        if d.due is None:
            return f"done {d.done_on}"
        return f"met ({d.done_on})" if d.done_on <= d.due else f"done late ({d.done_on}, due {d.due})"
    if d.kind in overdue:
        return f"OVERDUE since {d.due}"
    if d.due is None:
        return "no date yet" + (f": {d.note}" if d.note else "")
    if state in ("closed", "void"):
        return f"not done; not counted (the leak is {state})"
    if state == "delayed" and d.kind in ("final_repair", "re_repair"):
        return "not done; on delay of repair, the delay limit governs"
    return f"due by {d.due}"


def _as_it_stood(store: Store, row: dict[str, Any], as_of: date) -> dict[str, Any]:
    """The leak row with the leak's and component's values as recorded by the end of ``as_of`` (UTC)."""
    story = leak_timeline(store, row["id"], as_of.isoformat())
    if story["leak"] is None:
        first = store.rows("SELECT MIN(at) AS at FROM journal WHERE row_id = ?", (row["id"],))[0]["at"]
        raise ValidationError([FieldProblem("as-of", f"{as_of}: leak {row['tag']} was not recorded yet by the end of "
                                            f"that day (UTC); it was first recorded at {first}")])
    then = {**row, **{k: v for k, v in story["leak"].items() if k in row}}
    comp = story["component"] or {}
    then.update({col: comp[name] for col, name in COMPONENT_COLUMNS.items() if name in comp})
    return then


def leak_report(store: Store, leak_id: str, as_of: date | None = None,
                progress: Progress | None = None) -> LeakReport:
    """The record of one leak; with ``as_of``, as it stood at the end of that day (deadlines judged that day)."""
    today = datetime.fromtimestamp(store.wall(), UTC).date()
    rows = leak_rows(store, leak_id=leak_id)
    if not rows:
        raise NotFoundError(f"no leak with id {leak_id}")
    row = _as_it_stood(store, rows[0], as_of) if as_of else rows[0]
    judged = as_of or today
    (line,) = leak_lines(store, [row], judged, recorded_by=as_of, progress=progress)
    site = store.get("sites", row["site_id"])
    survey = store.get("surveys", row["survey_id"])
    program = catalog.program(row["program_id"])
    cutoff = f"{as_of.isoformat()}T99" if as_of else "9999"
    actions = store.rows("SELECT * FROM actions WHERE leak_id = ? AND recorded_at <= ?", (leak_id, cutoff))
    facts = facts_for([row], actions)[leak_id]
    overdue = set(line.overdue.split(";")) - {""}
    dues = [{"deadline": words(d.kind), "due": d.due.isoformat() if d.due else "-",
             "done": d.done_on.isoformat() if d.done_on else "-", "standing": standing(d, overdue, line.state),
             "rule": d.rule, "citation": d.citation, "status": d.status}
            for d in deadlines(program, facts, catalog.holidays_for(program))]
    comp_id = row["component_id"]
    component = {**store.get("components", comp_id, include_deleted=True),
                 **{name: row[col] for col, name in COMPONENT_COLUMNS.items()}}
    instrument = f"{survey['camera_make']} {survey['camera_model']} {survey['camera_serial']}".strip()
    found_in = [(label, value) for label, value, _req in record_fields(survey, (), site["timezone"])
                if label in ("Date of the survey", "Method", "Begin time", "End time", "Operator",
                             "Operator training and experience", "Daily verification")]
    made = store.now_text()
    prog = {"id": program.id, "title": program.title, "rule": program.rule, "notice": program.notice}
    return LeakReport(
        site=site, program=prog, line=line, component=component, survey=found_in + [("Instrument", instrument
                                                                                      or "not recorded")],
        deadlines=dues, identifiers=site_identifiers(site),
        cautions=CAUTIONS + tag_cautions(store, {site["id"]}),
        fingerprint=fingerprint(site, component, asdict(line), dues), made_at=made,
        made_at_local=local_time(made, site["timezone"]), as_of=judged.isoformat(),
        recorded_by=as_of.isoformat() if as_of else "", surveyor=survey["operator"], instrument=instrument,
        leak_id=leak_id)
