"""Loading a repair contractor's work: a CSV of actions on leaks, all or nothing.

Column layout (header row required, UTF-8, order free, names exact; see DEVELOPERS.md):

===============  ========  =============================================================
column           required  allowed
===============  ========  =============================================================
tag              yes       the leak's tag (its one open leak) or TAG@YYYY-MM-DD (found that day)
kind             yes       first-attempt, repaired, delay-of-repair, resurvey-passed,
                           resurvey-failed, voided (underscores also accepted)
date             yes       YYYY-MM-DD, the local date the work was done at the site
who              yes       the person who did the work
instrument       no        instrument of a resurvey
method           no        method of a resurvey: ogi, method21, avo
note             no        text
reason           no        why (delay of repair, void)
planned_on       no        YYYY-MM-DD planned repair date (delay of repair)
shutdown_on      no        YYYY-MM-DD next scheduled shutdown (delay of repair)
===============  ========  =============================================================

Every row goes through ``ops.add_action`` (the same checks as the tablet's repair screen) inside one
transaction, in file order, so a later row sees the earlier ones (a repair then its resurvey). Every
problem is reported with its line number; a file with any problem imports nothing. A tag with
several open leaks is refused naming them.

Re-importing a file is refused: a row whose leak already has the same kind of action on the same day
by the same person is "already recorded" (checked against the store, so a copy of the work merged from
another device counts too), and the file then imports nothing.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.store import ops
from fieldapp.store.base import Store
from fieldapp.store.importer import MAX_COLUMNS, split_csv
from fieldapp.store.names import resolve_leak

COLUMNS = ("tag", "kind", "date", "who", "instrument", "method", "note", "reason", "planned_on", "shutdown_on")
REQUIRED = ("tag", "kind", "date", "who")
KINDS = ("first_attempt", "repaired", "delay_of_repair", "resurvey_passed", "resurvey_failed", "voided")
FIELD_OF = {"date": "done_on", "who": "actor"}
COLUMN_OF = {"done_on": "date", "actor": "who", "leak_id": "tag", "seq": "kind"}


def read_rows(path: Path) -> list[tuple[int, dict[str, str]]]:
    """The file's rows as (line number, values by column), the header checked."""
    text = path.read_text(encoding="utf-8-sig")
    rows = split_csv(text)
    if not rows:
        raise ValidationError([FieldProblem("file", "is empty; the first line must name the columns")])
    _line, header = rows[0]
    header = [h.strip() for h in header]
    problems = [FieldProblem("file", f"column {h!r} is not known; allowed: {', '.join(COLUMNS)}", 1)
                for h in header if h not in COLUMNS]
    problems += [FieldProblem("file", f"column {c!r} is required", 1) for c in REQUIRED if c not in header]
    if len(header) > MAX_COLUMNS or len(set(header)) != len(header):
        problems.append(FieldProblem("file", "a column name is repeated", 1))
    if problems:
        raise ValidationError(problems)
    out = []
    for line, values in rows[1:]:
        if len(values) != len(header):
            out.append((line, {"__width__": str(len(values))}))
            continue
        out.append((line, {h: v.strip() for h, v in zip(header, values, strict=True)}))
    return out


def import_work(store: Store, path: Path, actor: str, site_id: str | None = None,
                progress: Callable[[int], None] | None = None) -> list[dict[str, Any]]:
    """Apply every row of a contractor's work CSV as actions in one transaction; the rows applied.

    Raises ``ValidationError`` with every problem (``line`` set) and writes nothing when any row fails.
    """
    rows = read_rows(path)
    problems: list[FieldProblem] = []
    done: list[dict[str, Any]] = []
    with store.transaction():
        for line, row in rows:
            if "__width__" in row:
                problems.append(FieldProblem("file", f"has {row['__width__']} values; the header has a different "
                                             "number of columns", line))
                continue
            missing = [c for c in REQUIRED if not row.get(c)]
            if missing:
                problems += [FieldProblem(c, "is required", line) for c in missing]
                continue
            try:
                leak = resolve_leak(store, row["tag"], site_id, "tag")
                kind = row["kind"].lower().replace("-", "_")
                if kind not in KINDS:
                    raise ValidationError([FieldProblem("kind", f"{row['kind'][:40]!r} is not allowed; allowed: "
                                                        + ", ".join(k.replace("_", "-") for k in KINDS))])
                if store.rows("SELECT 1 FROM actions WHERE leak_id = ? AND kind = ? AND done_on = ? AND actor = ?",
                              (leak["id"], kind, row["date"], row["who"])):
                    raise ValidationError([FieldProblem("tag", f"{kind.replace('_', ' ')} of {leak['tag']} on "
                                                        f"{row['date']} by {row['who']} is already recorded")])
                values = {"leak_id": leak["id"], "kind": kind}
                values.update({FIELD_OF.get(c, c): v for c, v in row.items() if c not in ("tag", "kind") and v})
                action = ops.add_action(store, values, actor)
            except ValidationError as exc:
                problems += [FieldProblem(COLUMN_OF.get(p.field, p.field), p.message, line) for p in exc.problems]
                continue
            done.append({"line": line, "tag": leak["tag"], "site": leak["site_name"], "kind": action.kind.value,
                         "done_on": action.done_on.isoformat(), "who": action.actor, "action_id": action.id})
            if progress:
                progress(1)
        if problems:
            raise ValidationError(problems)
    return done
