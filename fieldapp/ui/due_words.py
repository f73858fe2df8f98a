"""How a due item's standing reads on screen: always a word with the colour, never the colour alone."""

from __future__ import annotations

from datetime import date

from fieldapp.core.due import DueItem
from fieldapp.ui import theme

WORDS = {"overdue": "OVERDUE", "due_soon": "DUE SOON", "later": "due"}


def days(n: int) -> str:
    """'1 day', '5 days'."""
    return f"{n} day" if n == 1 else f"{n} days"


def coloured(text: str, urgency: str) -> str:
    """Markup for a word in its urgency colour, bold."""
    return f"[color={theme.URGENCY_HEX[urgency]}][b]{text}[/b][/color]"


def standing(item: DueItem, today: date) -> str:
    """'OVERDUE since 2026-06-16 (170 days)', 'DUE SOON - in 5 days, by ...', 'due in 40 days, by ...'."""
    urgency = item.urgency(today)
    left = item.days_left(today)
    if left is None:
        return "open, no date (at the next shutdown)"
    if urgency == "overdue":
        since = date.fromordinal(item.due.toordinal() + 1)
        return f"{coloured('OVERDUE', urgency)} since {since} ({days(-left)})"
    when = "today" if left == 0 else f"in {days(left)}"
    if urgency == "due_soon":
        return f"{coloured('DUE SOON', urgency)} - {when}, by {item.due}"
    return f"due {when}, by {item.due}"


def flags(item: DueItem) -> str:
    """The hazard and repeat-leaker flags, as words in strong colour (hazard first)."""
    out = []
    if item.hazard:
        out.append(coloured("HAZARD", "overdue"))  # the full caution is on the leak's screen
    if item.repeat_leaker:
        out.append(coloured("REPEAT LEAKER", "overdue"))
    return "   ".join(out)
