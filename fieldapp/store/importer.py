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

Limits: one value (quoted or not) may hold at most 131,072 characters (``FIELD_LIMIT``) and a
header at most 64 columns (``MAX_COLUMNS``); a tag refuses NUL, line breaks, tabs and other
control characters. A file over a limit is refused with one line naming it.

The whole file is checked first; a file with any bad row imports nothing. An import is one
transaction and one journal entry holding every row (``fieldapp.store.batches``).
"""

from __future__ import annotations

import csv
import io
from collections import Counter
from collections.abc import Callable
from itertools import repeat
from pathlib import Path

from fieldapp.core.enums import ComponentType, Service
from fieldapp.core.fields import FieldProblem, ValidationError, has_control
from fieldapp.core.records import Component, as_plain, parse_record
from fieldapp.store.base import Store, new_ids
from fieldapp.store.bulk import gc_paused

FIELD_LIMIT = 131_072
MAX_COLUMNS = 64
COLUMNS = ("tag", "type", "service", "area", "equipment", "difficult_to_monitor", "unsafe_to_monitor")
REQUIRED = ("tag", "type", "service")


TYPES = frozenset(t.value for t in ComponentType)
SERVICES = frozenset(s.value for s in Service)
FLAGS = {"": 0, "no": 0, "yes": 1, "0": 0, "1": 1, "false": 0, "true": 1}


OUT_COLUMNS = ("id", "tag", "type", "service", "area", "equipment", "difficult_to_monitor", "unsafe_to_monitor")
_ODD_BREAKS = ("\x0b", "\x0c", "\x1c", "\x1d", "\x1e", "\x85", "\u2028", "\u2029")


def _plain_text(text: str) -> bool:
    """True when a text has no quote character and no line breaks other than CR and LF.

    Such a text is split on commas and line ends exactly as ``csv.reader`` splits it
    (tests/test_import.py checks this), only several times faster.
    """
    return '"' not in text and not any(ch in text for ch in _ODD_BREAKS)


def split_csv(text: str) -> list[tuple[int, list[str]]]:
    """Rows of a CSV text as (line number, values), blank lines left out.

    The line number is the row's last physical line (a quoted value may span several).
    """
    if _plain_text(text):
        return [(n, line.split(",")) for n, line in enumerate(text.splitlines(), start=1) if line]
    reader = csv.reader(io.StringIO(text, newline=""))
    rows: list[tuple[int, list[str]]] = []
    try:
        for row in reader:
            if row:
                rows.append((reader.line_num, row))
    except csv.Error as exc:
        if "field limit" in str(exc):
            message = f"a value is longer than {FIELD_LIMIT:,} characters (the limit of one value)"
        else:
            message = f"not readable as CSV ({exc})"
        raise ValidationError([FieldProblem("file", message, reader.line_num)]) from None
    return rows


def _plain_columns(text: str) -> tuple[list[str], dict[str, list[str]]] | None:
    """Header and columns of a plain text (see ``_plain_text``) with no blank line, one width and no
    repeated column name; else None."""
    if not _plain_text(text):
        return None
    lines = text.splitlines()
    if not lines or "" in lines:
        return None
    header, body = lines[0].split(","), lines[1:]
    width = len(header)
    if len(set(header)) != width:  # a repeated name would collapse two columns into one
        return None
    if body and set(map(str.count, body, repeat(","))) != {width - 1}:
        return None
    cells = ",".join(body).split(",") if body else []
    return header, {name: cells[i::width] for i, name in enumerate(header)}


def _canonical_columns(columns: dict[str, list[str]], ids: list[str],
                       existing_tags: set[str]) -> dict[str, list] | None:
    """Columns of a file whose every cell is already canonical, checked column by column; else None.

    Accepts only values that ``parse_record`` would accept unchanged (and no repeated or existing
    tag), so it gives what the row-by-row path gives (tests/test_import.py); any doubt returns None.
    """
    if not ids:
        return {name: [] for name in OUT_COLUMNS}
    blank = [""] * len(ids)
    tags, types, services = (columns.get(name, blank) for name in REQUIRED)
    area, equipment = columns.get("area", blank), columns.get("equipment", blank)
    difficult, unsafe = columns.get("difficult_to_monitor", blank), columns.get("unsafe_to_monitor", blank)
    if not (set(types) <= TYPES and set(services) <= SERVICES and set(difficult) <= FLAGS.keys()
            and set(unsafe) <= FLAGS.keys()):
        return None
    if len(set(tags)) != len(tags) or not existing_tags.isdisjoint(tags):
        return None
    for texts, limit, required in ((tags, 80, True), (area, 120, False), (equipment, 120, False)):
        if max(map(len, texts)) > limit or (required and min(map(len, texts)) == 0):
            return None
        if any(t != t.strip() for t in texts) or (required and has_control("".join(texts))):
            return None
    flag = FLAGS.__getitem__
    return {"id": ids, "tag": tags, "type": types, "service": services, "area": area, "equipment": equipment,
            "difficult_to_monitor": list(map(flag, difficult)), "unsafe_to_monitor": list(map(flag, unsafe))}


def _row_by_row(header: list[str], body: list[tuple[int, list[str]]], ids: list[str], site_id: str,
                existing_tags: set[str]) -> dict[str, list]:
    """Columns parsed one row at a time, every problem named by its line and field."""
    problems: list[FieldProblem] = []
    out: list[tuple] = []
    seen: dict[str, int] = {}
    for (line, values), record_id in zip(body, ids, strict=True):
        if len(values) > len(header):
            problems.append(FieldProblem("row", "has more values than the header has columns", line))
            continue
        row = dict(zip(header, values, strict=False))
        fast = _canonical_columns({name: [value] for name, value in row.items()}, [record_id], set())
        if fast is not None:
            plain = {name: value[0] for name, value in fast.items()}
        else:
            record, row_problems = parse_record(Component, {**row, "id": record_id, "site_id": site_id}, line)
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
        out.append(tuple(int(v) if isinstance(v, bool) else v for v in (plain[c] for c in OUT_COLUMNS)))
        if len(problems) >= 50:
            problems.append(FieldProblem("file", "stopped after 50 problems", line))
            break
    if problems:
        raise ValidationError(problems)
    return {name: list(values) for name, values in zip(OUT_COLUMNS, zip(*out, strict=True), strict=True)}


def _short(name: str) -> str:
    return name if len(name) <= 40 else f"{name[:37]}..."


def _header_problems(header: list[str]) -> list[FieldProblem]:
    """Problems of a header row in one pass (linear in its length); long names are shortened."""
    if len(header) > MAX_COLUMNS:
        return [FieldProblem("header", f"has {len(header):,} columns; at most {MAX_COLUMNS} allowed "
                             f"({', '.join(COLUMNS)})", 1)]
    counts = Counter(header)
    problems = [FieldProblem(name, "column is required", 1) for name in REQUIRED if name not in counts]
    problems += [FieldProblem(_short(name), f"unknown column; allowed: {', '.join(COLUMNS)}", 1)
                 for name in header if name not in COLUMNS]
    return problems + [FieldProblem(_short(name), "column appears twice", 1) for name in sorted(counts)
                       if counts[name] > 1]


def parse_components(text: str, site_id: str, existing_tags: set[str]) -> dict[str, list]:
    """Validate every row of a components CSV into columns named as in ``OUT_COLUMNS`` (ids drawn here).

    Raises ValidationError naming the line and field of each problem (at most 50). A file already
    in canonical spelling is checked column by column; any other goes row by row.
    """
    plain = _plain_columns(text)
    if plain is not None:
        header, columns = plain
        if problems := _header_problems(header):
            raise ValidationError(problems)
        fast = _canonical_columns(columns, new_ids(len(columns[header[0]])), existing_tags)
        if fast is not None:
            return fast
    rows = split_csv(text)
    header = rows[0][1] if rows else []
    if problems := _header_problems(header):
        raise ValidationError(problems)
    body = rows[1:]
    ids = new_ids(len(body))
    if {len(values) for _line, values in body} <= {len(header)}:  # every row exactly as wide as the header
        columns = {name: [values[i] for _line, values in body] for i, name in enumerate(header)}
        fast = _canonical_columns(columns, ids, existing_tags)
        if fast is not None:
            return fast
    return _row_by_row(header, body, ids, site_id, existing_tags)


def import_components(store: Store, path: Path | str, site_id: str, actor: str = "",
                      progress: Callable[[int, int], None] | None = None) -> int:
    """Import a components CSV into a site in one transaction and one journal entry; returns the count.

    ``progress(done, 3)`` is called after reading, checking and writing (the rows are checked as a whole)."""
    from fieldapp.paths import input_file

    tick = progress or (lambda done, total: None)
    try:
        text = input_file(path, "file").read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ValidationError([FieldProblem("file", f"{path}: is not UTF-8 text ({exc.reason})")]) from None
    tick(1, 3)
    with gc_paused(), store.transaction():
        store.get("sites", site_id)
        existing = {r[0] for r in store.conn.execute(
            "SELECT tag FROM components WHERE site_id = ? AND deleted = 0", (site_id,))}
        columns = parse_components(text, site_id, existing)
        tick(2, 3)
        count = store.insert_batch("components", columns, {"site_id": site_id, "deleted": 0}, actor)
    tick(3, 3)
    return count
