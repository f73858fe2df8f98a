"""Plain tables (lists of dicts with a fixed column order) shared by CSV output and reports."""

from __future__ import annotations

import csv
import io
from collections.abc import Iterable, Sequence
from datetime import date
from typing import Any

from fieldapp.core.due import DueItem

DUE_COLUMNS = ("standing", "kind", "due", "days_left", "earliest", "site", "site_id", "method", "tag",
               "component_type", "leak_id", "hazard", "repeat_leaker", "rule", "citation", "status", "note")


# What each standing word means; printed by `plumebook due --help` (STANDING_HELP).
STANDINGS = (
    ("overdue", "the due date has passed and the work is not recorded"),
    ("due today", "the due date is today"),
    ("due now", "a survey window is open now: survey any day up to the due date"),
    ("due in N days", "a leak deadline N days ahead (count from the as-of date)"),
    ("window opens DATE", "a survey before DATE comes too soon after the last to count; nothing to do yet"),
    ("no fixed date", "the deadline has no date yet (e.g. repair at the next shutdown)"),
)
STANDING_HELP = "; ".join(f"'{word}': {meaning}" for word, meaning in STANDINGS)


def standing(item: DueItem, as_of: date) -> str:
    """The item's standing on ``as_of`` in words that need no legend (see ``STANDINGS``)."""
    if item.overdue(as_of):
        return "overdue"
    if item.earliest is not None and item.earliest > as_of:
        return f"window opens {item.earliest.isoformat()}"
    left = item.days_left(as_of)
    if left is None:
        return "no fixed date"
    if left == 0:
        return "due today"
    if item.earliest is not None:
        return "due now"
    return f"due in {left} day" + ("" if left == 1 else "s")


def due_rows(items: Iterable[DueItem], as_of: date) -> list[dict[str, Any]]:
    """Due items as rows in DUE_COLUMNS order."""
    return [{
        "standing": standing(i, as_of), "kind": i.kind, "due": i.due.isoformat() if i.due else "",
        "days_left": i.days_left(as_of), "earliest": i.earliest.isoformat() if i.earliest else "",
        "site": i.site_name, "site_id": i.site_id, "method": i.method, "tag": i.tag,
        "component_type": i.component_type, "leak_id": i.leak_id, "hazard": i.hazard,
        "repeat_leaker": i.repeat_leaker,
        "rule": i.rule, "citation": i.citation, "status": i.status, "note": i.note,
    } for i in items]


def to_csv(rows: Iterable[dict[str, Any]], columns: Sequence[str]) -> str:
    """CSV text with a header row, in the given column order (booleans as true/false)."""
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n")  # RFC 4180; also makes csv quote fields holding \r
    writer.writerow(columns)
    for row in rows:
        writer.writerow([cell(row[c]) for c in columns])
    return out.getvalue()


FORMULA_START = ("=", "+", "-", "@", "\t", "\r", "'")


def guard(text: str) -> str:
    """A text cell a spreadsheet will not run as a formula: one apostrophe before a leading = + - @ tab CR.

    A text that already starts with an apostrophe gets one too, so ``unguard`` restores every text exactly.
    Numbers are never guarded (a negative number stays a number).
    """
    return "'" + text if text.startswith(FORMULA_START) else text


def unguard(text: str) -> str:
    """The text ``guard`` was given (for readers of our CSV files)."""
    return text[1:] if text.startswith("'") else text


def cell(value: Any) -> Any:
    """A CSV cell: true/false for booleans, empty for None, floats to 6 significant figures, texts guarded
    against formula execution (``guard``), lists joined with ';'."""
    if isinstance(value, list | tuple):
        value = ";".join(str(v) for v in value)
    if isinstance(value, str):
        return guard(value)
    if value is True:
        return "true"
    if value is False:
        return "false"
    if value is None:
        return ""
    if isinstance(value, float):
        return f"{value:.6g}"
    return value
