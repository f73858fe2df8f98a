"""Recording actions from the office: the `plumebook action add` code path against raw inserts of the same rows.

N actions (default 10,000: a first attempt and a repair on each of N/2 leaks) are recorded four ways,
each in its own fresh store holding the same leaks:

- command: ``fieldapp.cli.main(["action", "add", ...])`` in this process, one call per action (parse the
  arguments, open the store, resolve the leak, ``ops.add_action``: validation + one transaction), so
  process start-up is left out;
- handler: the same arguments parsed by one parser built once, then the command's handler (what
  ``main`` does per call, less building the argument parser, which is paid once per process);
- ops: ``ops.add_action`` on one open store (what the tablet's repair screen calls);
- raw, one transaction each: the same action rows and their journal entries through ``Store.insert``,
  one transaction per row and no checks (the floor for "one transaction per user action");
- raw, one transaction: the same through one ``Store.insert_many`` (the bulk floor).

Prints each time and the ratios against the raw per-row floor.
Run: python tests/bench/bench_record.py [N]
"""

from __future__ import annotations

import sys
import tempfile
import time
from datetime import UTC, datetime
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from fieldapp.core.records import Leak, as_plain  # noqa: E402
from fieldapp.store import ops  # noqa: E402
from fieldapp.store.base import Store, new_id, new_ids  # noqa: E402

SITE = {"name": "Bench pad (invented)", "kind": "well_site", "program_id": "us-nsps-oooo-a",
        "timezone": "America/Denver", "methane_mole_fraction": 0.8, "startup_date": "2026-01-10"}
SURVEY = {"method": "ogi", "operator": "Bench operator (invented)", "qualification": "course", "camera_make": "M",
          "camera_model": "M1", "camera_serial": "S1", "camera_check": "passed", "camera_check_note": "seen at 3 m",
          "sky": "clear", "ambient_temp_c": 5, "wind_max_m_s": 3, "started_at": "2026-03-02T08:00:00-07:00"}
KINDS = (("first_attempt", "2026-03-03"), ("repaired", "2026-03-04"))
WHO = "Bench crew (invented)"


def make_store(path: Path, leaks: int) -> tuple[Store, list[str]]:
    """A store with one site, one survey and ``leaks`` leaks, each on its own component."""
    store = Store(path, actor="bench")
    site = ops.add_site(store, SITE, "bench")
    survey, _ = ops.start_survey(store, {**SURVEY, "site_id": site.id}, "bench")
    comp_ids, leak_ids = new_ids(leaks), new_ids(leaks)
    with store.transaction():
        store.insert_many("components", [{"id": c, "site_id": site.id, "tag": f"B-{n:05d}", "type": "valve",
                                          "service": "gas", "area": "", "equipment": "", "difficult_to_monitor": 0,
                                          "unsafe_to_monitor": 0} for n, c in enumerate(comp_ids)], "bench")
        store.insert_many("leaks", [as_plain(Leak(id=lid, survey_id=survey.id, component_id=c,
                                                  detected_at=datetime(2026, 3, 2, 16, tzinfo=UTC),
                                                  screening_ppm=1000.0))
                                    for lid, c in zip(leak_ids, comp_ids, strict=True)], "bench")
    return store, leak_ids


def rows_for(leak_ids: list[str]) -> list[dict]:
    """The action rows the other paths would write (ids fresh), in recording order."""
    from fieldapp.core.records import Action

    out = []
    for seq, (kind, on) in enumerate(KINDS):
        for lid in leak_ids:
            out.append(as_plain(Action(id=new_id(), leak_id=lid, kind=kind, done_on=datetime.fromisoformat(on).date(),
                                       actor=WHO, seq=seq)))
    return out


def timed(fn) -> float:
    start = time.perf_counter()
    fn()
    return time.perf_counter() - start


def main(n: int) -> None:
    from fieldapp.cli import main as cli

    leaks = n // len(KINDS)
    folder = Path(tempfile.mkdtemp(prefix="bench-record-"))
    results = {}

    store, ids = make_store(folder / "command.db", leaks)
    store.close()
    db = str(folder / "command.db")

    def by_command():
        for kind, on in KINDS:
            for lid in ids:
                code = cli(["--db", db, "--actor", "bench", "action", "add", kind.replace("_", "-"), lid,
                            "--done-on", on, "--by", WHO, "--json"])
                assert code == 0

    import contextlib
    import io

    with contextlib.redirect_stdout(io.StringIO()):
        results["command"] = timed(by_command)

    from fieldapp.cli import build_parser

    store, ids = make_store(folder / "handler.db", leaks)
    store.close()
    parser, hdb = build_parser(), str(folder / "handler.db")

    def by_handler():
        for kind, on in KINDS:
            for lid in ids:
                args = parser.parse_args(["--db", hdb, "--actor", "bench", "action", "add", kind.replace("_", "-"),
                                          lid, "--done-on", on, "--by", WHO, "--json"])
                assert args.handler(args) == 0

    with contextlib.redirect_stdout(io.StringIO()):
        results["handler"] = timed(by_handler)

    store, ids = make_store(folder / "ops.db", leaks)
    results["ops"] = timed(lambda: [ops.add_action(store, {"leak_id": lid, "kind": kind, "done_on": on,
                                                           "actor": WHO}, "bench")
                                    for kind, on in KINDS for lid in ids])
    store.close()

    store, ids = make_store(folder / "raw.db", leaks)
    rows = rows_for(ids)

    def raw_each():
        for row in rows:
            with store.transaction():
                store.insert("actions", row, "bench")

    results["raw, one transaction each"] = timed(raw_each)
    store.close()

    store, ids = make_store(folder / "bulk.db", leaks)
    rows = rows_for(ids)

    def raw_bulk():
        with store.transaction():
            store.insert_many("actions", rows, "bench")

    results["raw, one transaction"] = timed(raw_bulk)
    count = store.rows("SELECT COUNT(*) AS n FROM actions")[0]["n"]
    store.close()
    assert count == leaks * len(KINDS)

    floor = results["raw, one transaction each"]
    print(f"recording {leaks * len(KINDS)} actions on {leaks} leaks")
    for name, seconds in results.items():
        print(f"  {name:<28} {seconds:8.2f} s  {seconds / (leaks * len(KINDS)) * 1000:7.3f} ms each  "
              f"{seconds / floor:6.2f}x raw per-row")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 10_000)
