"""Repair deadlines and the leak lifecycle, checked against published rule values.

Sources: ../shared/reference/compliance-rules.md. Each check value names its rule and status:
[text] = read in the published rule, [memory] = recalled, not checked against the current text.
"""

from __future__ import annotations

from datetime import date, datetime, timedelta
from zoneinfo import ZoneInfo

import pytest
from hypothesis import given
from hypothesis import strategies as st

from fieldapp import catalog
from fieldapp.core.dates import local_date
from fieldapp.core.enums import ActionKind, LeakState
from fieldapp.core.lifecycle import deadlines, outstanding, summarize
from fieldapp.core.records import Action

D = date.fromisoformat


def act(kind, on, seq=0, **extra):
    return Action(id=f"a{seq}-{kind}", leak_id="L", kind=ActionKind(kind), done_on=D(on), actor="t", seq=seq,
                  **extra)


def due_of(program_id, detected, actions=(), ppm=None):
    program = catalog.program(program_id)
    facts, problems = summarize(D(detected), list(actions), ppm)
    assert not problems, problems
    return {d.kind: d.due for d in deadlines(program, facts, catalog.holidays_for(program))}


def test_method21_valves_5_and_15_calendar_days():
    # 40 CFR 61.242-7(d)(1)-(2) [text]: first attempt within 5, repair within 15 calendar days of detection.
    due = due_of("us-method21-process-unit", "2026-03-02")
    assert due["first_attempt"] == D("2026-03-07")
    assert due["final_repair"] == D("2026-03-17")


def test_oooo_a_2020_first_attempt_30_then_final_30_after_first_attempt():
    # 40 CFR 60.5397a(h), 2020 amendments [memory]: 30 days to first attempt, 30 more after it.
    assert due_of("us-nsps-oooo-a", "2026-05-01")["first_attempt"] == D("2026-05-31")
    due = due_of("us-nsps-oooo-a", "2026-05-01", [act("first_attempt", "2026-05-10")])
    assert due["final_repair"] == D("2026-06-09")


def test_oooo_a_late_first_attempt_buys_no_extra_time():
    # Conservative reading (no source): final repair counts from the earlier of attempt and its due date.
    due = due_of("us-nsps-oooo-a", "2026-05-01", [act("first_attempt", "2026-06-20")])
    assert due["final_repair"] == D("2026-06-30")


def test_oooo_a_resurvey_within_30_days_of_repair():
    # 40 CFR 60.5397a(h)(4) [memory]: resurvey within 30 days of the repair.
    due = due_of("us-nsps-oooo-a", "2026-05-01", [act("repaired", "2026-05-05")])
    assert due["resurvey"] == D("2026-06-04")


def test_texas_large_leak_one_business_day_and_seven_calendar_days():
    # 30 TAC 115.782(b) [text]: above 10,000 ppmv, first attempt no later than 1 business day,
    # repair no later than 7 calendar days after detection.
    due = due_of("us-tx-hrvoc-fugitive", "2026-06-10", ppm=12_000)  # a Wednesday
    assert due == {"first_attempt": D("2026-06-11"), "final_repair": D("2026-06-17")}
    # other leaks: 5 and 15 calendar days [text]
    assert due_of("us-tx-hrvoc-fugitive", "2026-06-10", ppm=800) == {
        "first_attempt": D("2026-06-15"), "final_repair": D("2026-06-25")}


def test_texas_business_day_skips_weekend_and_holidays():
    # Holidays per the 'holidays' package (US, subdivision TX). Fact checks, common knowledge:
    # 2026-07-04 is a Saturday, observed Friday 2026-07-03 (5 U.S.C. 6103 [memory]).
    assert due_of("us-tx-hrvoc-fugitive", "2026-07-02", ppm=20_000)["first_attempt"] == D("2026-07-06")
    # New Year: detected Thursday 2026-12-31; 2027-01-01 is New Year's Day (a Friday), then the weekend.
    assert due_of("us-tx-hrvoc-fugitive", "2026-12-31", ppm=20_000)["first_attempt"] == D("2027-01-04")
    # A Friday detection: next business day is Monday.
    assert due_of("us-tx-hrvoc-fugitive", "2026-10-16", ppm=20_000)["first_attempt"] == D("2026-10-19")


def test_calendar_day_deadline_over_month_end_and_leap_day():
    # Day counting: detection day = day 0 (common practice, no source).
    assert due_of("us-method21-process-unit", "2028-02-20")["first_attempt"] == D("2028-02-25")
    assert due_of("us-method21-process-unit", "2028-02-20")["final_repair"] == D("2028-03-06")  # 2028 is leap
    assert due_of("us-method21-process-unit", "2027-02-20")["final_repair"] == D("2027-03-07")


def test_detection_date_is_the_sites_local_date_across_dst_changes():
    # America/Denver: DST starts 2026-03-08 02:00 local, ends 2026-11-01 02:00 local (US rule, [memory]).
    moment = datetime(2026, 3, 8, 8, 30, tzinfo=ZoneInfo("UTC"))  # 01:30 MST, before the jump
    assert local_date(moment, "America/Denver") == D("2026-03-08")
    late = datetime(2026, 11, 2, 6, 30, tzinfo=ZoneInfo("UTC"))  # 23:30 MST on Nov 1
    assert local_date(late, "America/Denver") == D("2026-11-01")
    assert due_of("us-method21-process-unit", "2026-11-01")["first_attempt"] == D("2026-11-06")


