"""Preferences kept per store file (this tablet's store): the unit system the crew types in.

A preference is not a record: it is not journalled and does not travel in bundles; every record
keeps the units it was typed in.
"""

from __future__ import annotations

from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.core.weather_units import DEFAULT_SYSTEM, SYSTEMS, UnitSystem
from fieldapp.store.base import Store

UNITS_KEY = "unit_system"


def unit_system(store: Store) -> UnitSystem:
    """The store's unit system (°C and m/s unless set)."""
    row = store.conn.execute("SELECT value FROM meta WHERE key = ?", (UNITS_KEY,)).fetchone()
    return SYSTEMS.get(row[0] if row else DEFAULT_SYSTEM, SYSTEMS[DEFAULT_SYSTEM])


def set_unit_system(store: Store, key: str) -> UnitSystem:
    """Set the store's unit system ('metric' or 'us')."""
    if key not in SYSTEMS:
        raise ValidationError([FieldProblem("units", f"{key!r} is not allowed; allowed: {', '.join(SYSTEMS)}")])
    with store.transaction():
        store.conn.execute("INSERT INTO meta(key, value) VALUES (?, ?) ON CONFLICT(key) DO UPDATE SET "
                           "value = excluded.value", (UNITS_KEY, key))
    return SYSTEMS[key]


ACTOR_KEY = "actor"


def actor_setting(store: Store) -> str:
    """The name this store writes into the journal when no --actor is given ('' when not set)."""
    row = store.conn.execute("SELECT value FROM meta WHERE key = ?", (ACTOR_KEY,)).fetchone()
    return row[0] if row else ""


def set_actor(store: Store, name: str) -> str:
    """Set the store's default actor (a person's name or initials, 1 to 120 characters, one line)."""
    from fieldapp.core.fields import has_control, is_blank

    name = name.strip()
    if is_blank(name) or len(name) > 120 or has_control(name) or name == "?":
        raise ValidationError([FieldProblem("actor", "write a person's name or initials, 1 to 120 characters "
                                            "on one line")])
    with store.transaction():
        store.conn.execute("INSERT INTO meta(key, value) VALUES (?, ?) ON CONFLICT(key) DO UPDATE SET "
                           "value = excluded.value", (ACTOR_KEY, name))
    return name


def default_actor(store: Store) -> str:
    """Who a write names when its caller names nobody: the store's setting, else the login name ('' if none)."""
    import getpass

    name = actor_setting(store)
    if name:
        return name
    try:
        return getpass.getuser().strip()
    except (OSError, KeyError, ImportError):
        return ""
