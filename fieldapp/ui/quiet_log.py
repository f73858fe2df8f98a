"""Kivy's log as a field app wants it: warnings and worse unless asked for more, and a device
without a camera or a clipboard treated as normal (Kivy reports those as CRITICAL).

Import this before anything else from Kivy: the level comes from the environment Kivy reads at import.
"""

from __future__ import annotations

import logging
import os
import re
import sys

MISSING_HARDWARE = re.compile(r"(Camera|Clipboard|Cutbuffer)\b.*(Unable to find any valuable|provider)", re.S)


_QUIET = False


def quiet(verbose: bool = False) -> None:
    """Keep Kivy's console log at warning level (all of it when ``verbose``); call before importing Kivy.

    Kivy's own console handler prints its start-up lines before any level can be set, so it is turned
    off and ``install`` adds a plain one at warning level instead.
    """
    global _QUIET
    if not verbose and "KIVY_NO_CONSOLELOG" not in os.environ:
        os.environ["KIVY_NO_CONSOLELOG"] = "1"
        _QUIET = True


class MissingHardware(logging.Filter):
    """Report a missing camera or clipboard provider as information, not as a critical error."""

    def filter(self, record: logging.LogRecord) -> bool:
        if record.levelno >= logging.ERROR and MISSING_HARDWARE.search(str(record.msg)):
            record.levelno, record.levelname = logging.INFO, "INFO"
            record.msg = str(record.msg).split("\n", 1)[0]  # the provider tracebacks only with --verbose
            return logging.getLogger("kivy").isEnabledFor(logging.INFO)
        return True


def install() -> None:
    """Add the filter to Kivy's logger (idempotent)."""
    from kivy.logger import Logger

    if not any(isinstance(f, MissingHardware) for f in Logger.filters):
        Logger.addFilter(MissingHardware())
    if _QUIET and not any(getattr(h, "plumebook", False) for h in Logger.handlers):
        handler = logging.StreamHandler(sys.stderr)
        handler.setLevel(logging.WARNING)
        handler.setFormatter(logging.Formatter("[%(levelname)s] %(message)s"))
        handler.plumebook = True
        Logger.addHandler(handler)
