"""Rule fidelity: deadlines and windows checked paragraph by paragraph against the rule text.

Sources (verbatim copies, see ../helper-notes/rule-quotes.md):
- 40 CFR 60 subpart OOOOa, eCFR print "up to date as of 9/11/2026" -> cited "[text, eCFR 9/11/2026]".
- 40 CFR 60 subpart OOOOb, eCFR print "up to date as of 9/10/2026" -> cited "[text, eCFR 9/10/2026]".
- 30 TAC 115.782, copy "current through Reg. 49, No. 44; November 1, 2024"
  -> cited "[text, 30 TAC 115.782 copy current through Nov 1 2024]".
Every date below is worked by hand from the quoted day counts.
"""

from __future__ import annotations

import json
from datetime import date, timedelta

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fieldapp import catalog
from fieldapp.cli import main
from fieldapp.core.enums import ActionKind, DelayKind, SiteKind, SurveyMethod
from fieldapp.core.fields import ValidationError
from fieldapp.core.lifecycle import deadlines, summarize
from fieldapp.core.program import cited_values
from fieldapp.core.records import Action
from fieldapp.core.windows import PastSurvey, WindowError, next_window
from fieldapp.store import ops

D = date.fromisoformat
OOOOA, OOOOB, TEXAS = "us-nsps-oooo-a", "us-nsps-oooo-b", "us-tx-hrvoc-fugitive"


def act(kind, on, seq=0, **extra):
    return Action(id=f"a{seq}-{kind}", leak_id="L", kind=ActionKind(kind), done_on=D(on), actor="t", seq=seq,
                  **extra)


def due_of(program_id, detected, actions=(), ppm=None, method=None):
    program = catalog.program(program_id)
    facts, problems = summarize(D(detected), list(actions), ppm, method)
    assert not problems, problems
    return {d.kind: d.due for d in deadlines(program, facts, catalog.holidays_for(program))}


