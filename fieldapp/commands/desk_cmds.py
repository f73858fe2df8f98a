"""Recording field work from the office: survey start/end, leak add, action add, config actor.

Each command turns its options into the same values the tablet screens give ``fieldapp.store.ops``
and calls one ops function (one transaction; the core's parsers check every value). A refused value
exits 2 naming the option. Times are local on the site's clock unless they carry a UTC offset;
earlier dates are allowed (paper forms keyed in later) and are reported as backdated: the journal
stamps when the record was keyed in, the record keeps when the work was done.
"""

from __future__ import annotations

import argparse
from datetime import UTC, date, datetime
from typing import Any
from zoneinfo import ZoneInfo

from fieldapp.cmdkit import emit_json, open_store, required_text, say_actor
from fieldapp.core.enums import ActionKind, CameraCheck, ComponentType, DelayKind, Service, SurveyMethod
from fieldapp.core.fields import FieldProblem, ValidationError

# Option names that differ from the record field they fill (field -> option); others are the field
# with dashes, so every refused value names the option the user typed.
OPTION_OF = {
    "site_id": "--site", "survey_id": "survey", "leak_id": "leak", "component_id": "--tag",
    "ambient_temp_entered": "--temperature", "ambient_temp_c": "--temperature", "temp_unit": "--temp-unit",
    "wind_speed_entered": "--wind", "wind_speed_m_s": "--wind", "wind_max_entered": "--wind-max",
    "wind_max_m_s": "--wind-max", "wind_unit": "--wind-unit", "actor": "--by", "type": "--type",
    "service": "--service", "--actor": "--actor", "kind": "kind", "seq": "kind",
}

ACTION_WORDS = {kind.value.replace("_", "-"): kind for kind in ActionKind}

SURVEY_TEXT = ("operator", "qualification", "camera_make", "camera_model", "camera_serial", "camera_check_note",
               "sky", "areas", "compressor_modes")
LEAK_TEXT = ("location_note", "screening_ppm", "measured_rate", "measured_unit", "measured_instrument",
             "hazard_note", "detection_method")
ACTION_TEXT = ("note", "reason", "planned_on", "shutdown_on", "instrument", "method", "delay_kind",
               "parts_ordered_on", "parts_received_on")


def _opt(name: str) -> str:
    return "--" + name.replace("_", "-")


def option_problems(exc: ValidationError) -> ValidationError:
    """The same problems with each record field named as the command option that fills it."""
    return ValidationError([FieldProblem(OPTION_OF.get(p.field, _opt(p.field)), p.message, p.line)
                            for p in exc.problems])


