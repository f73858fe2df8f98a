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
    # "at least 4 months apart": 43 CFR 3179.303(a)(1) [text]; 7-month limit: 40 CFR 60.5397a(g)(1) [memory].
    w = window("us-nsps-oooo-a", "well_site", "2026-08-31")
    assert (w.earliest, w.latest) == (D("2026-12-31"), D("2027-03-31"))
    w = window("us-nsps-oooo-a", "well_site", "2026-10-31")
    assert (w.earliest, w.latest) == (D("2027-02-28"), D("2027-05-31"))


def test_quarterly_compressor_station_at_least_60_days_apart_once_per_quarter():
    # "at least 60 days apart": 43 CFR 3179.303(a)(2) [text]; one per calendar quarter [memory].
    w = window("us-nsps-oooo-a", "compressor_station", "2026-01-05")
    assert (w.earliest, w.latest) == (D("2026-04-01"), D("2026-06-30"))
    w = window("us-nsps-oooo-a", "compressor_station", "2026-03-30")
    assert (w.earliest, w.latest) == (D("2026-05-29"), D("2026-06-30"))
    # New Year: a survey late in Q4 opens the next window in Q1 of the next year
    w = window("us-nsps-oooo-a", "compressor_station", "2026-12-20")
    assert (w.earliest, w.latest) == (D("2027-02-18"), D("2027-03-31"))


def test_initial_survey_within_90_days_of_startup():
    # 40 CFR 60.5397a(f) [memory]: initial survey within 90 days of startup.
    w = window("us-nsps-oooo-a", "well_site", startup="2026-02-01")
    assert (w.earliest, w.latest) == (D("2026-02-01"), D("2026-05-02"))


def test_oooo_b_compressor_station_has_its_own_ogi_and_avo_windows():
    # 40 CFR 60.5397b [memory]: compressor stations quarterly OGI plus monthly AVO.
    ogi = window("us-nsps-oooo-b", "compressor_station", "2026-05-10", method=SurveyMethod.OGI)
    avo = window("us-nsps-oooo-b", "compressor_station", "2026-05-10", method=SurveyMethod.AVO)
    assert (ogi.earliest, ogi.latest) == (D("2026-07-09"), D("2026-09-30"))
    assert (avo.earliest, avo.latest) == (D("2026-06-01"), D("2026-06-30"))


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
    # 40 CFR 60.5397a: OGI or Method 21 as the monitoring technique [memory].
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
