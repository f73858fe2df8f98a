"""Survey windows: spacing rules, calendar periods, month-end clamping, initial surveys, relaxations.

Sources: ../shared/reference/compliance-rules.md; [text] / [memory] as marked beside each check.
"""

from __future__ import annotations

from datetime import date, timedelta

from hypothesis import given
from hypothesis import strategies as st

from fieldapp import catalog
from fieldapp.core.dates import add_months, period_bounds
from fieldapp.core.enums import SiteKind, SurveyMethod
from fieldapp.core.windows import PastSurvey, next_window

D = date.fromisoformat


def window(program_id, kind, last=None, startup=None, method=None, past=None):
    past = past if past is not None else ([PastSurvey(D(last))] if last else [])
    return next_window(catalog.program(program_id), SiteKind(kind), method, past,
                       D(startup) if startup else None)


def test_month_arithmetic_clamps_to_month_end():
    # Issue examples: Aug 31 + 4 months = Dec 31; Oct 31 + 4 months = last day of February.
    assert add_months(D("2026-08-31"), 4) == D("2026-12-31")
    assert add_months(D("2026-10-31"), 4) == D("2027-02-28")
    assert add_months(D("2027-10-31"), 4) == D("2028-02-29")  # 2028 is a leap year


def test_semiannual_well_site_at_least_4_and_at_most_7_months_apart():
    # 40 CFR 60.5397a(g)(1) [text, eCFR 9/11/2026]: "at least 4 months apart and no more than 7 months apart".
    w = window("us-nsps-oooo-a", "well_site", "2026-08-31")
    assert (w.earliest, w.latest) == (D("2026-12-31"), D("2027-03-31"))
    w = window("us-nsps-oooo-a", "well_site", "2026-10-31")
    assert (w.earliest, w.latest) == (D("2027-02-28"), D("2027-05-31"))


def test_quarterly_compressor_station_at_least_60_days_apart_latest_three_months():
    # 40 CFR 60.5397a(g)(2) [text, eCFR 9/11/2026]: "at least quarterly ... at least 60 days apart"; no
    # calendar-quarter rule for the earliest date. Latest = 3 months after the last survey: our
    # conservative reading of "quarterly" (stated in the window's rule text).
    w = window("us-nsps-oooo-a", "compressor_station", "2026-01-05")
    assert (w.earliest, w.latest) == (D("2026-03-06"), D("2026-04-05"))
    w = window("us-nsps-oooo-a", "compressor_station", "2026-03-30")
    assert (w.earliest, w.latest) == (D("2026-05-29"), D("2026-06-30"))
    # New Year: the window runs into the next year
    w = window("us-nsps-oooo-a", "compressor_station", "2026-12-20")
    assert (w.earliest, w.latest) == (D("2027-02-18"), D("2027-03-20"))
    assert "conservative" in w.rule


def test_initial_survey_within_90_days_of_startup():
    # 40 CFR 60.5397a(f)(1) [text, eCFR 9/11/2026]: within 90 days of the startup of production.
    w = window("us-nsps-oooo-a", "well_site", startup="2026-02-01")
    assert (w.earliest, w.latest) == (D("2026-02-01"), D("2026-05-02"))


def test_oooo_b_compressor_station_has_its_own_ogi_and_avo_windows():
    # 40 CFR 60.5397b(g)(1)(v)(A)-(B) [text, eCFR 9/10/2026]: monthly AVO; quarterly OGI or Method 21 at
    # least 60 calendar days apart. Latest dates (1 and 3 months after the last) are our conservative reading.
    ogi = window("us-nsps-oooo-b", "compressor_station", "2026-05-10", method=SurveyMethod.OGI)
    avo = window("us-nsps-oooo-b", "compressor_station", "2026-05-10", method=SurveyMethod.AVO)
    assert (ogi.earliest, ogi.latest) == (D("2026-07-09"), D("2026-08-10"))
    assert (avo.earliest, avo.latest) == (D("2026-05-11"), D("2026-06-10"))


def test_method21_monthly_then_quarterly_after_two_clean_months():
    # 40 CFR 61.242-7(a),(c) [text]: monthly; quarterly after 2 successive months with no leak.
    leaky = [PastSurvey(D("2026-04-10"), 0), PastSurvey(D("2026-05-12"), 3)]
    w = window("us-method21-process-unit", "process_unit", past=leaky)
    assert (w.earliest, w.latest) == (D("2026-06-01"), D("2026-06-30"))
    clean = [PastSurvey(D("2026-04-10"), 0), PastSurvey(D("2026-05-12"), 0)]
    w = window("us-method21-process-unit", "process_unit", past=clean)
    assert (w.earliest, w.latest) == (D("2026-07-01"), D("2026-09-30"))


def test_a_missed_window_stays_overdue():
    w = window("us-nsps-oooo-a", "well_site", "2026-01-15")
    assert w.standing(D("2026-09-01")) == "overdue"  # not rolled over to a later window
    assert w.standing(D("2026-06-01")) == "open"
    assert w.standing(D("2026-03-01")) == "upcoming"


def test_method21_survey_counts_for_the_ogi_inspection_of_oooo_a():
    # 40 CFR 60.5397a(h)(4)(i) and (a)(1) [text]: OGI or Method 21 as the monitoring technique.
    w = window("us-nsps-oooo-a", "well_site", "2026-08-31", method=SurveyMethod.METHOD21)
    assert w.latest == D("2027-03-31")


def test_calendar_periods():
    assert period_bounds(D("2026-05-17"), "quarter") == (D("2026-04-01"), D("2026-06-30"))
    assert period_bounds(D("2026-12-17"), "bimonth") == (D("2026-11-01"), D("2026-12-31"))
    assert period_bounds(D("2028-02-10"), "month") == (D("2028-02-01"), D("2028-02-29"))


PAIRS = [(p, k) for p in ("us-nsps-oooo-a", "us-nsps-oooo-b", "us-method21-process-unit", "company-template")
         for k in SiteKind if catalog.program(p).inspections_for(k)]


@given(pair=st.sampled_from(PAIRS), last=st.dates(D("2020-01-01"), D("2035-12-31")),
       clean=st.lists(st.integers(0, 2), max_size=4))
def test_a_window_never_closes_before_it_opens_and_opens_after_the_last_survey(pair, last, clean):
    program_id, kind = pair
    program = catalog.program(program_id)
    for insp in program.inspections_for(kind):
        past = [PastSurvey(last - timedelta(days=31 * i), n) for i, n in enumerate(clean)] or [PastSurvey(last)]
        w = next_window(program, kind, insp.method, past)
        assert w.earliest <= w.latest
        assert w.earliest > max(p.on for p in past)