def register(sub: argparse._SubParsersAction) -> None:
    """Add survey, leak, action and config."""
    when = ("local date and time on the site's clock, YYYY-MM-DDTHH:MM (or with a UTC offset); earlier "
            "times are allowed and reported as backdated")
    p = sub.add_parser("survey", help="start or end a survey (record a paper form)")
    what = p.add_subparsers(dest="what", required=True, metavar="start|end")
    s = what.add_parser("start", help="start a survey at a site with its conditions and camera check")
    s.add_argument("--site", required=True, help="site id or name")
    s.add_argument("--method", required=True, help=f"allowed: {', '.join(m.value for m in SurveyMethod)}")
    s.add_argument("--started-at", help=f"{when} (default: now)")
    s.add_argument("--operator", required=True, help="person who surveyed")
    s.add_argument("--qualification")
    s.add_argument("--camera-make")
    s.add_argument("--camera-model")
    s.add_argument("--camera-serial")
    s.add_argument("--camera-check", help=f"allowed: {', '.join(c.value for c in CameraCheck)}")
    s.add_argument("--camera-check-note", help="what was shown at what distance")
    s.add_argument("--temperature", help="ambient temperature, in --temp-unit")
    s.add_argument("--temp-unit", help="°C or °F (default °C)")
    s.add_argument("--wind", help="wind speed, in --wind-unit")
    s.add_argument("--wind-max", help="maximum wind, in --wind-unit")
    s.add_argument("--wind-unit", help="m/s, mph, km/h or kn (default m/s)")
    s.add_argument("--sky", help="sky conditions, e.g. clear, overcast")
    s.add_argument("--areas", help="areas planned, separated by semicolons")
    s.add_argument("--compressor-modes", help="compressor stations: the operating mode of each compressor "
                   "(operating, standby pressurized, not operating-depressurized)")
    s.add_argument("--json", action="store_true")
    s.set_defaults(handler=cmd_survey_start)
    e = what.add_parser("end", help="end a survey with areas done and deviations (or --no-deviations)")
    e.add_argument("survey", help="survey id or SITE@YYYY-MM-DD")
    e.add_argument("--ended-at", help=f"{when} (default: now)")
    e.add_argument("--areas-done", help="areas done, separated by semicolons")
    e.add_argument("--deviations", help="deviations from the monitoring plan")
    e.add_argument("--no-deviations", action="store_true", help="state that there were none")
    e.add_argument("--json", action="store_true")
    e.set_defaults(handler=cmd_survey_end)

    p = sub.add_parser("leak", help="record a leak found in a survey")
    what = p.add_subparsers(dest="what", required=True, metavar="add")
    a = what.add_parser("add", help="add a leak on an inventory tag, or on a new tag with --type and --service")
    a.add_argument("--survey", required=True, help="survey id or SITE@YYYY-MM-DD")
    a.add_argument("--tag", required=True, help="component tag (new tags need --type and --service)")
    a.add_argument("--type", help=f"new tag only; allowed: {', '.join(t.value for t in ComponentType)}")
    a.add_argument("--service", help=f"new tag only; allowed: {', '.join(t.value for t in Service)}")
    a.add_argument("--detected-at", help=f"{when} (default: now)")
    a.add_argument("--location-note")
    a.add_argument("--screening-ppm", help="screening value, ppm")
    a.add_argument("--measured-rate", help="measured rate, in --measured-unit")
    a.add_argument("--measured-unit", help="kg/h, lb/h, scf/h or m3/h")
    a.add_argument("--measured-instrument")
    a.add_argument("--hazard", action="store_true", help="large, near ignition, or may carry H2S")
    a.add_argument("--hazard-note")
    a.add_argument("--detection-method", help="how it was found, when not the survey's method")
    a.add_argument("--tag-attached", action="store_true", help="a physical leak tag is on the component")
    a.add_argument("--json", action="store_true")
    a.set_defaults(handler=cmd_leak_add)

    p = sub.add_parser("action", help="record what was done about a leak")
    what = p.add_subparsers(dest="what", required=True, metavar="add")
    a = what.add_parser("add", help="append an action to a leak")
    a.add_argument("kind", help=f"allowed: {', '.join(ACTION_WORDS)}")
    a.add_argument("leak", help="leak id, TAG (its open leak) or TAG@YYYY-MM-DD (found that day)")
    a.add_argument("--site", help="site id or name, when the tag is used at several sites")
    a.add_argument("--done-on", help="local date YYYY-MM-DD the work was done (default: today at the site)")
    a.add_argument("--by", help="who did the work (default: the acting person)")
    for name in ACTION_TEXT:
        a.add_argument(_opt(name))
    a.add_argument("--json", action="store_true")
    a.set_defaults(handler=cmd_action_add)

    p = sub.add_parser("config", help="settings of this store")
    what = p.add_subparsers(dest="what", required=True, metavar="actor")
    c = what.add_parser("actor", help="show or set who the journal names when no --actor is given")
    c.add_argument("name", nargs="?")
    c.set_defaults(handler=cmd_config_actor)


def site_moment(text: str | None, tz: str, field: str, wall: float) -> datetime:
    """A moment from a local ``YYYY-MM-DDTHH:MM`` on the site's clock (or with an offset); default now."""
    zone = ZoneInfo(tz)
    if text is None:
        return datetime.fromtimestamp(wall, UTC).astimezone(zone).replace(microsecond=0)
    try:
        moment = datetime.fromisoformat(text.strip())
    except ValueError:
        raise ValidationError([FieldProblem(field, f"{text[:40]!r} is not a date and time; write "
                                            "YYYY-MM-DDTHH:MM on the site's clock")]) from None
    if moment.tzinfo is None:
        moment = moment.replace(tzinfo=zone)
    if moment.timestamp() > wall + 60:
        raise ValidationError([FieldProblem(field, f"{moment.isoformat()} is in the future")])
    return moment


