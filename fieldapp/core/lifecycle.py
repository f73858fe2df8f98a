"""A leak's life: its state derived from its actions, and its repair deadlines.

Actions are ordered by the local date they happened (then by their entry order), never by when they
were typed, so a backdated entry lands where it belongs. State machine::

    open --first_attempt--> attempted --repaired--> repaired --resurvey_passed--> closed
      \\--delay_of_repair--> delayed --repaired--> repaired --resurvey_failed--> open (re-repair due)
    any state but closed --voided--> void

A repair without an earlier first attempt counts as the first attempt too (common practice, no
source). Worked example, 40 CFR 61.242-7(d) [text]: detected 2026-03-02 → first attempt due
2026-03-07 (5 calendar days), repair due 2026-03-17 (15 calendar days).
"""

from __future__ import annotations

import functools
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import date

from fieldapp.core.dates import HolidayTest, add_span, no_holidays
from fieldapp.core.enums import ActionKind, DelayKind, LeakState, SurveyMethod
from fieldapp.core.fields import FieldProblem
from fieldapp.core.program import DeadlineRule, Program
from fieldapp.core.records import Action

TERMINAL = (LeakState.CLOSED, LeakState.VOID)


@dataclass(frozen=True, slots=True)
class DelayFacts:
    """The delay of repair in force (a later delay action adds to it: e.g. the date parts arrived)."""

    on: date
    reason: str
    planned_on: date | None
    shutdown_on: date | None
    kind: DelayKind = DelayKind.SHUTDOWN
    parts_ordered_on: date | None = None
    parts_received_on: date | None = None


@dataclass(frozen=True, slots=True)
class LeakFacts:
    """What the deadlines depend on, summarised from a leak's actions."""

    detected_on: date
    screening_ppm: float | None = None
    method: SurveyMethod | None = None
    state: LeakState = LeakState.OPEN
    first_attempt_on: date | None = None
    first_repair_on: date | None = None
    repaired_on: date | None = None
    failed_on: date | None = None
    repaired_after_failure_on: date | None = None
    delay: DelayFacts | None = None
    resurveyed_on: date | None = None
    resurvey_method: SurveyMethod | None = None
    closed_on: date | None = None


@dataclass(frozen=True, slots=True)
class Deadline:
    """One deadline of a leak: when it is due, and when (if) it was met."""

    kind: str
    due: date | None
    rule: str
    citation: str
    status: str
    done_on: date | None = None
    note: str = ""

    @property
    def met(self) -> bool:
        """Done on or before the due date."""
        return self.done_on is not None and (self.due is None or self.done_on <= self.due)

    def outstanding(self) -> bool:
        """Not done yet."""
        return self.done_on is None


@dataclass(slots=True)
class _Walk:
    facts: dict = field(default_factory=dict)
    state: LeakState = LeakState.OPEN


def order(actions: Sequence[Action]) -> list[Action]:
    """Actions in the order they happened: by local date, then entry order, then kind."""
    return sorted(actions, key=lambda a: (a.done_on, a.seq, a.id))


def summarize(detected_on: date, actions: Sequence[Action], screening_ppm: float | None = None,
              method: SurveyMethod | None = None) -> tuple[LeakFacts, list[FieldProblem]]:
    """Walk the actions in order; returns the facts and any impossible step, named by field.

    ``method`` is how the leak was found (it picks the repair tier of programs that tell methods apart).
    """
    w = _Walk()
    problems: list[FieldProblem] = []
    for a in order(actions):
        problem = _step(w, a, detected_on)
        if problem:
            problems.append(FieldProblem(problem[0], f"{a.kind.value} on {a.done_on}: {problem[1]}"))
    return LeakFacts(detected_on=detected_on, screening_ppm=screening_ppm, method=method, state=w.state,
                     **w.facts), problems


