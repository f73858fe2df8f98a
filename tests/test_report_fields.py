"""Program files list the report fields their rule asks an annual report to hold; the period summary draws them.

Rule text read for these checks (eCFR prints "up to date as of 9/11/2026" (OOOOa) and "9/10/2026" (OOOOb);
short quotes, the whole lists in docs/report-fields.md):
- 40 CFR 60.5420a(b)(7)(ii): "For each fugitive emissions monitoring survey performed during the annual
  reporting period, the information specified in paragraphs (b)(7)(ii)(A) through (G)": (A) "Date of the
  survey." (B) "Monitoring instrument used." (C) "Any deviations from the monitoring plan elements ... or a
  statement that there were no deviations" (D) "Number and type of components for which fugitive emissions
  were detected." (E) "Number and type of fugitive emissions components that were not repaired as required"
  (F) "... on delay of repair and explanation for each delay of repair." (G) "Date of planned shutdown(s)".
- 40 CFR 60.5420b(b)(9)(ii)(A)-(G): the same list; (B) "Monitoring instrument or, if the survey was conducted
  by AVO methods, notation that AVO was used."
- 40 CFR 60.5420a(c)(15)(vii)(I)(1)-(9) and 60.5420b(c)(14)(v)(I)(1)-(9): per fugitive emission, location,
  type with the difficult-/unsafe-to-monitor designation, component ID and instrument reading (Method 21),
  photo or tag, first attempt, successful repair "including the resurvey to verify repair and instrument used
  for the resurvey", delay of repair with its explanation, parts dates including "the anticipated component
  delivery date", planned shutdowns.
"""

from __future__ import annotations

import io
import re
from datetime import date

import pytest
from pypdf import PdfReader

from fieldapp import catalog
from fieldapp.core.fields import ValidationError
from fieldapp.core.program import REPORT_LEAK_FIELDS, REPORT_SITE_FIELDS, REPORT_SURVEY_FIELDS
from fieldapp.store import ops
from sync.pdf_period import render as render_period
from sync.report_fields import LEAK_COLUMNS, NOT_RECORDED, SITE_LABELS, STORE_LACKS, SURVEY_COLUMNS
from sync.report_model import period_report

TODAY = date(2026, 12, 1)
TEMPLATE = catalog.SHIPPED_PROGRAMS / "company-template.toml"


def flat(data: bytes) -> str:
    return " ".join(" ".join(p.extract_text() for p in PdfReader(io.BytesIO(data)).pages).split())


def sections(text: str, sites: list[str]) -> dict[str, str]:
    """The text of each site's section: from its heading to the next site's heading (or the cautions)."""
    heads = "|".join(re.escape(label.split()[0]) for label in SITE_LABELS.values())  # the site items follow it
    marks = [re.search(rf"{re.escape(name)} (?:{heads})", text).start() for name in sites] + [text.rindex("Cautions")]
    return {name: text[marks[i]:marks[i + 1]] for i, name in enumerate(sites)}


def test_every_report_field_has_a_label_and_a_width():
    assert set(SURVEY_COLUMNS) == set(REPORT_SURVEY_FIELDS)
    assert set(LEAK_COLUMNS) == set(REPORT_LEAK_FIELDS)
    assert set(SITE_LABELS) == set(REPORT_SITE_FIELDS)
    assert set(STORE_LACKS) <= set(REPORT_SURVEY_FIELDS) | set(REPORT_LEAK_FIELDS) | set(REPORT_SITE_FIELDS)


@pytest.mark.parametrize("program_id, paragraph", [("us-nsps-oooo-a", "60.5420a(b)(7)(ii)(A)-(G)"),
                                                   ("us-nsps-oooo-b", "60.5420b(b)(9)(ii)(A)-(G)")])
def test_federal_programs_list_the_annual_report_items_per_survey(program_id, paragraph):
    report = catalog.program(program_id).annual_report
    # (A) date, (B) instrument, (C) deviations, (D) components with emissions, (E) not repaired as required,
    # (F) on delay of repair with the explanation, (G) planned shutdowns: the rule text quoted above
    assert report.survey_fields.value == ("survey_date", "instrument", "deviations", "leaks_by_type",
                                          "not_repaired_by_type", "on_delay_by_type", "planned_shutdowns")
    assert report.survey_fields.status == "text" and paragraph in report.survey_fields.citation