def cli_json(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    assert code == 0, err
    return json.loads(out)


# --- finding 1: OOOOb, leaks found by AVO ----------------------------------------------------------

def test_60_5397b_h_1_i_and_h_2_avo_found_leak_gets_15_then_15_days(capsys):
    # 60.5397b(h)(1)(i): first attempt "no later than 15 calendar days after detection of fugitive emissions
    # that were identified using AVO"; (h)(2): repair "no later than 15 calendar days after the first attempt
    # at repair as required in paragraph (h)(1)(i)" [text, eCFR 9/10/2026].
    # Detected 2027-01-10: first attempt due 01-25; no attempt yet, so the repair counts from 01-25 -> 02-09.
    out = cli_json(capsys, "rules", "deadlines", "--program", OOOOB, "--detected", "2027-01-10",
                   "--method", "avo", "--json")
    due = {i["kind"]: i["due"] for i in out["items"]}
    assert out["method"] == "avo"
    assert due == {"first_attempt": "2027-01-25", "final_repair": "2027-02-09"}
    # With a first attempt on 01-12 the 15 days run from it: 01-27.
    assert due_of(OOOOB, "2027-01-10", [act("first_attempt", "2027-01-12")],
                  method=SurveyMethod.AVO)["final_repair"] == D("2027-01-27")


def test_60_5397b_h_1_ii_ogi_and_method21_leaks_keep_30_then_30_days(capsys):
    # 60.5397b(h)(1)(ii) and (h)(2): 30 calendar days after detection, then 30 after the first attempt
    # [text, eCFR 9/10/2026]. Detected 2027-01-10 -> 02-09, then 03-11.
    for method in ("ogi", "method21"):
        out = cli_json(capsys, "rules", "deadlines", "--program", OOOOB, "--detected", "2027-01-10",
                       "--method", method, "--json")
        due = {i["kind"]: i["due"] for i in out["items"]}
        assert due == {"first_attempt": "2027-02-09", "final_repair": "2027-03-11"}, method


# --- finding 2: resurvey is part of the repair -----------------------------------------------------

def test_60_5397a_h_4_resurvey_due_by_the_final_repair_deadline(capsys):
    # 60.5397a(h)(2): repair "no later than 30 calendar days after the first attempt"; (h)(4): "Each
    # identified source of fugitive emissions must be resurveyed to complete repair" [text, eCFR 9/11/2026].
    # Detected 2027-01-10, first attempt 01-20, repaired 02-15: final repair due 02-19, so is the resurvey
    # (not 30 days after the repair, 03-17).
    out = cli_json(capsys, "rules", "deadlines", "--program", OOOOA, "--detected", "2027-01-10",
                   "--first-attempt", "2027-01-20", "--repaired", "2027-02-15", "--json")
    due = {i["kind"]: i["due"] for i in out["items"]}
    assert due["final_repair"] == "2027-02-19"
    assert due["resurvey"] == "2027-02-19"


def test_60_5397b_h_4_failed_resurvey_keeps_the_final_repair_deadline():
    # 60.5397b(h)(2) and (h)(4) [text, eCFR 9/10/2026]: the repair is complete only after a passing resurvey;
    # no separate re-repair count, so a failed resurvey leaves the final-repair deadline (our reading).
    due = due_of(OOOOB, "2027-01-10", [act("first_attempt", "2027-01-20"), act("repaired", "2027-02-01", 1),
                                       act("resurvey_failed", "2027-02-03", 2)], method=SurveyMethod.OGI)
    assert due["final_repair"] == D("2027-02-19")
    assert due["re_repair"] == D("2027-02-19")


def test_60_5397b_h_4_v_avo_found_leak_may_be_resurveyed_by_avo_ogi_found_may_not(store):
    # 60.5397b(h)(4)(i): resurvey "using either Method 21 ... or OGI, except as specified in paragraph
    # (h)(4)(v)"; (h)(4)(v): "For fugitive emissions identified using AVO detection methods, the operator may
    # resurvey using those same methods, Method 21 ..., or OGI" [text, eCFR 9/10/2026].
    site = ops.add_site(store, {"name": "Pad B", "kind": "multi_wellhead", "program_id": OOOOB,
                                "timezone": "America/Denver", "startup_date": "2026-01-10",
                                "methane_mole_fraction": 0.8})
    leaks = {}
    for method in ("ogi", "avo"):
        values = {"site_id": site.id, "method": method, "started_at": "2026-11-20T08:00:00-07:00",
                  "operator": "Tester", "qualification": "trained", "camera_make": "Make", "camera_model": "M",
                  "camera_check": "passed", "ambient_temp_c": "5", "sky": "clear", "wind_max_m_s": "3"}
        survey, _ = ops.start_survey(store, values)
        leak = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-20T09:00:00-07:00"},
                            new_component={"tag": f"B-{method}", "type": "connector", "service": "gas"})
        assert leak.detection_method is SurveyMethod(method)  # kept from the survey
        for seq, kind in enumerate(("first_attempt", "repaired")):
            ops.add_action(store, {"leak_id": leak.id, "kind": kind, "done_on": "2026-11-21", "actor": "T",
                                   "seq": seq})
        leaks[method] = leak
    with pytest.raises(ValidationError) as err:
        ops.add_action(store, {"leak_id": leaks["ogi"].id, "kind": "resurvey_passed", "done_on": "2026-11-22",
                               "actor": "T", "method": "avo"})
    assert err.value.problems[0].field == "method"
    assert "ogi, method21" in err.value.problems[0].message
    passed = ops.add_action(store, {"leak_id": leaks["avo"].id, "kind": "resurvey_passed",
                                    "done_on": "2026-11-22", "actor": "T", "method": "avo"})
    assert passed.method is SurveyMethod.AVO


# --- finding 3: delay of repair, the parts route, photo or tag ---------------------------------------

def test_60_5397a_h_3_ii_c_parts_order_10_days_after_first_attempt_repair_30_after_receipt(capsys):
    # 60.5397a(h)(3)(ii)(C): "The required replacement must be ordered no later than 10 calendar days after the
    # first attempt at repair. The repair must be completed ... no later than 30 calendar days after receipt of
    # the replacement component" [text, eCFR 9/11/2026].
    # First attempt 2027-01-20 -> order due 01-30; received 02-20 -> repair due 03-22 (2027 is no leap year).
    out = cli_json(capsys, "rules", "deadlines", "--program", OOOOA, "--detected", "2027-01-10",
                   "--first-attempt", "2027-01-20", "--delayed", "2027-01-25", "--parts-ordered", "2027-01-25",
                   "--parts-received", "2027-02-20", "--json")
    due = {i["kind"]: i["due"] for i in out["items"]}
    assert due["parts_order"] == "2027-01-30"
    assert due["delay_limit"] == "2027-03-22"
    done = {i["kind"]: i["done_on"] for i in out["items"]}
    assert done["parts_order"] == "2027-01-25"


