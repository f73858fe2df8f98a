"""What a program asks of a survey record: required fields, camera check, condition limits."""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from fieldapp.core.enums import CameraCheck, SurveyMethod
from fieldapp.core.fields import FieldProblem, is_blank
from fieldapp.core.program import Program
from fieldapp.core.records import Survey, as_plain

CAMERA_FIELDS = ("camera_make", "camera_model", "camera_serial", "camera_check", "camera_check_note")
# Fields known only when a survey ends: checked by ``end_problems``, not when it starts.
END_FIELDS = ("ended_at", "areas_done", "deviations")


def _blank(name: str, values: Mapping[str, Any]) -> bool:
    if name == "deviations":
        return is_blank(values.get("deviations")) and not values.get("no_deviations")
    if name == "camera_check":
        return is_blank(values.get(name)) or str(values.get(name)).strip().lower() in ("not_done", "not done")
    return is_blank(values.get(name))


def required_problems(program: Program, values: Mapping[str, Any], at_end: bool = False) -> list[FieldProblem]:
    """Fields the program requires that are blank; camera fields only for OGI surveys.

    At the start of a survey the fields known only at its end (end time, areas done, deviations) are
    skipped; ``at_end`` checks every required field.
    """
    method = str(values.get("method", "")).strip().lower()
    problems = []
    for name in program.required_survey_fields:
        if name in CAMERA_FIELDS and method != SurveyMethod.OGI.value:
            continue
        if name in END_FIELDS and not at_end:
            continue
        if _blank(name, values):
            what = ("describe the deviations from the monitoring plan, or state that there were none "
                    "(no_deviations)") if name == "deviations" else "is required"
            problems.append(FieldProblem(name, f"{what}: program {program.id} asks for it ({_citation(program)})"))
    return problems


def _citation(program: Program) -> str:
    cited = program.survey_records
    if cited is not None and cited.citation:
        return f"{cited.citation}; status {cited.status}"
    return f"record keeping of {program.rule}"


def start_problems(program: Program, survey: Survey) -> list[FieldProblem]:
    """Reasons a survey cannot start: an OGI survey without a passing daily camera check."""
    needs_check = program.survey_limits.get("camera_check_required")
    if survey.method is SurveyMethod.OGI and needs_check and needs_check.value:
        if survey.camera_check is not CameraCheck.PASSED:
            return [FieldProblem("camera_check", "the daily camera check must pass before an OGI survey "
                                 f"({needs_check.citation}, status {needs_check.status})")]
    if survey.ended_at and survey.ended_at < survey.started_at:
        return [FieldProblem("ended_at", "must not be before started_at")]
    if survey.wind_speed_m_s is not None and survey.wind_max_m_s is not None:
        if survey.wind_max_m_s < survey.wind_speed_m_s:
            return [FieldProblem("wind_max_m_s", "must be at least the wind speed")]
    return []


def end_problems(survey: Survey, program: Program | None = None) -> list[FieldProblem]:
    """Reasons a survey cannot be ended: the program's required record fields, the end time, and the
    deviations from the monitoring plan (or the statement that there were none)."""
    problems = []
    if program is not None:
        values = as_plain(survey)
        problems = [p for p in required_problems(program, values, at_end=True)
                    if p.field not in ("deviations", "ended_at")]
    if not survey.deviations and not survey.no_deviations:
        problems.append(FieldProblem("deviations", "describe the deviations from the monitoring plan, "
                                     "or state that there were none (no_deviations)"))
    if survey.deviations and survey.no_deviations:
        problems.append(FieldProblem("no_deviations", "cannot be set when deviations are described"))
    if survey.ended_at is None:
        problems.append(FieldProblem("ended_at", "is required to end a survey"))
    return problems


def condition_warnings(program: Program, survey: Survey) -> list[str]:
    """Conditions outside the limits the program or the company set (warnings, not refusals)."""
    limits = program.survey_limits
    out = []
    checks = (
        ("max_wind_m_s", survey.wind_max_m_s, lambda v, lim: v > lim, "maximum wind {v:g} m/s is above {lim:g}"),
        ("max_wind_m_s", survey.wind_speed_m_s, lambda v, lim: v > lim, "wind {v:g} m/s is above {lim:g}"),
        ("min_ambient_temp_c", survey.ambient_temp_c, lambda v, lim: v < lim,
         "ambient temperature {v:g} °C is below {lim:g}"),
        ("max_ambient_temp_c", survey.ambient_temp_c, lambda v, lim: v > lim,
         "ambient temperature {v:g} °C is above {lim:g}"),
    )
    for key, value, outside, message in checks:
        limit = limits.get(key)
        if limit is not None and value is not None and outside(value, float(limit.value)):
            out.append(message.format(v=value, lim=float(limit.value)) + f" ({limit.citation})")
    return out


def compressor_modes_missing(program: Program, site_kind: str, survey: Mapping[str, Any]) -> list[FieldProblem]:
    """A compressor-station survey without the operating mode of each compressor, under a program whose
    survey records ask for it (``leak_records.compressor_modes_at_stations``); a warning, not a refusal."""
    rule = (program.leak_records or {}).get("compressor_modes_at_stations")
    if rule is None or not rule.value or site_kind != "compressor_station" or not is_blank(
            survey.get("compressor_modes")):
        return []
    return [FieldProblem("compressor_modes", "the operating mode of each compressor at the time of the survey is not "
                         f"recorded ({rule.citation}, status {rule.status})")]


def unrepaired_without_record(program: Program, leaks: Sequence[Mapping[str, Any]]) -> list[FieldProblem]:
    """Leaks left unrepaired at the end of their survey that have neither a photo nor a tag.

    Each leak mapping holds ``tag``, ``photos`` (count), ``tag_attached`` and ``repaired_in_survey``.
    Applies when the program's ``leak_records.photo_or_tag_if_unrepaired`` is set (40 CFR
    60.5397a(h)(4)(ii), 60.5397b(h)(4)(ii)); these are warnings, the survey still ends.
    """
    rule = (program.leak_records or {}).get("photo_or_tag_if_unrepaired")
    if rule is None or not rule.value:
        return []
    out = []
    for leak in leaks:
        if leak.get("repaired_in_survey") or leak.get("photos") or leak.get("tag_attached"):
            continue
        out.append(FieldProblem("photos", f"leak on {leak.get('tag')} is not repaired during the survey and has "
                                f"no photo and no tag on the component ({rule.citation}, status {rule.status})"))
    return out