@pytest.mark.parametrize("program_id, paragraph", [("us-nsps-oooo-a", "60.5420a(c)(15)(vii)(I)(1)-(9)"),
                                                   ("us-nsps-oooo-b", "60.5420b(c)(14)(v)(I)(1)-(9)")])
def test_federal_programs_list_the_record_items_per_leak(program_id, paragraph):
    fields = catalog.program(program_id).annual_report.leak_fields
    # (1) location, (2) type + designation, (3) id and reading, (4) photo or tag, (5) first attempt,
    # (6) repair with resurvey and its instrument, (7) delay and explanation, (8) parts dates incl. the
    # anticipated delivery, (9) planned shutdowns (rule text quoted above)
    for name in ("location", "component", "tag", "instrument_reading", "photo_or_tag", "first_attempt", "repair",
                 "resurvey", "delay", "parts", "parts_expected_on", "planned_shutdown"):
        assert name in fields.value, name
    assert fields.status == "text" and paragraph in fields.citation


def test_every_shipped_program_lists_report_fields_and_company_files_say_company():
    for program, _origin in catalog.programs().values():
        report = program.annual_report
        assert report is not None, program.id
        for cited in (report.survey_fields, report.leak_fields):
            assert cited.value and cited.citation and cited.status in ("text", "memory", "summary", "company")
    template = catalog.program("company-template").annual_report
    assert {template.survey_fields.status, template.leak_fields.status} == {"company"}
    # 30 TAC 115.786 as read sets no per-survey report list: the Texas columns are the company's choice
    texas = catalog.program("us-tx-hrvoc-fugitive").annual_report
    assert texas.survey_fields.status == "company" and "115.786" in texas.leak_fields.citation


def _with_annual_report(block: str) -> str:
    text = TEMPLATE.read_text(encoding="utf-8")
    start = text.index("[annual_report]")
    end = text.index("\n[", start + 1)
    return text[:start] + block.strip() + "\n" + text[end:]


@pytest.mark.parametrize("block, key, words", [
    ('[annual_report]\nsurvey_fields = { value = ["survey_date", "weather"], citation = "c", status = "company" }\n'
     'leak_fields = { value = ["tag"], citation = "c", status = "company" }',
     "annual_report.survey_fields.value[1]", ["'weather' is not allowed", "allowed: survey_date, method"]),
    ('[annual_report]\nsurvey_fields = { value = ["survey_date"], citation = "c", status = "company" }\n'
     'leak_fields = { value = ["tag", "colour"], citation = "c", status = "company" }',
     "annual_report.leak_fields.value[1]", ["'colour' is not allowed", "allowed: tag, component"]),
    ('[annual_report]\nsurvey_fields = { value = ["survey_date"], citation = "c", status = "guess" }\n'
     'leak_fields = { value = ["tag"], citation = "c", status = "company" }',
     "annual_report.survey_fields.status", ["'guess' is not allowed", "text, memory, summary, company"]),
    ('[annual_report]\nsurvey_fields = { value = ["survey_date"], status = "company" }\n'
     'leak_fields = { value = ["tag"], citation = "c", status = "company" }',
     "annual_report.survey_fields.citation", ["is required"]),
    ('[annual_report]\nsurvey_fields = { value = ["survey_date"], citation = "c", status = "company" }',
     "annual_report.leak_fields", ["is required"]),
    ('[annual_report]\nsurvey_fields = { value = ["tag"], citation = "c", status = "company" }\n'
     'leak_fields = { value = ["tag", "tag"], citation = "c", status = "company" }\ncolour_fields = 1',
     "annual_report.colour_fields", ["is not allowed; allowed: survey_fields, leak_fields, site_fields"]),
    ('[annual_report]\nsurvey_fields = { value = ["survey_date"], citation = "c", status = "company" }\n'
     'leak_fields = { value = ["tag"], citation = "c", status = "company" }\n'
     'site_fields = { value = ["site_kind", "mascot"], citation = "c", status = "company" }',
     "annual_report.site_fields.value[1]", ["'mascot' is not allowed", "allowed: company, site_name"]),
])
def test_a_bad_annual_report_list_is_refused_naming_file_key_and_allowed(block, key, words):
    with pytest.raises(ValidationError) as caught:
        catalog.parse_program_text("own-program.toml", _with_annual_report(block))
    messages = [f"{p.field}: {p.message}" for p in caught.value.problems]
    hit = [m for m in messages if m.startswith(f"own-program.toml: {key}:")]
    assert hit, messages
    for word in words:
        assert word in hit[0], hit[0]


