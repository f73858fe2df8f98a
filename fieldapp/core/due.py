"""Due items: what the rules demand next, computed from records, never stored.

A due item is a survey window or a leak deadline with its date, the rule behind it and its
standing on a date. ``select`` keeps what a supervisor asked for and sorts overdue first.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from datetime import date

from fieldapp.core.lifecycle import Deadline
from fieldapp.core.windows import Window

# How close a due date must be to be shown as "due soon": our own display choice (common practice, no
# source) - a week gives a crew time to plan a visit; it changes no deadline.
DUE_SOON_DAYS = 7


@dataclass(frozen=True, slots=True)
class DueItem:
    """One thing due: a survey window or a leak deadline."""

    kind: str
    site_id: str
    site_name: str
    due: date | None
    rule: str
    citation: str
    status: str
    earliest: date | None = None
    method: str = ""
    leak_id: str = ""
    tag: str = ""
    component_type: str = ""
    repeat_leaker: bool = False
    note: str = ""
    hazard: bool = False

    def days_left(self, as_of: date) -> int | None:
        """Days from ``as_of`` to the due date (negative when overdue)."""
        return None if self.due is None else (self.due - as_of).days

    def overdue(self, as_of: date) -> bool:
        """Past its due date on ``as_of``."""
        return self.due is not None and as_of > self.due

    def urgency(self, as_of: date, soon_days: int = DUE_SOON_DAYS) -> str:
        """'overdue', 'due_soon' (due within ``soon_days``) or 'later' (also when there is no date)."""
        days = self.days_left(as_of)
        if days is None:
            return "later"
        return "overdue" if days < 0 else ("due_soon" if days <= soon_days else "later")


def from_window(site_id: str, site_name: str, window: Window) -> DueItem:
    """The due item of a survey window."""
    return DueItem("survey", site_id, site_name, window.latest, window.rule, window.citation, window.status,
                   earliest=window.earliest, method=window.method.value, note=window.basis)


def from_deadline(site_id: str, site_name: str, deadline: Deadline, leak_id: str, tag: str,
                  component_type: str, repeat_leaker: bool = False, hazard: bool = False) -> DueItem:
    """The due item of an outstanding leak deadline."""
    return DueItem(deadline.kind, site_id, site_name, deadline.due, deadline.rule, deadline.citation,
                   deadline.status, leak_id=leak_id, tag=tag, component_type=component_type,
                   repeat_leaker=repeat_leaker, note=deadline.note, hazard=hazard)


def select(items: Iterable[DueItem], as_of: date, within_days: int | None = None) -> list[DueItem]:
    """Items overdue or due within ``within_days`` of ``as_of`` (all if None), overdue first, then by date."""
    chosen = [i for i in items
              if within_days is None or (i.due is not None and (i.due - as_of).days <= within_days)]
    far = date.max
    return sorted(chosen, key=lambda i: (not i.overdue(as_of), i.due or far, i.site_name, i.tag, i.kind))