def test_parts_route_refused_by_the_calculator_under_a_program_without_one(capsys):
    # 40 CFR 61.242-10 has no parts route in the shipped program (status memory); the calculator must say so,
    # as ops.add_action does, rather than print a delay limit with no date.
    code = main(["rules", "deadlines", "--program", "us-method21-process-unit", "--detected", "2027-01-10",
                 "--delayed", "2027-01-12", "--parts-ordered", "2027-01-12"])
    _out, err = capsys.readouterr()
    assert code != 0
    assert "parts-ordered" in err and "allowed: --shutdown" in err


def test_60_5397b_h_3_ii_c_limit_waits_for_receipt_and_resurvey_follows_the_delay_limit():
    # 60.5397b(h)(3)(ii)(C) [text, eCFR 9/10/2026]: the 30 days run from receipt, so no limit before it.
    ordered = act("delay_of_repair", "2027-01-25", 1, reason="custom fabrication", delay_kind=DelayKind.PARTS,
                  parts_ordered_on=D("2027-01-25"))
    first = act("first_attempt", "2027-01-20")
    due = due_of(OOOOB, "2027-01-10", [first, ordered], method=SurveyMethod.OGI)
    assert due["parts_order"] == D("2027-01-30")
    assert due["delay_limit"] is None
    received = act("delay_of_repair", "2027-03-01", 2, reason="part received", delay_kind=DelayKind.PARTS,
                   parts_received_on=D("2027-03-01"))
    repaired = act("repaired", "2027-03-10", 3)
    due = due_of(OOOOB, "2027-01-10", [first, ordered, received, repaired], method=SurveyMethod.OGI)
    # 2027-03-01 + 30 days = 03-31; (h)(4): the resurvey completes the repair, so it is due by the same date.
    assert due["delay_limit"] == D("2027-03-31")
    assert due["resurvey"] == D("2027-03-31")


def test_60_5397a_h_3_i_shutdown_route_earliest_of_shutdown_and_two_years():
    # 60.5397a(h)(3)(i): "during the next scheduled compressor station shutdown for maintenance, scheduled well
    # shutdown, scheduled well shut-in, after a scheduled vent blowdown, or within 2 years of detecting the
    # fugitive emissions, whichever is earliest" [text, eCFR 9/11/2026].
    delay = act("delay_of_repair", "2027-01-25", 1, reason="requires a well shutdown", shutdown_on=D("2027-06-01"))
    due = due_of(OOOOA, "2027-01-10", [act("first_attempt", "2027-01-20"), delay])
    assert due["delay_limit"] == D("2027-06-01")
    late = act("delay_of_repair", "2027-01-25", 1, reason="requires a well shutdown", shutdown_on=D("2030-01-01"))
    assert due_of(OOOOA, "2027-01-10", [act("first_attempt", "2027-01-20"), late])["delay_limit"] == D("2029-01-10")


def _ogi_survey(store, site_id, day="2026-11-20"):
    values = {"site_id": site_id, "method": "ogi", "started_at": f"{day}T08:00:00-07:00", "operator": "Tester",
              "qualification": "trained", "camera_make": "Make", "camera_model": "Model", "camera_check": "passed",
              "ambient_temp_c": "5", "sky": "clear", "wind_max_m_s": "3",
              "compressor_modes": "C-1 operating"}  # 60.5420a(c)(15)(vii)(F) at stations
    return ops.start_survey(store, values)[0]


