"""The SQLite store: schema, journal, and the one-transaction user actions."""

from fieldapp.store.base import NotFoundError, Store

__all__ = ["NotFoundError", "Store"]
