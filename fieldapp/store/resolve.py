"""Resolving a tag collision: two devices created the same tag at a site, and the merge kept both.

Both resolutions are ordinary journalled changes, so they travel in bundles and merge like any
other edit:

- ``join``: one physical component was tagged twice. Its leaks move to the kept component (their
  photos and actions follow the leak), and the other is tombstoned; its journal stays under its id.
- ``retag``: two components really are different; one gets a new tag.
"""

from __future__ import annotations

from typing import Any

from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.store import ops
from fieldapp.store.base import NotFoundError, Store


def _live(store: Store, component_id: str, field: str) -> dict[str, Any]:
    try:
        return store.get("components", component_id)
    except NotFoundError as exc:
        raise ValidationError([FieldProblem(field, str(exc))]) from None


def join(store: Store, keep_id: str, drop_id: str, actor: str = "") -> dict[str, Any]:
    """Join ``drop_id`` into ``keep_id`` (same site): its leaks move over, it is tombstoned. Returns counts."""
    keep, drop = _live(store, keep_id, "keep"), _live(store, drop_id, "drop")
    if keep_id == drop_id:
        raise ValidationError([FieldProblem("drop", "is the component to keep")])
    if keep["site_id"] != drop["site_id"]:
        raise ValidationError([FieldProblem("drop", "belongs to another site than the component to keep")])
    with store.transaction():
        leaks = store.rows("SELECT id FROM leaks WHERE component_id = ? AND deleted = 0", (drop_id,))
        for leak in leaks:
            store.update("leaks", leak["id"], {"component_id": keep_id}, actor)
        store.delete("components", drop_id, actor)
    return {"kept": keep_id, "dropped": drop_id, "tag": keep["tag"], "leaks_moved": len(leaks)}


def retag(store: Store, component_id: str, tag: str, actor: str = "") -> dict[str, Any]:
    """Give one of two colliding components a new tag (which must be free at its site)."""
    _live(store, component_id, "component")
    return ops.edit(store, "components", component_id, {"tag": tag}, actor)