def _step(w: _Walk, a: Action, detected_on: date) -> tuple[str, str] | None:
    f, s = w.facts, w.state
    if a.done_on < detected_on:
        return "done_on", f"is before the leak was detected ({detected_on})"
    if s in TERMINAL:
        return "kind", f"the leak is already {s.value}; no further actions are allowed"
    kind = a.kind
    if kind is ActionKind.VOIDED:
        if not a.reason:
            return "reason", "a reason is required to void a leak"
        w.state = LeakState.VOID
        f["closed_on"] = a.done_on
    elif kind is ActionKind.FIRST_ATTEMPT:
        if s is LeakState.REPAIRED:
            return "kind", "the leak is repaired and awaits its resurvey"
        f.setdefault("first_attempt_on", a.done_on)
        if s is LeakState.OPEN:
            w.state = LeakState.ATTEMPTED
    elif kind is ActionKind.REPAIRED:
        if s is LeakState.REPAIRED:
            return "kind", "the leak is already repaired; record its resurvey first"
        f.setdefault("first_attempt_on", a.done_on)
        f.setdefault("first_repair_on", a.done_on)
        if f.get("failed_on"):
            f["repaired_after_failure_on"] = a.done_on
        f["repaired_on"] = a.done_on
        w.state = LeakState.REPAIRED
    elif kind in (ActionKind.RESURVEY_PASSED, ActionKind.RESURVEY_FAILED):
        if s is not LeakState.REPAIRED:
            return "kind", "a resurvey needs a repair first"
        f["resurveyed_on"] = a.done_on
        f["resurvey_method"] = a.method
        if kind is ActionKind.RESURVEY_PASSED:
            w.state = LeakState.CLOSED
            f["closed_on"] = a.done_on
        else:
            w.state = LeakState.OPEN
            f["failed_on"] = a.done_on
            f.pop("repaired_after_failure_on", None)
    elif kind is ActionKind.DELAY_OF_REPAIR:
        if s is LeakState.REPAIRED:
            return "kind", "the leak is repaired; a delay of repair no longer applies"
        if not a.reason:
            return "reason", "a reason is required for a delay of repair"
        problem = _delay_step(f, a)
        if problem:
            return problem
        w.state = LeakState.DELAYED
    return None


def _delay_step(f: dict, a: Action) -> tuple[str, str] | None:
    """Record a delay action; a later one on the same route keeps what the earlier one recorded."""
    kind = a.delay_kind or DelayKind.SHUTDOWN
    before: DelayFacts | None = f.get("delay")
    same = before is not None and before.kind is kind
    ordered = a.parts_ordered_on or (before.parts_ordered_on if same else None)
    received = a.parts_received_on or (before.parts_received_on if same else None)
    if kind is DelayKind.PARTS:
        if received is not None and ordered is None:
            return "parts_ordered_on", "is required once the replacement is received"
        if ordered is not None and ordered > a.done_on:
            return "parts_ordered_on", f"is after the delay was recorded ({a.done_on})"
        if received is not None and ordered is not None and received < ordered:
            return "parts_received_on", f"is before the part was ordered ({ordered})"
        if received is not None and received > a.done_on:
            return "parts_received_on", f"is after the delay was recorded ({a.done_on})"
    elif a.parts_ordered_on or a.parts_received_on:
        field_name = "parts_ordered_on" if a.parts_ordered_on else "parts_received_on"
        return field_name, "applies only to a delay of kind parts"
    planned = a.planned_on or (before.planned_on if same else None)
    shutdown = a.shutdown_on or (before.shutdown_on if same else None)
    f["delay"] = DelayFacts(before.on if same else a.done_on, a.reason, planned, shutdown, kind, ordered, received)
    return None


def derive_state(detected_on: date, actions: Sequence[Action]) -> LeakState:
    """The state of a leak from its actions alone."""
    return summarize(detected_on, actions)[0].state


def _due(rule: DeadlineRule, start: date, is_holiday: HolidayTest) -> date:
    return add_span(start, rule.span.amount, rule.span.unit, is_holiday)


@functools.lru_cache(maxsize=256)
def _describe(rule: DeadlineRule) -> str:
    return rule.describe()


def _make(rule: DeadlineRule, due: date | None, done: date | None, note: str = "") -> Deadline:
    return Deadline(rule.kind, due, _describe(rule), rule.citation, rule.status, done, note or rule.note)


def _final_due(program: Program, facts: LeakFacts, is_holiday: HolidayTest) -> tuple[date | None, date | None]:
    """(first-attempt due, final-repair due) of a leak under its tier, None when the tier sets none."""
    rules = program.tier_for(facts.screening_ppm, facts.method).rules
    first = rules.get("first_attempt")
    first_due = _due(first, facts.detected_on, is_holiday) if first else None
    final = rules.get("final_repair")
    if final is None:
        return first_due, None
    if final.start == "first_attempt":
        candidates = [d for d in (facts.first_attempt_on, first_due) if d is not None]
        base = min(candidates) if candidates else facts.detected_on
    else:
        base = facts.detected_on
    return first_due, _due(final, base, is_holiday)


def _completion_due(rule: DeadlineRule, start: date | None, final_due: date | None, limit: Deadline | None,
                    is_holiday: HolidayTest) -> date | None:
    """Due date of a rule that completes the repair (resurvey, re-repair).

    A rule counted from the final-repair deadline falls on it, or on the delay limit while a delay of
    repair is in force.
    """
    if rule.start == "final_repair_deadline":
        base = limit.due if limit is not None and limit.due is not None else final_due
        return None if base is None else _due(rule, base, is_holiday)
    return None if start is None else _due(rule, start, is_holiday)