def test_60_5397b_h_4_ii_photo_or_tag_warning_for_a_leak_left_unrepaired(store):
    # 60.5397b(h)(4)(ii): "For each repair that cannot be made during the monitoring survey ... a digital
    # photograph must be taken of that component, or the component must be tagged" [text, eCFR 9/10/2026].
    site = ops.add_site(store, {"name": "Station C", "kind": "compressor_station", "program_id": OOOOB,
                                "timezone": "America/Denver", "startup_date": "2026-01-10",
                                "methane_mole_fraction": 0.8})
    survey = _ogi_survey(store, site.id)
    bare = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-20T09:00:00-07:00"},
                        new_component={"tag": "C-1", "type": "valve", "service": "gas"})
    ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-20T09:10:00-07:00", "tag_attached": True},
                 new_component={"tag": "C-2", "type": "valve", "service": "gas"})
    fixed = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-20T09:20:00-07:00"},
                         new_component={"tag": "C-3", "type": "valve", "service": "gas"})
    for seq, kind in enumerate(("first_attempt", "repaired")):
        ops.add_action(store, {"leak_id": fixed.id, "kind": kind, "done_on": "2026-11-20", "actor": "T", "seq": seq})
    ops.end_survey(store, survey.id, {"ended_at": "2026-11-20T12:00:00-07:00", "no_deviations": True})
    warnings = ops.survey_record_warnings(store, survey.id)
    assert len(warnings) == 1, warnings
    assert "C-1" in warnings[0] and "60.5397b(h)(4)(ii)" in warnings[0]
    # A tag attached later clears it.
    ops.edit(store, "leaks", bare.id, {"tag_attached": True})
    assert ops.survey_record_warnings(store, survey.id) == []


# --- finding 4: quarterly surveys ------------------------------------------------------------------

def test_60_5397a_g_2_quarterly_earliest_is_60_days_after_the_last_survey(capsys):
    # 60.5397a(g)(2): "at least quarterly after the initial survey. Consecutive quarterly monitoring surveys must
    # be conducted at least 60 days apart" [text, eCFR 9/11/2026]. No calendar-quarter floor:
    # last 2027-01-15 -> earliest 2027-03-16 (not 04-01).
    out = cli_json(capsys, "rules", "window", "--program", OOOOA, "--site-kind", "compressor_station",
                   "--last", "2027-01-15", "--json")
    assert out["earliest"] == "2027-03-16"
    # The latest date is the shipped reading of "quarterly": within 3 months of the last survey, said in the rule.
    assert out["latest"] == "2027-04-15"
    assert "3 months" in out["rule"]


def test_60_5397b_g_1_iv_f_quarterly_ogi_60_calendar_days_apart():
    # 60.5397b(g)(1)(iv)(F): "at least quarterly using OGI or Method 21 ... at least 60 calendar days apart"
    # [text, eCFR 9/10/2026]. Last 2027-01-15 -> earliest 2027-03-16.
    w = next_window(catalog.program(OOOOB), SiteKind.WELL_SITE_MAJOR_EQUIPMENT, SurveyMethod.OGI,
                    [PastSurvey(D("2027-01-15"))])
    assert w.earliest == D("2027-03-16")


# --- finding 5: OOOOb site kinds -------------------------------------------------------------------

def test_60_5397b_g_1_generic_well_site_refused_with_the_allowed_kinds(store, capsys):
    # 60.5397b(g)(1)(i)-(v) set separate schedules for single wellhead only, small, multi-wellhead only, major
    # production and processing equipment, and compressor station sites [text, eCFR 9/10/2026].
    with pytest.raises(ValidationError) as err:
        ops.add_site(store, {"name": "Pad W", "kind": "well_site", "program_id": OOOOB,
                             "timezone": "America/Denver", "startup_date": "2026-01-10",
                                "methane_mole_fraction": 0.8})
    problem = err.value.problems[0]
    assert problem.field == "kind"
    for kind in ("single_wellhead", "small_well_site", "multi_wellhead", "well_site_major_equipment",
                 "compressor_station"):
        assert kind in problem.message
    assert store.rows("SELECT id FROM sites") == []
    with pytest.raises(WindowError, match="allowed: .*multi_wellhead"):
        next_window(catalog.program(OOOOB), SiteKind.WELL_SITE, None, [PastSurvey(D("2027-01-15"))])


