"""Loads the invented demo scenario (demo_site/) into a store, dated relative to the load day."""

from __future__ import annotations

import tomllib
from datetime import UTC, date, datetime, time, timedelta
from pathlib import Path
from typing import Any
from zoneinfo import ZoneInfo

from fieldapp.core.dates import local_date
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.store import ops
from fieldapp.store.base import Store
from fieldapp.store.importer import import_components

DEMO_DIR = Path(__file__).resolve().parent.parent / "demo_site"
ACTOR = "demo loader"


def demo_dir() -> Path:
    """The demo_site folder of this checkout."""
    if not (DEMO_DIR / "scenario.toml").is_file():
        raise ValidationError([FieldProblem("demo_site", f"not found at {DEMO_DIR}; install from a checkout "
                                            "with `pip install -e .`")])
    return DEMO_DIR


def has_demo(store: Store) -> bool:
    """True when the store already holds sites."""
    return bool(store.rows("SELECT 1 FROM sites LIMIT 1"))


def load(store: Store, today: date | None = None) -> dict[str, int]:
    """Load the scenario into an empty store in one transaction; returns counts of what was added."""
    folder = demo_dir()
    scenario = tomllib.loads((folder / "scenario.toml").read_text(encoding="utf-8"))
    if has_demo(store):
        raise ValidationError([FieldProblem("store", "already holds sites; use --reset or another --db")])
    zone_today = today or local_date(datetime.fromtimestamp(store.wall(), UTC), "America/Denver")
    sites: dict[str, dict[str, Any]] = {}
    counts = {"sites": 0, "components": 0, "surveys": 0, "leaks": 0, "actions": 0}
    with store.transaction():
        for entry in scenario["sites"]:
            site = ops.add_site(store, {
                **{k: v for k, v in entry.items() if k not in ("key", "startup_day")},
                "operator": scenario["operator"],
                "startup_date": zone_today + timedelta(days=entry["startup_day"]),
            }, ACTOR)
            sites[entry["key"]] = {"id": site.id, "tz": ZoneInfo(site.timezone)}
            counts["components"] += import_components(store, folder / "inventory" / f"{entry['key']}.csv",
                                                      site.id, ACTOR)
            counts["sites"] += 1
        surveys = {}
        for entry in scenario["surveys"]:
            site = sites[entry["site"]]
            start = datetime.combine(zone_today + timedelta(days=entry["day"]), time(entry["hour"]), site["tz"])
            values = {**scenario["crews"][entry["crew"]], "site_id": site["id"], "method": "ogi",
                      "started_at": start, "camera_check": "passed", "camera_check_note": entry["check_note"],
                      **{k: entry[k] for k in ("ambient_temp_c", "wind_speed_m_s", "wind_max_m_s", "sky", "areas")},
                      **({"compressor_modes": entry["compressor_modes"]} if "compressor_modes" in entry else {})}
            survey, _warnings = ops.start_survey(store, values, ACTOR)
            ops.end_survey(store, survey.id, {
                "ended_at": start + timedelta(hours=4), "areas_done": entry["areas"],
                "deviations": entry.get("deviations", ""), "no_deviations": not entry.get("deviations"),
            }, ACTOR)
            surveys[entry["key"]] = (survey, site)
            counts["surveys"] += 1
        for entry in scenario["leaks"]:
            survey, site = surveys[entry["survey"]]
            component = store.rows("SELECT id FROM components WHERE site_id = ? AND tag = ?",
                                   (site["id"], entry["tag"]))[0]
            leak = ops.add_leak(store, {
                **{k: v for k, v in entry.items() if k not in ("survey", "tag", "minutes", "actions")},
                "survey_id": survey.id, "component_id": component["id"],
                "detected_at": survey.started_at + timedelta(minutes=entry["minutes"]),
            }, actor=ACTOR)
            counts["leaks"] += 1
            for action in entry["actions"]:
                values = {**action, "leak_id": leak.id, "actor": scenario["crews"]["a"]["operator"],
                          "done_on": zone_today + timedelta(days=action["day"])}
                values.pop("day")
                for key in ("planned_on", "shutdown_on", "parts_ordered_on", "parts_received_on"):
                    if key in values:
                        values[key] = zone_today + timedelta(days=values[key])
                ops.add_action(store, values, ACTOR)
                counts["actions"] += 1
    counts["photos"] = _add_photos(store, folder)
    return counts


def _add_photos(store: Store, folder: Path) -> int:
    """One invented still per leak, marked where its plume starts (after the records commit)."""
    import importlib.util

    from fieldapp.evidence.ingest import add_media

    spec = importlib.util.spec_from_file_location("demo_photos", folder / "make_photos.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    rows = store.rows("SELECT l.id, l.detected_at, c.tag, s.timezone FROM leaks l JOIN components c "
                      "ON c.id = l.component_id JOIN surveys v ON v.id = l.survey_id JOIN sites s ON s.id = v.site_id "
                      "ORDER BY l.detected_at, c.tag")
    for n, row in enumerate(rows):
        taken = datetime.fromisoformat(row["detected_at"]).astimezone(ZoneInfo(row["timezone"])).replace(tzinfo=None)
        data, (x, y) = module.photo(n, row["tag"], taken)
        add_media(store, row["id"], data, f"demo-{row['tag']}.jpg", [(x, y, row["tag"])], ACTOR)
    return len(rows)