def test_delay_limit_is_earliest_of_shutdown_and_two_year_cap():
    # 40 CFR 60.5397a(h) delay of repair [memory]: next scheduled shutdown or 2 years, whichever is earliest.
    delay = act("delay_of_repair", "2026-05-03", 1, reason="needs blowdown", shutdown_on=D("2026-09-01"))
    assert due_of("us-nsps-oooo-a", "2026-05-01", [delay])["delay_limit"] == D("2026-09-01")
    far = act("delay_of_repair", "2026-05-03", 1, reason="needs blowdown", shutdown_on=D("2029-01-01"))
    assert due_of("us-nsps-oooo-a", "2026-05-01", [far])["delay_limit"] == D("2028-05-01")


def test_method21_delay_lasts_until_the_next_process_unit_shutdown():
    # 40 CFR 61.242-10 [memory]: delay until the next process unit shutdown, no cap.
    delay = act("delay_of_repair", "2026-05-03", 1, reason="needs unit shutdown", shutdown_on=D("2031-04-01"))
    assert due_of("us-method21-process-unit", "2026-05-01", [delay])["delay_limit"] == D("2031-04-01")


def test_failed_resurvey_reopens_the_leak_with_a_re_repair_deadline():
    # Company template re-repair 15 days, as 43 CFR 3179.304 "repair again within 15 calendar days" [text].
    actions = [act("repaired", "2026-05-04", 0), act("resurvey_failed", "2026-05-10", 1)]
    facts, _ = summarize(D("2026-05-01"), actions)
    assert facts.state is LeakState.OPEN
    due = due_of("company-template", "2026-05-01", actions)
    assert due["re_repair"] == D("2026-05-25")
    program = catalog.program("company-template")
    assert [d.kind for d in outstanding(program, facts)] == ["re_repair"]


def test_state_machine_walks_to_closed():
    actions = [act("first_attempt", "2026-05-02", 0), act("repaired", "2026-05-04", 1),
               act("resurvey_passed", "2026-05-20", 2)]
    states = [summarize(D("2026-05-01"), actions[:n])[0].state for n in range(4)]
    assert states == [LeakState.OPEN, LeakState.ATTEMPTED, LeakState.REPAIRED, LeakState.CLOSED]


def test_backdated_action_is_ordered_by_when_it_happened():
    # entered second (seq 1) but happened first
    actions = [act("repaired", "2026-05-06", 0), act("first_attempt", "2026-05-03", 1)]
    facts, problems = summarize(D("2026-05-01"), actions)
    assert not problems
    assert facts.first_attempt_on == D("2026-05-03") and facts.state is LeakState.REPAIRED


@pytest.mark.parametrize("actions, field, words", [
    ([act("resurvey_passed", "2026-05-04")], "kind", "needs a repair first"),
    ([act("first_attempt", "2026-04-30")], "done_on", "before the leak was detected"),
    ([act("repaired", "2026-05-02", 0), act("resurvey_passed", "2026-05-03", 1), act("repaired", "2026-05-04", 2)],
     "kind", "already closed"),
    ([act("voided", "2026-05-02")], "reason", "reason is required"),
])
def test_impossible_sequences_are_refused_with_a_message(actions, field, words):
    _, problems = summarize(D("2026-05-01"), actions)
    assert problems and problems[0].field == field and words in problems[0].message


def test_closed_and_void_leaks_have_nothing_outstanding():
    program = catalog.program("us-nsps-oooo-a")
    closed, _ = summarize(D("2026-05-01"), [act("repaired", "2026-05-02", 0), act("resurvey_passed", "2026-05-09", 1)])
    void, _ = summarize(D("2026-05-01"), [act("voided", "2026-05-02", reason="duplicate")])
    assert outstanding(program, closed) == [] and outstanding(program, void) == []


PROGRAMS = ["us-nsps-oooo-a", "us-nsps-oooo-b", "us-method21-process-unit", "us-tx-hrvoc-fugitive",
            "company-template"]
days = st.dates(min_value=D("2024-01-01"), max_value=D("2030-12-31"))


@given(program_id=st.sampled_from(PROGRAMS), detected=days, ppm=st.none() | st.floats(0, 100_000),
       offsets=st.lists(st.integers(0, 60), min_size=0, max_size=3))
def test_no_deadline_precedes_detection(program_id, detected, ppm, offsets):
    kinds = ["first_attempt", "repaired", "resurvey_failed"]
    actions = [act(k, (detected + timedelta(days=o)).isoformat(), i)
               for i, (k, o) in enumerate(zip(kinds, sorted(offsets), strict=False))]
    facts, problems = summarize(detected, actions, ppm)
    if problems:
        return
    program = catalog.program(program_id)
    for d in deadlines(program, facts, catalog.holidays_for(program)):
        assert d.due is None or d.due >= detected


@given(program_id=st.sampled_from(PROGRAMS), detected=days, attempt=st.integers(0, 90), repair=st.integers(0, 90))
def test_adding_an_action_never_moves_first_attempt_or_final_repair_later(program_id, detected, attempt, repair):
    program = catalog.program(program_id)
    holidays = catalog.holidays_for(program)
    steps = [act("first_attempt", (detected + timedelta(days=attempt)).isoformat(), 0),
             act("repaired", (detected + timedelta(days=attempt + repair)).isoformat(), 1)]
    previous = None
    for n in range(len(steps) + 1):
        facts, problems = summarize(detected, steps[:n])
        assert not problems
        current = {d.kind: d.due for d in deadlines(program, facts, holidays)
                   if d.kind in ("first_attempt", "final_repair")}
        if previous:
            for kind, due in current.items():
                assert due <= previous[kind], (kind, due, previous[kind])
        previous = current
