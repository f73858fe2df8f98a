"""Bulk inventory import from CSV.

Column layout (header row required, UTF-8, order free, names exact):

========================  ========  =====================================================
column                    required  allowed
========================  ========  =====================================================
tag                       yes       text up to 80 characters, unique within the site
type                      yes       valve, connector, flange, open_ended_line, pressure_relief_device,
                                    pump_seal, compressor_seal, thief_hatch, instrument, other
service                   yes       gas, light_liquid, heavy_liquid, water_oil
area                      no        text
equipment                 no        text
difficult_to_monitor      no        yes/no, true/false, 1/0
unsafe_to_monitor         no        yes/no, true/false, 1/0
========================  ========  =====================================================

The whole file is checked first; a file with any bad row imports nothing.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

from fieldapp.core.enums import ComponentType, Service
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.core.records import Component, as_plain, parse_record
from fieldapp.store.base import Store, new_ids

COLUMNS = ("tag", "type", "service", "area", "equipment", "difficult_to_monitor", "unsafe_to_monitor")
REQUIRED = ("tag", "type", "service")


TYPES = frozenset(t.value for t in ComponentType)
SERVICES = frozenset(s.value for s in Service)
FLAGS = {"": 0, "no": 0, "yes": 1, "0": 0, "1": 1, "false": 0, "true": 1}


def _canonical(row: dict[str, str | None], record_id: str, site_id: str) -> dict | None:
    """The plain component of a row already written in canonical form, or None (then parse_record decides).

    Accepts only values that ``parse_record`` would accept unchanged, so both paths give the same
    component; rows in any other spelling go through the full parser (tests/test_import.py checks this).
    """
    tag, ctype, service = row.get("tag") or "", row.get("type"), row.get("service")
    area, equipment = row.get("area") or "", row.get("equipment") or ""
    if ctype not in TYPES or service not in SERVICES or not tag or len(tag) > 80 or tag != tag.strip():
        return None
    if len(area) > 120 or len(equipment) > 120 or area != area.strip() or equipment != equipment.strip():
        return None
    difficult = FLAGS.get(row.get("difficult_to_monitor") or "")
    unsafe = FLAGS.get(row.get("unsafe_to_monitor") or "")
    if difficult is None or unsafe is None:
        return None
    return {"id": record_id, "site_id": site_id, "tag": tag, "type": ctype, "service": service, "area": area,
            "equipment": equipment, "difficult_to_monitor": difficult, "unsafe_to_monitor": unsafe}


def parse_components(text: str, site_id: str, existing_tags: set[str]) -> list[dict]:
    """Validate every row of a components CSV into plain components; ValidationError with line numbers."""
    reader = csv.DictReader(io.StringIO(text))
    header = reader.fieldnames or []
    problems = [FieldProblem(name, "column is required", 1) for name in REQUIRED if name not in header]
    problems += [FieldProblem(name, f"unknown column; allowed: {', '.join(COLUMNS)}", 1)
                 for name in header if name not in COLUMNS]
    if problems:
        raise ValidationError(problems)
    rows = list(reader)
    ids = new_ids(len(rows))
    components: list[dict] = []
    seen: dict[str, int] = {}
    for line, row in enumerate(rows, start=2):
        if None in row:
            problems.append(FieldProblem("row", "has more values than the header has columns", line))
            continue
        plain = _canonical(row, ids[line - 2], site_id)
        if plain is None:
            record, row_problems = parse_record(Component, {**row, "id": ids[line - 2], "site_id": site_id}, line)
            problems += row_problems
            if record is None:
                continue
            plain = as_plain(record)
        tag = plain["tag"]
        if tag in existing_tags:
            problems.append(FieldProblem("tag", f"{tag!r} already exists at this site", line))
        elif tag in seen:
            problems.append(FieldProblem("tag", f"{tag!r} repeats line {seen[tag]}", line))
        seen[tag] = line
        components.append(plain)
        if len(problems) >= 50:
            problems.append(FieldProblem("file", "stopped after 50 problems", line))
            break
    if problems:
        raise ValidationError(problems)
    return components


def import_components(store: Store, path: Path | str, site_id: str, actor: str = "") -> int:
    """Import a components CSV into a site in one transaction; returns the number of rows."""
    store.get("sites", site_id)
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ValidationError([FieldProblem("file", f"is not UTF-8 text ({exc.reason})")]) from None
    existing = {r["tag"] for r in store.rows("SELECT tag FROM components WHERE site_id = ? AND deleted = 0",
                                             (site_id,))}
    components = parse_components(text, site_id, existing)
    with store.transaction():
        store.insert_many("components", components, actor)
    return len(components)