def site_today(store, tz: str) -> date:
    """Today's date on the site's clock."""
    return datetime.fromtimestamp(store.wall(), UTC).astimezone(ZoneInfo(tz)).date()


def _backdated(store, tz: str, day: date) -> str:
    today = site_today(store, tz)
    return f" (backdated: done {day}, recorded {today})" if day < today else ""


def _given(args: argparse.Namespace, names: tuple[str, ...]) -> dict[str, Any]:
    out = {}
    for name in names:
        value = getattr(args, name, None)
        if value is not None:
            required_text(value, _opt(name))
            out[name] = value
    return out


def _call(fn, *a, **kw):
    try:
        return fn(*a, **kw)
    except ValidationError as exc:
        raise option_problems(exc) from None


def survey_start_values(store, args: argparse.Namespace) -> dict[str, Any]:
    """The values ``ops.start_survey`` gets for these options (the tablet's survey screen gives the same)."""
    from fieldapp.store.reads import resolve_site

    site = resolve_site(store, required_text(args.site, "--site"))
    values = {"site_id": site["id"], "method": args.method, **_given(args, SURVEY_TEXT),
              "started_at": site_moment(args.started_at, site["timezone"], "--started-at", store.wall())}
    if args.camera_check is not None:
        values["camera_check"] = args.camera_check
    for option, field in (("temperature", "ambient_temp_entered"), ("temp_unit", "temp_unit"),
                          ("wind", "wind_speed_entered"), ("wind_max", "wind_max_entered"),
                          ("wind_unit", "wind_unit")):
        if getattr(args, option) is not None:
            values[field] = required_text(getattr(args, option), _opt(option))
    return values


def cmd_survey_start(args: argparse.Namespace) -> int:
    from fieldapp.store import ops

    store = open_store(args)
    values = survey_start_values(store, args)
    site = store.get("sites", values["site_id"])
    survey, warnings = _call(ops.start_survey, store, values, args.actor)
    if args.json:
        emit_json({"survey_id": survey.id, "site": site["name"], "started_at": survey.started_at.isoformat(),
                   "warnings": warnings, "actor": args.actor})
        return 0
    say_actor(args)
    day = survey.started_at.astimezone(ZoneInfo(site["timezone"])).date()
    print(f"survey started: {site['name']}@{day} (id {survey.id}){_backdated(store, site['timezone'], day)}")
    for warning in warnings:
        print(f"check conditions: {warning}")
    return 0


def cmd_survey_end(args: argparse.Namespace) -> int:
    from fieldapp.store import ops
    from fieldapp.store.names import resolve_survey

    store = open_store(args)
    survey = resolve_survey(store, required_text(args.survey, "survey"))
    site = store.get("sites", survey["site_id"])
    changes: dict[str, Any] = {"ended_at": site_moment(args.ended_at, site["timezone"], "--ended-at", store.wall()),
                               "no_deviations": bool(args.no_deviations)}
    changes.update(_given(args, ("areas_done", "deviations")))
    if args.deviations is not None and args.no_deviations:
        raise ValidationError([FieldProblem("--deviations", "give either --deviations or --no-deviations")])
    ended = _call(ops.end_survey, store, survey["id"], changes, args.actor)
    warnings = ops.survey_record_warnings(store, survey["id"])
    if args.json:
        emit_json({"survey_id": ended.id, "ended_at": ended.ended_at.isoformat(), "warnings": warnings,
                   "actor": args.actor})
        return 0
    say_actor(args)
    print(f"survey ended: {site['name']} at {ended.ended_at.isoformat()}")
    for warning in warnings:
        print(f"record check: {warning}")
    return 0


