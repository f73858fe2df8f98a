"""Emission totals over a reporting period: hours leaked × estimated rate, per leak, site and type.

Duration conventions (a visible, selectable assumption; ../shared/reference/emission-factors.md):

- ``detection``: the leak is taken to start at its detection date;
- ``previous_survey``: at the previous survey of the site (the detection date if there was none);
- ``period_start``: at the start of the reporting period.

A leak is taken to stop on the day of its repair, whether or not its resurvey has happened yet
(``stop_day``). A failed resurvey shows the repair did not stop the leak, so that repair does not
count: the leak runs on from it to the next repair (plumebook rule, conservative; common practice,
no source). A leak that is open, attempted or on delay of repair runs to the as-of date (or the period
end). Void leaks emit nothing. Hours are whole days × 24, counted from the start date (inclusive) to
the stop date (exclusive), clipped to the period.

Worked example: detected Oct 22, repaired Nov 12: 21 days = 504 h, whatever the resurvey says later,
unless it fails; then the hours run on to the next repair.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable
from dataclasses import dataclass, field
from datetime import date

from fieldapp.core.enums import LeakState
from fieldapp.core.lifecycle import LeakFacts

CONVENTIONS = ("detection", "previous_survey", "period_start")
DURATION_RULE = "to_repair"
START_TEXT = {"detection": "the detection day", "previous_survey": "the site's previous survey (else detection)",
              "period_start": "the start of the period"}


def duration_rule_text(convention: str) -> str:
    """The counting rule in words, for text output, JSON, CSV and the period summary."""
    return (f"hours counted from {START_TEXT[convention]} to the day of the repair (the resurvey is not waited "
            "for); a repair whose resurvey failed does not stop the count, which runs on to the next repair; "
            "open, attempted and delayed leaks run to the as-of date; clipped to the period; whole days x 24")


def stop_day(facts: LeakFacts) -> date | None:
    """The day a leak is taken to stop emitting: its last repair, unless a failed resurvey came after it."""
    if facts.state in (LeakState.REPAIRED, LeakState.CLOSED):
        return facts.repaired_on
    return None


@dataclass(frozen=True, slots=True)
class LeakPeriod:
    """What the totals need about one leak."""

    leak_id: str
    site_id: str
    site_name: str
    component_type: str
    tag: str
    detected_on: date
    methane_kg_per_h: float
    basis: str
    previous_survey_on: date | None = None
    stopped_on: date | None = None
    void: bool = False


@dataclass(slots=True)
class Totals:
    """Methane (kg) and hours, summed."""

    leaks: int = 0
    hours: float = 0.0
    methane_kg: float = 0.0


@dataclass
class EmissionReport:
    """Per-leak rows and totals by site, by component type, and overall."""

    start: date
    end: date
    convention: str
    duration_rule: str = DURATION_RULE
    rule_text: str = ""
    rows: list[dict] = field(default_factory=list)
    by_site: dict[str, Totals] = field(default_factory=dict)
    by_type: dict[str, Totals] = field(default_factory=dict)
    total: Totals = field(default_factory=Totals)


def totals(leaks: Iterable[LeakPeriod], start: date, end: date, as_of: date, convention: str) -> EmissionReport:
    """Methane per leak inside [start, end] (both inclusive dates), stopping at ``as_of`` for open leaks."""
    if convention not in CONVENTIONS:
        raise ValueError(f"convention {convention!r} is not allowed; allowed: {', '.join(CONVENTIONS)}")
    if end < start:
        raise ValueError("the period ends before it starts")
    p0, p1 = start.toordinal(), end.toordinal() + 1
    open_stop = min(as_of.toordinal() + 1, p1)
    report = EmissionReport(start, end, convention, DURATION_RULE, duration_rule_text(convention))
    days_of_period = [date.fromordinal(o) for o in range(p0, p1)]  # counted days always fall inside
    by_site: dict[str, Totals] = defaultdict(Totals)
    by_type: dict[str, Totals] = defaultdict(Totals)
    total = report.total
    rows = report.rows
    from_detection, from_previous = convention == "detection", convention == "previous_survey"
    for leak in leaks:
        if leak.void:
            continue
        if from_detection:
            first = leak.detected_on.toordinal()
        elif from_previous:
            first = (leak.previous_survey_on or leak.detected_on).toordinal()
        else:
            first = p0
        stopped = leak.stopped_on
        last = stopped.toordinal() if stopped else open_stop
        lo = first if first > p0 else p0
        hi = last if last < p1 else p1
        days = hi - lo
        if days <= 0:
            continue
        hours = days * 24.0
        kg = hours * leak.methane_kg_per_h
        rows.append({"leak_id": leak.leak_id, "site": leak.site_name, "tag": leak.tag,
                     "component_type": leak.component_type, "basis": leak.basis,
                     "counted_from": days_of_period[lo - p0], "counted_to": days_of_period[hi - 1 - p0],
                     "stop": "repair" if stopped and last <= p1 else "period_end" if hi == p1 else "as_of",
                     "hours": hours, "methane_kg_per_h": leak.methane_kg_per_h, "methane_kg": kg,
                     "duration_rule": DURATION_RULE})
        bucket = by_site[leak.site_name]
        bucket.leaks += 1
        bucket.hours += hours
        bucket.methane_kg += kg
        bucket = by_type[leak.component_type]
        bucket.leaks += 1
        bucket.hours += hours
        bucket.methane_kg += kg
        total.leaks += 1
        total.hours += hours
        total.methane_kg += kg
    report.by_site, report.by_type = dict(by_site), dict(by_type)
    return report
