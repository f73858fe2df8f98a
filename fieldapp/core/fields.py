"""Field parsers shared by every record: each turns raw input into a typed value or a problem.

A parser takes the raw value (a string from a form or CSV, or an already-typed value) and returns
the typed value, or raises ``FieldValueError`` with a sentence saying what is allowed. The record
layer turns those into ``FieldProblem`` entries that name the field.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from datetime import date, datetime
from enum import StrEnum
from typing import Any
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

from fieldapp.core.enums import allowed


class FieldValueError(ValueError):
    """Raised by a parser: the message says what is allowed."""


@dataclass(frozen=True, slots=True)
class FieldProblem:
    """One problem with one field of one record."""

    field: str
    message: str
    line: int | None = None

    def __str__(self) -> str:
        where = f"line {self.line}: " if self.line is not None else ""
        return f"{where}{self.field}: {self.message}"


class ValidationError(ValueError):
    """Raised when a user action is refused; carries every problem found, nothing was written."""

    def __init__(self, problems: list[FieldProblem]):
        self.problems = list(problems)
        super().__init__("; ".join(str(p) for p in self.problems))


Parser = Callable[[Any], Any]

DATE_MIN = date(1900, 1, 1)
DATE_MAX = date(2999, 12, 31)
"""Supported dates: 1900-01-01 to 2999-12-31, so every deadline and window computed from one (years
added) stays inside what Python's calendar holds (year 9999)."""
DATE_RANGE = f"{DATE_MIN.isoformat()} to {DATE_MAX.isoformat()}"
CONTROL_CHARACTERS = frozenset(chr(c) for c in range(32)) | {"\x85", "\u2028", "\u2029"}  # C0 and line breaks


def is_blank(value: Any) -> bool:
    """True for None and for strings that are empty after stripping."""
    return value is None or (isinstance(value, str) and value.strip() == "")


def has_control(value: str, allow_breaks: bool = False) -> bool:
    """True when a text holds a control character (NUL, tab, line breaks...); ``allow_breaks`` lets CR/LF/tab pass."""
    if allow_breaks:
        value = value.replace("\n", "").replace("\r", "").replace("\t", "")
    return not CONTROL_CHARACTERS.isdisjoint(value)


def text(max_len: int = 500, single_line: bool = False) -> Parser:
    """A free text of at most ``max_len`` characters, stripped.

    ``single_line`` texts (ids, tags, names, marker labels) refuse NUL, line breaks, tabs and other
    control characters; free notes keep whatever was typed.
    """

    def parse(value: Any) -> str:
        value = str(value).strip()
        if len(value) > max_len:
            raise FieldValueError(f"at most {max_len} characters allowed, got {len(value)}")
        if single_line and has_control(value):
            raise FieldValueError("NUL, line breaks, tabs or other control characters are not allowed")
        return value

    return parse


def enum_of(enum_cls: type[StrEnum]) -> Parser:
    """One of the enumeration's spellings (case and surrounding spaces ignored)."""

    def parse(value: Any) -> StrEnum:
        if isinstance(value, enum_cls):
            return value
        key = str(value).strip().lower().replace("-", "_").replace(" ", "_")
        try:
            return enum_cls(key)
        except ValueError:
            raise FieldValueError(f"{value!r} is not allowed; allowed: {allowed(enum_cls)}") from None

    return parse


def number(minimum: float | None = None, maximum: float | None = None, unit: str = "") -> Parser:
    """A finite decimal number inside [minimum, maximum]."""

    def parse(value: Any) -> float:
        if isinstance(value, bool):
            raise FieldValueError("a number is required")
        try:
            result = float(str(value).strip().replace(",", "")) if isinstance(value, str) else float(value)
        except (TypeError, ValueError):
            raise FieldValueError(f"{value!r} is not a number") from None
        if not math.isfinite(result):
            raise FieldValueError("a finite number is required")
        suffix = f" {unit}" if unit else ""
        if minimum is not None and result < minimum:
            raise FieldValueError(f"must be at least {minimum:.15g}{suffix}, got {result:.15g}")
        if maximum is not None and result > maximum:
            raise FieldValueError(f"must be at most {maximum:.15g}{suffix}, got {result:.15g}")
        return result

    return parse


def flag(value: Any) -> bool:
    """A yes/no value: true/false, yes/no, 1/0, y/n."""
    if isinstance(value, bool):
        return value
    key = str(value).strip().lower()
    if key in {"1", "true", "yes", "y"}:
        return True
    if key in {"0", "false", "no", "n", ""}:
        return False
    raise FieldValueError(f"{value!r} is not allowed; allowed: yes, no, true, false, 1, 0")


def iso_date(value: Any) -> date:
    """A calendar date written YYYY-MM-DD."""
    if isinstance(value, datetime):
        raise FieldValueError("a date without a time is required (YYYY-MM-DD)")
    if isinstance(value, date):
        result = value
    else:
        raw = str(value).strip()
        if not raw:
            raise FieldValueError("is empty; write a date YYYY-MM-DD")
        try:
            result = date.fromisoformat(raw) if len(raw) == 10 and raw[4] + raw[7] == "--" else None
        except ValueError:
            result = None
        if result is None:
            raise FieldValueError(f"{value!r} is not a date; write YYYY-MM-DD")
    if not DATE_MIN <= result <= DATE_MAX:
        raise FieldValueError(f"{result.isoformat()} is outside the supported dates {DATE_RANGE}")
    return result


def aware_datetime(value: Any) -> datetime:
    """A moment with its UTC offset, ISO 8601 (2026-05-01T08:30:00-06:00)."""
    if isinstance(value, datetime):
        result = value
    else:
        try:
            result = datetime.fromisoformat(str(value).strip())
        except ValueError:
            raise FieldValueError(f"{value!r} is not a date and time; write ISO 8601 with offset") from None
    if result.tzinfo is None or result.utcoffset() is None:
        raise FieldValueError("a UTC offset is required (for example 2026-05-01T08:30:00-06:00)")
    if not DATE_MIN <= result.date() <= DATE_MAX:
        raise FieldValueError(f"{result.date().isoformat()} is outside the supported dates {DATE_RANGE}")
    return result


def time_zone(value: Any) -> str:
    """An IANA time zone name such as America/Denver."""
    name = str(value).strip()
    try:
        ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        raise FieldValueError(f"{name!r} is not an IANA time zone name (for example America/Chicago)") from None
    return name


def text_list(value: Any) -> tuple[str, ...]:
    """A list of short texts: a list, or one string separated by semicolons."""
    if isinstance(value, (list, tuple)):
        items = [str(v).strip() for v in value]
    else:
        items = [part.strip() for part in str(value).split(";")]
    return tuple(item for item in items if item)
