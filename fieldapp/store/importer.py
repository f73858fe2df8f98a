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

from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.core.records import Component, as_plain, parse_record
from fieldapp.store.base import Store, new_id

COLUMNS = ("tag", "type", "service", "area", "equipment", "difficult_to_monitor", "unsafe_to_monitor")
REQUIRED = ("tag", "type", "service")


def parse_components(text: str, site_id: str, existing_tags: set[str]) -> list[Component]:
    """Validate every row of a components CSV; ValidationError with line numbers if any is bad."""
    reader = csv.DictReader(io.StringIO(text))
    header = reader.fieldnames or []
    problems = [FieldProblem(name, "column is required", 1) for name in REQUIRED if name not in header]
    problems += [FieldProblem(name, f"unknown column; allowed: {', '.join(COLUMNS)}", 1)
                 for name in header if name not in COLUMNS]
    if problems:
        raise ValidationError(problems)
    components: list[Component] = []
    seen: dict[str, int] = {}
    for line, row in enumerate(reader, start=2):
        if None in row:
            problems.append(FieldProblem("row", "has more values than the header has columns", line))
            continue
        record, row_problems = parse_record(Component, {**row, "id": new_id(), "site_id": site_id}, line)
        problems += row_problems
        if record is None:
            continue
        if record.tag in existing_tags:
            problems.append(FieldProblem("tag", f"{record.tag!r} already exists at this site", line))
        elif record.tag in seen:
            problems.append(FieldProblem("tag", f"{record.tag!r} repeats line {seen[record.tag]}", line))
        seen[record.tag] = line
        components.append(record)
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
        store.insert_many("components", [as_plain(c) for c in components], actor)
    return len(components)