def leak_values(store, args: argparse.Namespace) -> tuple[dict[str, Any], dict[str, Any] | None, dict]:
    """The values and new component ``ops.add_leak`` gets for these options, and the survey's site."""
    from fieldapp.store.lookups import component_by_tag
    from fieldapp.store.names import resolve_survey

    survey = resolve_survey(store, required_text(args.survey, "--survey"))
    site = store.get("sites", survey["site_id"])
    tag = (required_text(args.tag, "--tag") or "").strip()
    values = {"survey_id": survey["id"], **_given(args, LEAK_TEXT),
              "detected_at": site_moment(args.detected_at, site["timezone"], "--detected-at", store.wall()),
              "hazard": bool(args.hazard), "tag_attached": bool(args.tag_attached)}
    known = component_by_tag(store, site["id"], tag)
    new_component = None
    if known:
        if args.type is not None or args.service is not None:
            raise ValidationError([FieldProblem("--type", f"{tag!r} is in the inventory as a {known['type']} "
                                                f"({known['service']}); leave --type and --service out")])
        values["component_id"] = known["id"]
    else:
        missing = [o for o, v in (("--type", args.type), ("--service", args.service)) if v is None]
        if missing:
            raise ValidationError([FieldProblem(m, f"is required: {tag!r} is a new tag at {site['name']}")
                                   for m in missing])
        new_component = {"tag": tag, "type": args.type, "service": args.service}
    return values, new_component, site


def cmd_leak_add(args: argparse.Namespace) -> int:
    from fieldapp.store import ops

    store = open_store(args)
    values, new_component, site = leak_values(store, args)
    leak = _call(ops.add_leak, store, values, new_component, actor=args.actor)
    day = leak.detected_at.astimezone(ZoneInfo(site["timezone"])).date()
    if args.json:
        emit_json({"leak_id": leak.id, "tag": args.tag.strip(), "detected_on": day.isoformat(),
                   "new_tag": new_component is not None, "hazard": leak.hazard, "actor": args.actor})
        return 0
    say_actor(args)
    new = " (new tag added to the inventory)" if new_component else ""
    print(f"leak recorded: {args.tag.strip()}@{day} at {site['name']}{new} (id {leak.id})"
          f"{_backdated(store, site['timezone'], day)}")
    if leak.hazard:
        print("HAZARD: follow site procedures, the permit and local codes; wear a personal gas monitor.")
    return 0


def action_values(store, args: argparse.Namespace) -> tuple[dict[str, Any], dict]:
    """The values ``ops.add_action`` gets for these options (the repair screen gives the same), and the leak."""
    from fieldapp.cmdkit import parse_day
    from fieldapp.store.names import resolve_leak
    from fieldapp.store.reads import resolve_site

    kind = ACTION_WORDS.get(args.kind.strip().lower().replace("_", "-"))
    if kind is None:
        raise ValidationError([FieldProblem("kind", f"{args.kind[:40]!r} is not allowed; allowed: "
                                            f"{', '.join(ACTION_WORDS)}")])
    site_id = resolve_site(store, required_text(args.site, "--site"))["id"] if args.site is not None else None
    leak = resolve_leak(store, required_text(args.leak, "leak"), site_id)
    done_on = parse_day(args.done_on, "--done-on") if args.done_on is not None else site_today(
        store, leak["timezone"])
    values = {"leak_id": leak["id"], "kind": kind.value, "done_on": done_on,
              "actor": required_text(args.by, "--by") or args.actor, **_given(args, ACTION_TEXT)}
    return values, leak


def cmd_action_add(args: argparse.Namespace) -> int:
    from fieldapp.store import ops

    store = open_store(args)
    values, leak = action_values(store, args)
    action = _call(ops.add_action, store, values, actor=args.actor)
    if args.json:
        emit_json({"action_id": action.id, "leak_id": leak["id"], "tag": leak["tag"], "kind": action.kind.value,
                   "done_on": action.done_on.isoformat(), "by": action.actor, "actor": args.actor})
        return 0
    say_actor(args)
    print(f"{action.kind.value.replace('_', ' ')} recorded for {leak['tag']} at {leak['site_name']} on "
          f"{action.done_on} by {action.actor}{_backdated(store, leak['timezone'], action.done_on)}")
    if action.kind is ActionKind.DELAY_OF_REPAIR and action.delay_kind is DelayKind.PARTS:
        print("delay for parts: record --parts-ordered-on and, when they come, --parts-received-on")
    return 0


def cmd_config_actor(args: argparse.Namespace) -> int:
    from fieldapp.store.prefs import actor_setting, set_actor

    store = open_store(args)
    if args.name is None:
        setting = actor_setting(store)
        print(f"store default actor: {setting or '(not set)'}; this command acts as {args.actor} "
              f"({args.actor_source})")
        return 0
    print(f"store default actor set to {set_actor(store, args.name)}")
    return 0
