"""The record gate for merged journal entries: every value a bundle carries must be one a form could write.

A local write stores ``as_plain(parse_record(...))`` of a record plus the store's own columns
(``deleted``; ``recorded_at`` for actions), and journals exactly that row. An entry received in a
bundle is held to the same: its ``new`` (and ``old``) rows name every column of the table and no
other, its ``id`` is the entry's ``row_id``, and each value, run through the field's core parser
(``fieldapp.core.records``), comes back unchanged (its stored form). Actions are append-only, so a
bundle may only insert them. A stamp more than ``MAX_SKEW_MS`` ahead of the receiving store's clock
is refused: it would win every later edit of that field.

Checks of text and integer values are memoised per table and field, because a bundle repeats most values
(types, services, site ids); ids are checked without the memo.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from datetime import UTC, datetime
from typing import Any

from fieldapp.core import fields as f
from fieldapp.core.records import INTEGER_FIELDS, RECORD_TYPES, plain
from fieldapp.store.base import APPEND_ONLY_TABLES

MAX_SKEW_MS = 24 * 3600 * 1000  # 24 h: more than any honest tablet clock drift, far less than a deadline
MAX_INT = 2**53  # integers a JSON reader on any platform keeps exact; SQLite's 64-bit limit is far above
Check = Callable[[Any], str | None]
MEASURED_UNITS = ("kg/h", "lb/h", "scf/h", "m3/h")  # as the leak form allows (fieldapp/store/ops.py add_leak)


def _stored_column(value: Any) -> str | None:
    if type(value) is not int or value not in (0, 1):
        return f"{value!r} is not allowed; allowed: 0, 1"
    return None


def _recorded_at(value: Any) -> str | None:
    if type(value) is not str or len(value) > 40:
        return "a date and time text is required"
    try:
        f.aware_datetime(value)
    except f.FieldValueError as exc:
        return str(exc)
    return None


def _kind_of(annotation: str, name: str) -> tuple[type, ...]:
    """The JSON types a field's stored form has, from its annotation."""
    if annotation.startswith("bool"):
        return (int,)
    if name in INTEGER_FIELDS:
        return (int,)
    if annotation.startswith(("float", "int")):
        return (int, float)
    if annotation.startswith("tuple"):
        return (list,)
    return (str,)


def _field_check(fl: dataclasses.Field) -> Check:
    parse, required = fl.metadata["parse"], fl.metadata["required"]
    blank = plain(fl.default)
    kinds = _kind_of(str(fl.type), fl.name)
    flag = str(fl.type).startswith("bool")

    def check(value: Any) -> str | None:
        if value is None or value == "" or value == []:
            if required:
                return "is required"
            if value == blank and type(value) is type(blank):
                return None
            return f"an empty value is stored as {blank!r}, got {value!r}"
        if type(value) not in kinds:
            return f"{value!r} has the wrong type ({type(value).__name__})"
        if type(value) is int and abs(value) > MAX_INT:
            return f"{value} is out of range"
        if flag:
            return None if value in (0, 1) else f"{value!r} is not allowed; allowed: 0, 1"
        if type(value) is float and not math.isfinite(value):
            return "a finite number is required"
        if kinds == (list,) and any(type(v) is not str for v in value):
            return "a list of texts is required"
        try:
            stored = plain(parse(value))
        except f.FieldValueError as exc:
            return str(exc)
        if stored != value:
            return f"{value!r} is not in its stored form ({stored!r})"
        return None

    return check


def _checks(table: str) -> dict[str, Check]:
    out = {fl.name: _field_check(fl) for fl in dataclasses.fields(RECORD_TYPES[table])}
    if table in APPEND_ONLY_TABLES:
        out["recorded_at"] = _recorded_at
    else:
        out["deleted"] = _stored_column
    return out


CHECKS: dict[str, dict[str, Check]] = {table: _checks(table) for table in RECORD_TYPES}
COLUMNS: dict[str, frozenset[str]] = {table: frozenset(checks) for table, checks in CHECKS.items()}
_SEEN: dict[str, dict[str, set]] = {table: {name: set() for name in checks} for table, checks in CHECKS.items()}


def _shape_problem(table: str, row_id: str, row: Any) -> str | None:
    if not isinstance(row, dict):
        return "its values are not an object"
    if row.keys() != COLUMNS[table]:
        missing, extra = sorted(COLUMNS[table] - row.keys()), sorted(row.keys() - COLUMNS[table])
        return f"its values do not name the columns of {table} (missing {missing}, unknown {extra})"
    if row["id"] != row_id:
        return f"its values are of record {str(row['id'])[:40]!r}, not of the record it names"
    value = row["id"]
    if type(value) is not str or not 0 < len(value) <= 64 or value != value.strip():
        return "id: at most 64 characters of text allowed"
    return None


