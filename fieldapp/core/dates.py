"""Calendar arithmetic for deadlines and survey windows.

Day counting follows the trade's convention (common practice, no single source): calendar days are
counted on the site's local calendar from the day of detection, which is day 0, so "within 30
days" of a detection on May 1 means on or before May 31.
"""

from __future__ import annotations

import calendar
from collections.abc import Callable
from datetime import date, datetime, timedelta
from zoneinfo import ZoneInfo

HolidayTest = Callable[[date], bool]
PERIOD_MONTHS = {"month": 1, "bimonth": 2, "quarter": 3, "half": 6, "year": 12}


def no_holidays(_day: date) -> bool:
    """A holiday test that knows no holidays."""
    return False


def local_date(moment: datetime, tz_name: str) -> date:
    """The calendar date of an aware moment on a site's local clock."""
    return moment.astimezone(ZoneInfo(tz_name)).date()


def add_months(day: date, months: int) -> date:
    """Add calendar months, clamping to the month's last day (Aug 31 + 4 months = Dec 31)."""
    index = day.month - 1 + months
    year, month = day.year + index // 12, index % 12 + 1
    return date(year, month, min(day.day, calendar.monthrange(year, month)[1]))


def is_business_day(day: date, is_holiday: HolidayTest) -> bool:
    """Monday to Friday and not a holiday."""
    return day.weekday() < 5 and not is_holiday(day)


def add_business_days(day: date, count: int, is_holiday: HolidayTest) -> date:
    """The ``count``-th business day after ``day`` (the start day itself is not counted)."""
    current = day
    remaining = count
    while remaining > 0:
        current += timedelta(days=1)
        if is_business_day(current, is_holiday):
            remaining -= 1
    return current


def add_span(day: date, amount: int, unit: str, is_holiday: HolidayTest = no_holidays) -> date:
    """Add an amount of calendar days, business days, months or years to a date."""
    if unit == "calendar_days":
        return day + timedelta(days=amount)
    if unit == "business_days":
        return add_business_days(day, amount, is_holiday)
    if unit == "months":
        return add_months(day, amount)
    if unit == "years":
        return add_months(day, 12 * amount)
    raise ValueError(f"unknown unit {unit!r}")


def period_bounds(day: date, period: str) -> tuple[date, date]:
    """First and last day of the calendar period (month, bimonth, quarter, half, year) holding ``day``."""
    months = PERIOD_MONTHS[period]
    first_month = (day.month - 1) // months * months + 1
    start = date(day.year, first_month, 1)
    end = add_months(start, months) - timedelta(days=1)
    return start, end


def next_period_bounds(day: date, period: str) -> tuple[date, date]:
    """Bounds of the calendar period after the one holding ``day``."""
    _, end = period_bounds(day, period)
    return period_bounds(end + timedelta(days=1), period)
