"""Hours a leak is counted in the emission totals: from the start convention to the repair.

The rule (fieldapp.core.emissions): count from the start day to the day of the repair, without waiting
for the resurvey; a repair whose resurvey failed does not stop the count (plumebook rule, conservative;
common practice, no source); open, attempted and delayed leaks run to the as-of date; clipped to the
period; whole days × 24. Every expected figure below is counted by hand on the calendar (2026 is not
a leap year; March and May have 31 days, April and June 30).
"""

from __future__ import annotations

from datetime import date

from fieldapp.core.emissions import DURATION_RULE, LeakPeriod, duration_rule_text, stop_day, totals
from fieldapp.core.enums import ActionKind, LeakState
from fieldapp.core.lifecycle import summarize
from fieldapp.core.records import Action

D = date.fromisoformat
YEAR = (D("2026-01-01"), D("2026-12-31"))


def act(kind, on, seq=0, **extra):
    return Action(id=f"a{seq}-{kind}", leak_id="L", kind=ActionKind(kind), done_on=D(on), actor="t", seq=seq,
                  **extra)


def counted(detected, actions, period=YEAR, as_of="2026-12-02", convention="detection", previous=None):
    facts, problems = summarize(D(detected), actions)
    assert not problems
    leak = LeakPeriod("L", "S", "Site", "valve", "V-1", D(detected), 0.5, "leaker_factor",
                      D(previous) if previous else None, stop_day(facts), facts.state is LeakState.VOID)
    report = totals([leak], period[0], period[1], D(as_of), convention)
    return report.rows[0] if report.rows else None, report


def test_repaired_leak_counts_to_the_repair_before_and_after_its_resurvey():
    # detected Oct 22, repaired Nov 12: Oct 22-31 = 10 days + Nov 1-11 = 11 days = 21 days = 504 h
    row, _ = counted("2026-10-22", [act("repaired", "2026-11-12")])
    assert (row["hours"], row["stop"], row["counted_to"]) == (504.0, "repair", D("2026-11-11"))
    # a passing resurvey later changes nothing: the total does not drop after the fact
    row, _ = counted("2026-10-22", [act("repaired", "2026-11-12", 1), act("resurvey_passed", "2026-11-20", 2)])
    assert row["hours"] == 504.0
    assert row["methane_kg"] == 504.0 * 0.5


def test_repaired_then_failed_resurvey_then_repaired_again():
    # detected Mar 10, repaired Mar 20, resurvey failed Mar 25, repaired again Apr 2, resurvey passed Apr 10.
    # The failed resurvey shows the Mar 20 repair did not stop it: Mar 10-31 = 22 days + Apr 1 = 23 days = 552 h
    actions = [act("repaired", "2026-03-20", 1), act("resurvey_failed", "2026-03-25", 2),
               act("repaired", "2026-04-02", 3), act("resurvey_passed", "2026-04-10", 4)]
    row, _ = counted("2026-03-10", actions)
    assert row["hours"] == 23 * 24 == 552
    # before the second repair it runs on to the as-of day: Mar 10-31 = 22 + Apr 1-1 = 1 -> as of Apr 1: 23 days
    row, _ = counted("2026-03-10", actions[:2], as_of="2026-04-01")
    assert (row["hours"], row["stop"]) == (552.0, "as_of")


def test_delayed_leak_runs_to_the_as_of_day_then_to_its_repair():
    # detected May 1, first attempt May 3, delay of repair May 5; as of Jun 15: May 31 days + Jun 1-15 = 46 days
    actions = [act("first_attempt", "2026-05-03", 1), act("delay_of_repair", "2026-05-05", 2, reason="shutdown")]
    row, _ = counted("2026-05-01", actions, as_of="2026-06-15")
    assert (row["hours"], row["stop"]) == (46 * 24, "as_of")
    # repaired at the shutdown on Jul 1: May 31 + Jun 30 = 61 days = 1464 h
    row, _ = counted("2026-05-01", [*actions, act("repaired", "2026-07-01", 3)], as_of="2026-12-02")
    assert row["hours"] == 1464.0


def test_open_at_period_end_is_clipped_to_the_period():
    # period March; detected Mar 10, still open on Jun 1: Mar 10-31 = 22 days = 528 h
    row, _ = counted("2026-03-10", [], period=(D("2026-03-01"), D("2026-03-31")), as_of="2026-06-01")
    assert (row["hours"], row["stop"], row["counted_to"]) == (528.0, "period_end", D("2026-03-31"))
    # repaired after the period end: still clipped to the period
    row, _ = counted("2026-03-10", [act("repaired", "2026-04-05")], period=(D("2026-03-01"), D("2026-03-31")))
    assert (row["hours"], row["stop"]) == (528.0, "period_end")


def test_detected_before_the_period_counts_from_the_period_start():
    # detected Dec 20, 2025, repaired Jan 5, 2026; period 2026: Jan 1-4 = 4 days = 96 h
    row, _ = counted("2025-12-20", [act("repaired", "2026-01-05")])
    assert (row["hours"], row["counted_from"]) == (96.0, D("2026-01-01"))
    # with the previous-survey convention (survey Dec 1, 2025) it still starts at the period start
    row, _ = counted("2025-12-20", [act("repaired", "2026-01-05")], convention="previous_survey",
                     previous="2025-12-01")
    assert row["hours"] == 96.0


def test_void_leak_is_not_counted_and_the_rule_is_stated():
    row, report = counted("2026-03-10", [act("voided", "2026-03-11", reason="not a leak: steam")])
    assert row is None and report.total.hours == 0
    assert report.duration_rule == DURATION_RULE == "to_repair"
    assert "to the day of the repair" in report.rule_text and "failed" in report.rule_text
    assert "the detection day" in duration_rule_text("detection")