def deadlines(program: Program, facts: LeakFacts, is_holiday: HolidayTest = no_holidays) -> list[Deadline]:
    """Every deadline of a leak under its program, met or not.

    The tier follows the leak's screening value and detection method. The final repair counted from
    the first attempt starts at the earlier of the first attempt and its due date, so a late first
    attempt never buys more time (a conservative reading, no source).
    """
    rules = program.tier_for(facts.screening_ppm, facts.method).rules
    out: list[Deadline] = []
    first_due, final_due = _final_due(program, facts, is_holiday)
    first = rules.get("first_attempt")
    if first:
        out.append(_make(first, first_due, facts.first_attempt_on))
    final = rules.get("final_repair")
    if final:
        note = ""
        if facts.delay and not facts.first_repair_on:
            note = f"on delay of repair since {facts.delay.on}"
        out.append(_make(final, final_due, facts.first_repair_on, note))
    limit = None
    if facts.delay and program.delay:
        out.extend(delay_deadlines(program, facts, is_holiday, first_due))
        limit = next((d for d in out if d.kind == "delay_limit"), None)
    resurvey = rules.get("resurvey")
    if resurvey and facts.repaired_on:
        done = facts.resurveyed_on if facts.resurveyed_on and facts.resurveyed_on >= facts.repaired_on else None
        due = _completion_due(resurvey, facts.repaired_on, final_due, limit, is_holiday)
        out.append(_make(resurvey, due, done))
    if facts.failed_on:
        again = rules.get("re_repair") or final
        if again:
            start = "final_repair_deadline" if again.start == "final_repair_deadline" else "resurvey_failed"
            rule = DeadlineRule("re_repair", again.span, start, again.citation, again.status, again.note)
            due = _completion_due(rule, facts.failed_on, final_due, limit, is_holiday)
            out.append(_make(rule, due, facts.repaired_after_failure_on))
    return out


def delay_deadlines(program: Program, facts: LeakFacts, is_holiday: HolidayTest = no_holidays,
                    first_due: date | None = None) -> list[Deadline]:
    """Deadlines of the delay of repair in force: the parts order (parts route) and the delay limit.

    ``first_due`` is the first-attempt deadline when the caller already has it (else it is computed).
    """
    rule = program.delay
    assert rule is not None and facts.delay is not None
    if facts.delay.kind is DelayKind.PARTS and rule.parts is not None:
        parts = rule.parts
        if first_due is None:
            first_due = _final_due(program, facts, is_holiday)[0]
        candidates = [d for d in (facts.first_attempt_on, first_due) if d is not None]
        base = min(candidates) if parts.order.start == "first_attempt" and candidates else facts.detected_on
        order = _make(parts.order, _due(parts.order, base, is_holiday), facts.delay.parts_ordered_on)
        received = facts.delay.parts_received_on
        done = facts.repaired_on if facts.repaired_on and facts.repaired_on >= facts.delay.on else None
        note = "" if received else "due date set when the replacement is received: record its receipt"
        limit = _make(parts.repair, _due(parts.repair, received, is_holiday) if received else None, done, note)
        return [order, limit]
    return [delay_limit(program, facts)]


def delay_limit(program: Program, facts: LeakFacts) -> Deadline:
    """The date a delayed repair must be done by: the earliest of the next shutdown and the cap."""
    rule = program.delay
    assert rule is not None and facts.delay is not None
    candidates = []
    text = []
    if rule.until_shutdown:
        text.append("next scheduled shutdown")
        if facts.delay.shutdown_on:
            candidates.append(facts.delay.shutdown_on)
    if rule.cap:
        text.append(f"{rule.cap.describe()} after detection")
        candidates.append(add_span(facts.detected_on, rule.cap.amount, rule.cap.unit))
    done = facts.repaired_on if facts.repaired_on and facts.repaired_on >= facts.delay.on else None
    return Deadline("delay_limit", min(candidates) if candidates else None,
                    "delay of repair until the earliest of: " + ", ".join(text),
                    rule.citation, rule.status, done)


def outstanding(program: Program, facts: LeakFacts, is_holiday: HolidayTest = no_holidays) -> list[Deadline]:
    """Deadlines still to be met (none for closed or void leaks).

    While a leak is on delay of repair, its final repair is governed by the delay limit instead.
    """
    if facts.state in TERMINAL:
        return []
    items = [d for d in deadlines(program, facts, is_holiday) if d.outstanding()]
    if facts.state is LeakState.DELAYED:
        items = [d for d in items if d.kind not in ("final_repair", "re_repair")]
    return items