def test_programs_show_lists_the_report_fields_in_text_and_json(capsys):
    from fieldapp.cli import main

    assert main(["programs", "show", "us-nsps-oooo-a"]) == 0
    text = capsys.readouterr().out
    assert "annual report fields per survey: survey_date, instrument, deviations" in text
    assert "60.5420a(b)(7)(ii)(A)-(G)" in text and "annual report fields per leak: tag, component" in text
    import json

    assert main(["programs", "show", "us-nsps-oooo-a", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    values = {v["key"]: v for v in data["values"]}
    assert values["annual_report.survey_fields"]["status"] == "text"
    assert values["annual_report.leak_fields"]["value"][0] == "tag"


def test_demo_period_summary_draws_each_sites_listed_fields(demo_store):
    report = period_report(demo_store, date(2025, 1, 1), TODAY)
    text = flat(render_period(report))
    parts = sections(text, [s.site for s in report.sites])
    assert len({s.program_id for s in report.sites}) >= 2  # OOOOa and OOOOb sites in one summary
    for s in report.sites:
        program = catalog.program(s.program_id).annual_report
        part = parts[s.site]
        for name in program.survey_fields.value:
            assert SURVEY_COLUMNS[name][0] in part, (s.site, name)
        for name in program.leak_fields.value:
            assert LEAK_COLUMNS[name][0] in part, (s.site, name)
        assert program.survey_fields.citation[:40] in part and program.leak_fields.citation[:40] in part
        for line in s.leaks:
            assert line.tag in part
    # OOOOb (b)(9)(ii)(B) asks for the notation that AVO was used; (c)(14)(v)(I)(8) asks the expected delivery
    # date of a part, which the store does not keep: named under the leak table, never dropped
    assert "Not recorded: Part delivery expected" in text
    tamsin = next(s for s in report.sites if s.site.startswith("Tamsin"))
    delayed = [x for x in tamsin.leaks if x.delay_on]
    assert delayed and all(f"{x.tag}: {x.delay_reason}" in parts[tamsin.site] for x in delayed)  # (F) explanation
    late = [x for x in tamsin.leaks if x.overdue and x.state != "void"]
    assert late and re.search(r"no: [a-z ,]*overdue", parts[tamsin.site])  # (E) not repaired as required
    survey_row = tamsin.survey_table.rows[-1]
    assert any(x.tag in survey_row[tamsin.survey_table.fields.index("not_repaired_by_type")] for x in late)


def test_sites_under_different_programs_get_their_own_columns_and_not_recorded(store, tmp_path, monkeypatch):
    own = tmp_path / "programs"
    own.mkdir()
    text = _with_annual_report(
        '[annual_report]\nsurvey_fields = { value = ["survey_date", "operator", "calibration_records"], '
        'citation = "our standard 7.1", status = "company" }\n'
        'leak_fields = { value = ["tag", "state"], citation = "our standard 7.2", status = "company" }')
    (own / "own.toml").write_text(text.replace('id = "company-template"', 'id = "own-report-columns"'),
                                  encoding="utf-8")
    monkeypatch.setenv("PLUMEBOOK_PROGRAMS", str(own))
    sites = []
    for name, program_id in (("Alder Flat Pad", "us-nsps-oooo-a"), ("Birch Knoll Pad", "own-report-columns")):
        site = ops.add_site(store, {"name": name, "kind": "well_site", "program_id": program_id,
                                    "timezone": "America/Denver", "methane_mole_fraction": 0.8,
                                    "startup_date": "2026-01-10"})
        survey, _ = ops.start_survey(store, {
            "site_id": site.id, "method": "ogi", "operator": "Kit Marr (invented)", "qualification": "OGI level 2",
            "started_at": "2026-11-30T08:00:00-07:00", "camera_make": "m", "camera_model": "x", "camera_serial": "s1",
            "camera_check": "passed", "ambient_temp_c": 5, "sky": "clear", "wind_speed_m_s": 1, "wind_max_m_s": 2})
        ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00-07:00",
                             "location_note": "north flange"},
                     new_component={"tag": f"{name[:2].upper()}-1", "type": "valve", "service": "gas"})
        sites.append(name)
    report = period_report(store, date(2026, 1, 1), TODAY)
    parts = sections(flat(render_period(report)), sites)
    ours, federal = parts["Birch Knoll Pad"], parts["Alder Flat Pad"]
    # the user program's columns, its citation, and the field the store lacks shown as such
    assert "Instrument calibration records" in ours and NOT_RECORDED in ours
    assert "Not recorded: Instrument calibration records" in ours and "our standard 7.1" in ours
    assert "Location" not in ours and "State" in ours
    # the OOOOa site keeps the columns of 60.5420a(b)(7)(ii) and (c)(15)(vii)(I)
    assert "Location" in federal and "north flange" in federal and "Repaired as required" in federal
    assert "Instrument calibration records" not in federal
    # leaks.csv keeps every column whatever the program lists
    from sync.export import LEAK_COLUMNS as CSV_COLUMNS
    from sync.export import leak_table as csv_leaks

    rows = csv_leaks(store, as_of=TODAY)
    assert len(rows) == 2 and all(set(row) == set(CSV_COLUMNS) for row in rows)