def test_60_5397a_g_5_wellhead_only_site_is_accepted_with_no_periodic_survey(store):
    # 60.5397a(g)(5): "You are no longer required to comply with the requirements of paragraph (g)(1) ... when
    # the owner or operator removes all major production and processing equipment ... such that the well site
    # becomes a wellhead only well site" [text, eCFR 9/11/2026].
    ops.add_site(store, {"name": "Pad H", "kind": "single_wellhead", "program_id": OOOOA,
                         "timezone": "America/Denver", "startup_date": "2026-01-10", "methane_mole_fraction": 0.8})
    with pytest.raises(WindowError, match=r"no periodic survey .*60\.5397a\(g\)\(5\)"):
        next_window(catalog.program(OOOOA), SiteKind.SINGLE_WELLHEAD, None, [PastSurvey(D("2027-01-15"))])


def test_60_5397b_g_1_iv_major_equipment_gets_quarterly_ogi_and_bimonthly_avo():
    # 60.5397b(g)(1)(iv)(E) bimonthly AVO, (F) quarterly OGI or Method 21 [text, eCFR 9/10/2026].
    program = catalog.program(OOOOB)
    freqs = {(i.method, i.frequency) for i in program.inspections_for(SiteKind.WELL_SITE_MAJOR_EQUIPMENT)}
    assert freqs == {(SurveyMethod.OGI, "quarterly"), (SurveyMethod.AVO, "bimonthly")}


# --- finding 6: Texas HRVOC ------------------------------------------------------------------------

def test_30_tac_115_782_b_3_ogi_found_leak_1_business_day_7_calendar_days(capsys):
    # 30 TAC 115.782(b)(3): a leak "detected using the alternative work practice in § 115.358" gets a first
    # attempt "no later than one business day after" and repair "no later than seven calendar days after the
    # leak is detected" [text, 30 TAC 115.782 copy current through Nov 1 2024].
    # Detected Friday 2027-01-08 -> first attempt Monday 01-11; repair 01-15.
    out = cli_json(capsys, "rules", "deadlines", "--program", TEXAS, "--detected", "2027-01-08",
                   "--method", "ogi", "--json")
    due = {i["kind"]: i["due"] for i in out["items"]}
    assert due == {"first_attempt": "2027-01-11", "final_repair": "2027-01-15"}


@pytest.mark.parametrize("ppm", [10_000, 2_500])
def test_30_tac_115_782_b_3_method21_at_most_10000_ppmv_moves_to_b_2(ppm):
    # 30 TAC 115.782(b)(3): "demonstrates the leak concentration is 10,000 ppmv or less, then the time to repair
    # is as specified in paragraph (2)"; (b)(2): 5 and 15 calendar days
    # [text, 30 TAC 115.782 copy current through Nov 1 2024]. Detected 2027-01-08 -> 01-13 and 01-23.
    # 10,000 exactly is "or less" (a bug fixed here: it used to reach the (b)(1) tier).
    due = due_of(TEXAS, "2027-01-08", ppm=ppm, method=SurveyMethod.OGI)
    assert due == {"first_attempt": D("2027-01-13"), "final_repair": D("2027-01-23")}
    above = due_of(TEXAS, "2027-01-08", ppm=12_000, method=SurveyMethod.OGI)
    assert above == {"first_attempt": D("2027-01-11"), "final_repair": D("2027-01-15")}


# --- finding 7: survey records ---------------------------------------------------------------------

def test_60_5420a_c_15_vii_ending_a_survey_needs_end_time_and_deviations_statement(store):
    # 60.5420a(c)(15)(vii): the survey record holds the date, "beginning and end time" of the survey, and
    # deviations from the monitoring plan or a statement that there were none [text, eCFR 9/11/2026].
    site = ops.add_site(store, {"name": "Station A", "kind": "compressor_station", "program_id": OOOOA,
                                "timezone": "America/Denver", "startup_date": "2026-01-10",
                                "methane_mole_fraction": 0.8})
    survey = _ogi_survey(store, site.id)
    with pytest.raises(ValidationError) as err:
        ops.end_survey(store, survey.id, {"no_deviations": True})
    assert [p.field for p in err.value.problems] == ["ended_at"]
    with pytest.raises(ValidationError) as err:
        ops.end_survey(store, survey.id, {"ended_at": "2026-11-20T12:00:00-07:00"})
    assert [p.field for p in err.value.problems] == ["deviations"]
    assert store.get("surveys", survey.id)["ended_at"] is None  # nothing half-written
    ops.end_survey(store, survey.id, {"ended_at": "2026-11-20T12:00:00-07:00", "no_deviations": True})
    assert store.get("surveys", survey.id)["ended_at"] is not None


