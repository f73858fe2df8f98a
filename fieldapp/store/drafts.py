"""Half-filled forms saved as the user types, so a closed or killed app loses nothing.

Drafts are working copies, not records: they are not journalled, and a form's draft is cleared when
the form is saved as a record (in the same transaction as the record where possible).
"""

from __future__ import annotations

import json
from typing import Any

from fieldapp.store.base import Store


def save_draft(store: Store, form: str, payload: dict[str, Any]) -> None:
    """Keep the current values of a form (one small transaction)."""
    with store.transaction():
        store.conn.execute(
            "INSERT INTO drafts(form, payload, saved_at) VALUES (?, ?, ?) ON CONFLICT(form) DO UPDATE SET "
            "payload = excluded.payload, saved_at = excluded.saved_at",
            (form, json.dumps(payload, default=str), store.now_text()))


def load_draft(store: Store, form: str) -> dict[str, Any] | None:
    """The saved values of a form, or None."""
    row = store.conn.execute("SELECT payload FROM drafts WHERE form = ?", (form,)).fetchone()
    return json.loads(row[0]) if row else None


def clear_draft(store: Store, form: str) -> None:
    """Forget a form's draft."""
    with store.transaction():
        store.conn.execute("DELETE FROM drafts WHERE form = ?", (form,))
