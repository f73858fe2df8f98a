"""Helpers shared by the ``plumebook`` command and its sub-commands (``fieldapp.commands``).

Both ``fieldapp.cli`` and ``fieldapp.commands`` import from here and this module imports neither, so
the imports point one way: cli -> commands -> cmdkit.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import os
from collections.abc import Callable, Iterator, Sequence
from datetime import date
from pathlib import Path
from typing import Any

from fieldapp.core.fields import (
    FieldProblem,
    FieldValueError,
    ValidationError,
    is_blank,
    iso_date,
    number,
)


def default_db() -> Path:
    """PLUMEBOOK_DB, or plumebook.db in the user's data folder."""
    if os.environ.get("PLUMEBOOK_DB"):
        return Path(os.environ["PLUMEBOOK_DB"])
    from platformdirs import user_data_dir

    return Path(user_data_dir("plumebook", appauthor=False)) / "plumebook.db"


def open_store(args: argparse.Namespace):
    """The store named by --db (a folder or a non-file there is refused with one line).

    Only commands that set ``creates_store`` (init, demo, app, bundle merge) make a new store; the
    others refuse a --db that does not exist, so a mistyped path never reads as an empty store.
    """
    from fieldapp.paths import store_file
    from fieldapp.store.base import Store

    path = store_file(args.db)
    if not getattr(args, "creates_store", False) and str(path) != ":memory:" and not path.exists():
        raise ValidationError([FieldProblem("db", f"{path}: no store there; check --db, or create one with "
                                            "`plumebook init`")])
    store = Store(path, actor=args.actor or "")
    resolve_actor(args, store)
    return store


def resolve_actor(args: argparse.Namespace, store) -> str:
    """Who is acting: --actor (or $PLUMEBOOK_ACTOR), else the store's setting (`plumebook config actor`),
    else the login name. Sets ``args.actor``, ``args.actor_source`` and ``store.actor``. With no name at
    all, reads go on and any write is refused (``Store.unnamed_refusal``): '?' or '' never reaches the journal.
    """
    import getpass

    from fieldapp.store.prefs import actor_setting

    name, source = (args.actor or "").strip(), "--actor"
    if not name and os.environ.get("PLUMEBOOK_ACTOR", "").strip():
        name, source = os.environ["PLUMEBOOK_ACTOR"].strip(), "PLUMEBOOK_ACTOR"
    if not name:
        name, source = actor_setting(store), "store setting"
    if not name:
        try:
            name, source = getpass.getuser().strip(), "login name"
        except (OSError, KeyError, ImportError):
            name = ""
    if not name or name == "?":  # reading is fine; a write is refused when it reaches the journal
        store.unnamed_refusal = ("--actor", "nobody is named as acting; give --actor NAME or set the store's "
                                 "default with `plumebook config actor NAME`")
        name, source = "", "nobody"
    args.actor, args.actor_source = name, source
    store.actor = name
    return name


def say_actor(args: argparse.Namespace) -> None:
    """Print who the journal will name for this write, and where the name came from."""
    print(f"acting as {args.actor} ({getattr(args, 'actor_source', '--actor')})")


def parse_day(text: str, field: str = "date") -> date:
    """A YYYY-MM-DD argument inside the supported dates (``fieldapp.core.fields.DATE_RANGE``)."""
    try:
        return iso_date(text)
    except FieldValueError as exc:
        raise ValidationError([FieldProblem(field, str(exc))]) from None


def parse_number(text: str | None, field: str, low: float | None = 0.0, high: float | None = None) -> float | None:
    """A finite number argument inside [low, high] (None when not given; nan, inf refused)."""
    if text is None:
        return None
    try:
        return number(low, high)(text)
    except FieldValueError as exc:
        raise ValidationError([FieldProblem(field, str(exc))]) from None


def parse_whole(text: str | None, field: str, low: int = 0, high: int = 2**63 - 1) -> int | None:
    """A whole-number argument inside [low, high] (None when not given)."""
    if text is None:
        return None
    raw = str(text).strip()
    digits = raw.removeprefix("-")
    if not (digits.isascii() and digits.isdigit()) or len(raw) > 20 or not low <= int(raw) <= high:
        raise ValidationError([FieldProblem(field, f"{raw[:40]!r} is not allowed; write a whole number from "
                                            f"{low} to {high}")])
    return int(raw)


def required_text(text: str | None, field: str) -> str | None:
    """An optional text argument that, when given, must not be empty (None when not given)."""
    if text is not None and is_blank(text):
        raise ValidationError([FieldProblem(field, "is empty; give a value or leave the option out")])
    return text


def emit_json(value: Any) -> None:
    """Print JSON with dates as ISO text; NaN and infinity are never printed (ValueError, a bug)."""
    print(json.dumps(value, indent=2, default=str, ensure_ascii=False, allow_nan=False))


def emit_table(rows: Sequence[dict[str, Any]], columns: Sequence[str]) -> None:
    """Print rows as an aligned text table."""
    if not rows:
        print("(none)")
        return
    cells = [[("" if r.get(c) is None else str(r.get(c))) for c in columns] for r in rows]
    widths = [min(MAX_CELL, max(len(c), *(len(row[i]) for row in cells))) for i, c in enumerate(columns)]
    print("  ".join(c.ljust(w) for c, w in zip(columns, widths, strict=True)).rstrip())
    for row in cells:
        print("  ".join(clip(v, w).ljust(w) for v, w in zip(row, widths, strict=True)).rstrip())


MAX_CELL = 48


def clip(text: str, width: int) -> str:
    """Text cut to ``width`` characters at a word boundary where one is near, ending with an ellipsis."""
    if len(text) <= width:
        return text
    cut = text[:width - 1]
    space = cut.rfind(" ")
    if space >= width // 2:
        cut = cut[:space]
    return cut.rstrip(" ,;:") + "…"


def progress(total: int | None, what: str):
    """A progress bar on stderr (tqdm) when stderr is a terminal; silent otherwise (CI, pipes, files).

    Use as ``with progress(n, "rows") as bar: ... bar.update(1)``.
    """
    import sys

    from tqdm import tqdm

    interactive = hasattr(sys.stderr, "isatty") and sys.stderr.isatty()
    return tqdm(total=total, desc=what, unit=" " + what.split()[-1], file=sys.stderr, disable=not interactive,
                leave=False, dynamic_ncols=True)


@contextlib.contextmanager
def steps(what: str) -> Iterator[Callable[[int, int], None]]:
    """A progress bar (see ``progress``) driven by a ``tick(done, total)`` callback, for work whose size the
    called function learns itself (bundle make and merge, export). Silent when stderr is not a terminal."""
    with progress(None, what) as bar:
        def tick(done: int, total: int) -> None:
            bar.update(done - bar.n)
            if bar.total != total:
                bar.total = total
                bar.refresh()
        yield tick