def test_60_5420a_c_15_vii_start_needs_begin_time_operator_and_conditions(store):
    # 60.5420a(c)(15)(vii) [text, eCFR 9/11/2026]: operator, ambient temperature, sky, maximum wind speed.
    site = ops.add_site(store, {"name": "Station A", "kind": "compressor_station", "program_id": OOOOA,
                                "timezone": "America/Denver", "startup_date": "2026-01-10",
                                "methane_mole_fraction": 0.8})
    with pytest.raises(ValidationError) as err:
        ops.start_survey(store, {"site_id": site.id, "method": "ogi", "started_at": "2026-11-20T08:00:00-07:00",
                                 "operator": "Tester", "camera_make": "Make", "camera_model": "Model",
                                 "camera_check": "passed"})
    fields = {p.field for p in err.value.problems}
    assert {"ambient_temp_c", "sky", "wind_max_m_s", "qualification"} <= fields


# --- properties ----------------------------------------------------------------------------------

days = st.integers(min_value=0, max_value=40)
start_day = st.dates(min_value=D("2026-01-01"), max_value=D("2029-12-31"))


@settings(max_examples=60, deadline=None)
@given(start_day, days, days, days, st.booleans(), st.sampled_from([OOOOA, OOOOB]),
       st.sampled_from(list(SurveyMethod)))
def test_60_5397a_b_h_4_no_completion_deadline_after_final_repair_without_delay(
        detected, to_first, to_repair, to_fail, failed, program_id, method):
    # 60.5397a(h)(4) [text, eCFR 9/11/2026], 60.5397b(h)(4) [text, eCFR 9/10/2026]: resurveyed "to complete
    # repair", so with no delay in force nothing that completes the repair is due after the final repair.
    first = detected + timedelta(days=to_first)
    repaired = first + timedelta(days=to_repair)
    actions = [act("first_attempt", first.isoformat()), act("repaired", repaired.isoformat(), 1)]
    if failed:
        actions.append(act("resurvey_failed", (repaired + timedelta(days=to_fail)).isoformat(), 2))
    program = catalog.program(program_id)
    facts, problems = summarize(detected, actions, None, method)
    assert not problems
    due = {d.kind: d.due for d in deadlines(program, facts, catalog.holidays_for(program))}
    for kind in ("resurvey", "re_repair"):
        if due.get(kind) is not None:
            assert due[kind] <= due["final_repair"], (kind, due)
    assert "resurvey" in due


@settings(max_examples=60, deadline=None)
@given(start_day, st.one_of(st.none(), st.integers(min_value=0, max_value=60)))
def test_60_5397b_h_1_i_h_2_avo_found_leak_never_more_than_15_plus_15(detected, to_first):
    # 60.5397b(h)(1)(i), (h)(2) [text, eCFR 9/10/2026]: final repair due <= detection + 30, however late the
    # first attempt comes.
    actions = [] if to_first is None else [act("first_attempt", (detected + timedelta(days=to_first)).isoformat())]
    due = due_of(OOOOB, detected.isoformat(), actions, method=SurveyMethod.AVO)
    assert due["first_attempt"] == detected + timedelta(days=15)
    assert due["final_repair"] <= detected + timedelta(days=30)


def _inspections():
    out = []
    for program_id in sorted(catalog.programs()):
        program = catalog.program(program_id)
        for insp in program.inspections:
            for kind in insp.site_kinds:
                out.append((program, kind, insp))
    return out