def _column_problem(table: str, name: str, values: list) -> tuple[int, str] | None:
    """(index, message) of the first value of one column a form would not write, or None.

    Each distinct value is parsed once; texts and true ints already accepted are remembered. A
    column mixing types (1, True, 1.0 are equal in a set) is checked value by value.
    """
    check, seen = CHECKS[table][name], _SEEN[table][name]
    kinds = set(map(type, values))
    kind = next(iter(kinds)) if len(kinds) == 1 else None
    try:
        distinct = set(values) if kind is not None else None
    except TypeError:  # lists are not hashable
        distinct = None
    memo = kind is str or kind is int
    todo = values if distinct is None else (distinct - seen if memo else distinct)
    for value in todo:
        if wrong := check(value):
            at = next((i for i, v in enumerate(values) if type(v) is type(value) and (v is value or v == value)), 0)
            return at, f"{name}: {wrong}"
    if memo:
        if len(seen) > 50_000:
            seen.clear()
        seen.update(todo)
    return None


def row_problem(table: str, row_id: str, row: Any) -> str | None:
    """What keeps a journalled row from being one a local write makes, or None."""
    if wrong := _shape_problem(table, row_id, row):
        return wrong
    for name, value in row.items():
        if name != "id" and (wrong := _column_problem(table, name, [value])):
            return wrong[1]
    return None


def entry_problem(e: dict[str, Any], now_ms: int | None) -> str | None:
    """What is wrong with one plain entry's shape: operation, columns, ids, old row, stamp (values: see below)."""
    table, op = e["tbl"], e["op"]
    if table in APPEND_ONLY_TABLES and op != "insert":
        return f"{table} are append-only: a bundle may not {op} one"
    if wrong := _shape_problem(table, e["row_id"], e["new"]):
        return f"new {wrong}"
    if op == "insert":
        if e["old"] is not None:
            return "an insert has no old values"
    else:
        old = e["old"]  # its values need no parser: the merge checks the changed ones against the record's history
        if not isinstance(old, dict) or old.keys() != COLUMNS[table] or old["id"] != e["row_id"]:
            return f"old values must be the whole record {str(e['row_id'])[:40]} as it was"
        if op == "delete" and (e["new"]["deleted"] != 1 or {**e["old"], "deleted": 1} != e["new"]):
            return "a delete only sets deleted = 1"
        if op == "update" and e["new"]["deleted"] != e["old"]["deleted"]:
            return "an update does not change deleted (that is a delete)"
    if now_ms is not None and (ahead := int(e["hlc"][:15]) - now_ms) > MAX_SKEW_MS:
        moment = datetime.fromtimestamp(int(e["hlc"][:15]) / 1000, UTC).isoformat(timespec="seconds")
        return (f"is stamped {moment}, {ahead / 3_600_000:.0f} h ahead of this store's clock (at most "
                f"{MAX_SKEW_MS // 3_600_000} h allowed): set the sending tablet's clock, then make the bundle again")
    return None


def entries_problem(entries: list[dict[str, Any]], now_ms: int | None) -> tuple[dict[str, Any], str] | None:
    """The first plain entry that is wrong and why, or None: every entry's shape, then every ``new``
    value, column by column (each distinct value through its core parser once)."""
    by_table: dict[str, list[dict[str, Any]]] = {}
    for e in entries:
        if wrong := entry_problem(e, now_ms):
            return e, wrong
        by_table.setdefault(e["tbl"], []).append(e)
    for table, group in by_table.items():
        rows = [e["new"] for e in group]
        for name in CHECKS[table]:
            if name != "id" and (wrong := _column_problem(table, name, [r[name] for r in rows])):
                return group[wrong[0]], f"new {wrong[1]}"
    for e in by_table.get("leaks", ()):  # the one rule across fields that the leak form applies (store/ops.py)
        if e["new"]["measured_rate"] is not None and e["new"]["measured_unit"] not in MEASURED_UNITS:
            return e, f"new measured_unit: allowed with a measured rate: {', '.join(MEASURED_UNITS)}"
    return None


def entry_name(e: dict[str, Any]) -> str:
    """How a message names an entry: device, sequence number, table and record."""
    return f"entry {str(e.get('device_id'))[:8]}:{e.get('seq')} ({e.get('tbl')} {str(e.get('row_id'))[:40]})"
