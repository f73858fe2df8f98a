"""Sub-commands of ``plumebook``, one module per area; each handler parses, calls one function, prints."""

from __future__ import annotations

import argparse

from fieldapp.commands import (
    desk_cmds,
    estimate_cmds,
    evidence_cmds,
    records_cmds,
    report_cmds,
    rules_cmds,
    sync_cmds,
)


def register(sub: argparse._SubParsersAction) -> None:
    """Add every sub-command to the parser."""
    for module in (records_cmds, desk_cmds, rules_cmds, estimate_cmds, evidence_cmds, sync_cmds, report_cmds):
        module.register(sub)
