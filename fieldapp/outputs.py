"""The demo's output folder: every output the project can make for the scenario."""

from __future__ import annotations

from datetime import UTC, datetime
from pathlib import Path

from fieldapp.atomic import write_text
from fieldapp.store.base import Store
from fieldapp.store.due import due_list
from sync.tables import DUE_COLUMNS, due_rows, to_csv


def write_demo_outputs(store: Store, folder: Path) -> Path:
    """Write the due list (CSV) for today into ``folder``; returns the folder."""
    folder.mkdir(parents=True, exist_ok=True)
    as_of = datetime.fromtimestamp(store.wall(), UTC).date()
    items, _problems = due_list(store, as_of)
    write_text(folder / "due.csv", to_csv(due_rows(items, as_of), DUE_COLUMNS))
    return folder
