"""What a program asks of a survey record: required fields, camera check, condition limits."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from fieldapp.core.enums import CameraCheck, SurveyMethod
from fieldapp.core.fields import FieldProblem, is_blank
from fieldapp.core.program import Program
from fieldapp.core.records import Survey

CAMERA_FIELDS = ("camera_make", "camera_model", "camera_serial", "camera_check", "camera_check_note")


def required_problems(program: Program, values: Mapping[str, Any]) -> list[FieldProblem]:
    """Fields the program requires that are blank; camera fields only for OGI surveys."""
    method = str(values.get("method", "")).strip().lower()
    problems = []
    for name in program.required_survey_fields:
        if name in CAMERA_FIELDS and method != SurveyMethod.OGI.value:
            continue
        if is_blank(values.get(name)) or (name == "camera_check" and values.get(name) == "not_done"):
            problems.append(FieldProblem(name, f"is required by program {program.id} ({_citation(program)})"))
    return problems


def _citation(program: Program) -> str:
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


def end_problems(survey: Survey) -> list[FieldProblem]:
    """Reasons a survey cannot be ended: deviations must be stated, or their absence declared."""
    problems = []
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
