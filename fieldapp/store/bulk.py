"""Helpers for bulk work (imports, merges) that allocate hundreds of thousands of small objects."""

from __future__ import annotations

import gc
from collections.abc import Iterator
from contextlib import contextmanager


@contextmanager
def gc_paused() -> Iterator[None]:
    """Pause Python's cyclic garbage collector for the block, then restore it as it was.

    Building many lists and tuples triggers repeated collections that scan every live object;
    the objects built here hold no reference cycles, so pausing is safe and halves parse time
    (measured in tests/bench/bench_import.py). Reference counting still frees memory as usual.
    """
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.enable()