def test_the_template_documents_every_report_field():
    """The company template's comment names every field a program may list (DEVELOPERS.md: it documents every key)."""
    comment = " ".join(line for line in TEMPLATE.read_text(encoding="utf-8").splitlines() if line.startswith("#"))
    for name in REPORT_SITE_FIELDS + REPORT_SURVEY_FIELDS + REPORT_LEAK_FIELDS:
        assert re.search(rf"\b{name}\b", comment), name



@pytest.mark.parametrize("program_id, fields, paragraph", [
    # 40 CFR 60.5420a(b)(7)(i): "(A) Designation of the type of site ... (B) ... the date of the startup of
    # production ... (C) [Reserved] (D) ... the date of the change to status as a wellhead only well site. (E) ...
    # the date that the first piece of major production and processing equipment is added back" (eCFR 9/11/2026)
    ("us-nsps-oooo-a", ("site_kind", "startup_date", "wellhead_only_since", "equipment_added_back_on"),
     "60.5420a(b)(7)(i)"),
    # 40 CFR 60.5420b(b)(1)(i), (iii) (company name, facility site name, address or location with coordinates "to
    # an accuracy and precision of five (5) decimals of a degree", reporting period) and (b)(9)(i)(A)-(F) (type of
    # site, startup date, "what type of well site it is", wellhead-only date, equipment added back, well closure
    # dates) (eCFR 9/10/2026)
    ("us-nsps-oooo-b", ("company", "site_name", "facility_id", "location", "coordinates", "reporting_period",
                        "site_kind", "startup_date", "well_site_type", "wellhead_only_since",
                        "equipment_added_back_on", "well_closure_dates"), "60.5420b(b)(9)(i)(A)-(F)"),
])
def test_federal_programs_list_the_site_items_of_the_annual_report(program_id, fields, paragraph):
    site = catalog.program(program_id).annual_report.site_fields
    assert site.value == fields and paragraph in site.citation and site.status == "text"


def test_period_summary_draws_each_sites_listed_site_items(demo_store):
    report = period_report(demo_store, date(2026, 1, 1), TODAY)
    b_site = next(s for s in report.sites if s.program_id == "us-nsps-oooo-b")
    labels = dict(b_site.site_fields)
    # (b)(9)(i)(F): plumebook keeps no well closure dates, so the report says so rather than leaving it out
    assert labels["Well closure dates"] == "not recorded" and "does not keep well closure dates" in b_site.site_citation
    assert labels["Reporting period"] == f"2026-01-01 to {TODAY.isoformat()}"
    assert labels["Latitude, longitude (decimal degrees, 5 places)"].count(".") == 2
    text = " ".join(p.extract_text() for p in PdfReader(io.BytesIO(render_period(report))).pages)
    text = " ".join(text.split())
    for site in report.sites:
        for label, value in site.site_fields:
            assert " ".join(label.split()[:2]) in text and value.split()[0] in text, (site.site, label)
