"""Survey windows: the earliest and latest date of a site's next inspection.

The window is always computed from the last survey actually done, so a missed survey stays overdue
instead of rolling over silently. Example, 43 CFR 3179.303(a)(1) [text] "at least 4 months apart"
with a 7-month limit ([memory], 40 CFR 60.5397a): last survey 2026-08-31 → earliest 2026-12-31
(month-end clamped), latest 2027-03-31.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date, timedelta

from fieldapp.core.dates import add_span, next_period_bounds
from fieldapp.core.enums import SiteKind, SurveyMethod
from fieldapp.core.program import Inspection, Program


class WindowError(ValueError):
    """The window cannot be computed (no rule for this site kind, or no start date)."""


@dataclass(frozen=True, slots=True)
class PastSurvey:
    """A survey done: its local date and the number of leaks it found."""

    on: date
    leaks_found: int = 0


@dataclass(frozen=True, slots=True)
class Window:
    """When the next inspection of one kind is allowed and required."""

    method: SurveyMethod
    frequency: str
    earliest: date
    latest: date
    basis: str
    rule: str
    citation: str
    status: str

    def standing(self, as_of: date) -> str:
        """'upcoming', 'open' or 'overdue' on a date."""
        if as_of > self.latest:
            return "overdue"
        return "open" if as_of >= self.earliest else "upcoming"


def inspection_for(program: Program, kind: SiteKind, method: SurveyMethod | None) -> Inspection:
    """The program's inspection for a site kind and method (the first one listed if method is None)."""
    found = [i for i in program.inspections_for(kind) if method is None or method in i.satisfied_by()]
    if not found:
        exempt = (program.exempt_site_kinds or {}).get(kind.value)
        if exempt is not None:
            raise WindowError(f"site kind {kind.value} has no periodic survey under program {program.id}: "
                              f"{exempt.value} ({exempt.citation})")
        problem = program.kind_problem(kind)
        if problem:
            raise WindowError(problem)
        what = f" with method {method.value}" if method else ""
        raise WindowError(f"program {program.id} has no inspection for site kind {kind.value}{what}")
    return found[0]


def _rule_text(insp: Inspection, period: str | None) -> str:
    parts = [f"{insp.frequency} {'/'.join(m.value for m in insp.satisfied_by())}"]
    if period:
        parts.append(f"once per calendar {period}")
    if insp.min_spacing:
        parts.append(f"at least {insp.min_spacing.describe()} apart")
    if insp.max_spacing:
        parts.append(f"at most {insp.max_spacing.describe()} apart")
    text = ", ".join(parts)
    return f"{text} ({insp.reading})" if insp.reading else text


def next_window(program: Program, kind: SiteKind, method: SurveyMethod | None,
                past: Sequence[PastSurvey], startup: date | None = None) -> Window:
    """The next window for a site, from its startup (no survey yet) or its last survey."""
    insp = inspection_for(program, kind, method)
    if not past:
        rule = program.initial_survey
        if startup is None:
            raise WindowError("the site has neither a survey nor a startup date")
        if rule is None:
            raise WindowError(f"program {program.id} sets no initial-survey deadline")
        latest = add_span(startup, rule.span.amount, rule.span.unit)
        return Window(insp.method, insp.frequency, startup, latest, f"startup {startup}",
                      f"initial survey within {rule.span.describe()} of startup", rule.citation, rule.status)
    history = sorted(past, key=lambda p: p.on)
    last = history[-1].on
    period = insp.period
    relaxed = False
    if insp.relax_after_clean and len(history) >= insp.relax_after_clean:
        if all(p.leaks_found == 0 for p in history[-insp.relax_after_clean:]):
            period, relaxed = insp.relaxed_period, True
    earliest = last + timedelta(days=1)
    latest: date | None = None
    if insp.min_spacing:
        earliest = max(earliest, add_span(last, insp.min_spacing.amount, insp.min_spacing.unit))
    if period:
        start, end = next_period_bounds(last, period)
        latest = end
        if insp.period_sets_earliest:
            earliest = max(earliest, start)
    if insp.max_spacing:
        cap = add_span(last, insp.max_spacing.amount, insp.max_spacing.unit)
        latest = cap if latest is None else min(latest, cap)
    assert latest is not None
    latest = max(latest, earliest)
    basis = f"last survey {last}" + (f"; {insp.relax_after_clean} clean in a row" if relaxed else "")
    return Window(insp.method, insp.frequency, earliest, latest, basis, _rule_text(insp, period),
                  insp.citation, insp.status)