@settings(max_examples=80, deadline=None)
@given(st.sampled_from(_inspections()), start_day)
def test_earliest_survey_never_before_last_plus_minimum_spacing(case, last):
    # 60.5397a(g)(1)-(2) [text, eCFR 9/11/2026], 60.5397b(g)(1) [text, eCFR 9/10/2026]: consecutive surveys
    # "at least" the minimum spacing apart, for every program, site kind and inspection.
    from fieldapp.core.dates import add_span

    program, kind, insp = case
    w = next_window(program, kind, insp.method, [PastSurvey(last)])
    if insp.min_spacing:
        assert w.earliest >= add_span(last, insp.min_spacing.amount, insp.min_spacing.unit)
    assert w.earliest > last
    assert w.latest >= w.earliest


# --- every value cited -----------------------------------------------------------------------------

@pytest.mark.parametrize("program_id", sorted(catalog.programs()))
def test_every_program_value_has_a_citation_and_a_status(program_id, capsys):
    # DESIGN rule: every rule value lives in a data file with its citation and status.
    out = cli_json(capsys, "programs", "show", program_id, "--json")
    values = out["values"]
    assert values == cited_values(catalog.program(program_id))
    assert len(values) >= 3
    for v in values:
        assert v["citation"].strip(), v
        assert v["status"] in ("text", "memory", "summary", "company"), v


# --- the demo ------------------------------------------------------------------------------------

def test_demo_holds_an_avo_found_oooob_leak_and_a_delay_waiting_for_parts(demo_store):
    # Demo data is invented; the day counts it shows are the rule's: 60.5397b(h)(1)(i), (h)(2)
    # [text, eCFR 9/10/2026] and 60.5397a(h)(3)(ii)(C) [text, eCFR 9/11/2026].
    from fieldapp.store import due

    rows = demo_store.rows(
        "SELECT l.id, l.detection_method, s.program_id, c.tag FROM leaks l JOIN components c ON c.id = l.component_id "
        "JOIN surveys v ON v.id = l.survey_id JOIN sites s ON s.id = v.site_id WHERE l.detection_method = 'avo'")
    assert [(r["program_id"], r["tag"]) for r in rows] == [(OOOOB, "OM5-0006")]
    items = {(i.tag, i.kind): i for i in due.leak_items(demo_store)}
    avo_first = demo_store.rows("SELECT done_on FROM actions WHERE leak_id = ? AND kind = 'first_attempt'",
                                (rows[0]["id"],))[0]["done_on"]
    assert items[("OM5-0006", "final_repair")].due == D(avo_first) + timedelta(days=15)
    parts = demo_store.rows("SELECT a.* FROM actions a JOIN leaks l ON l.id = a.leak_id "
                            "WHERE a.delay_kind = 'parts'")
    assert len(parts) == 1 and parts[0]["parts_ordered_on"] and parts[0]["parts_received_on"] is None
    waiting = [i for i in items.values() if i.kind == "delay_limit" and i.due is None]
    assert len(waiting) == 1  # the limit is set only when the replacement is received


def test_compressor_station_survey_without_compressor_modes_is_warned(demo_store):
    # 40 CFR 60.5420a(c)(15)(vii)(F) [text, eCFR 9/11/2026]: "For compressor stations, operating mode of each
    # compressor ... at the station at the time of the survey." Recorded on the survey; missing -> a warning.
    from fieldapp.store import ops

    station = demo_store.rows("SELECT id FROM sites WHERE kind = 'compressor_station'")[0]["id"]
    surveys = demo_store.rows("SELECT id, compressor_modes FROM surveys WHERE site_id = ?", (station,))
    assert surveys and all(s["compressor_modes"] for s in surveys)  # the demo records them
    assert not any("operating mode" in w for w in ops.survey_record_warnings(demo_store, surveys[0]["id"]))
    ops.edit(demo_store, "surveys", surveys[0]["id"], {"compressor_modes": ""})
    warnings = ops.survey_record_warnings(demo_store, surveys[0]["id"])
    assert any("operating mode of each compressor" in w and "60.5420a(c)(15)(vii)(F)" in w for w in warnings)
    pad = demo_store.rows("SELECT v.id FROM surveys v JOIN sites s ON s.id = v.site_id "
                          "WHERE s.kind != 'compressor_station'")[0]["id"]
    assert not any("operating mode" in w for w in ops.survey_record_warnings(demo_store, pad))  # stations only
