"""Due list over a synthetic store (1,000,000 components, 200,000 leaks, ~600,000 actions) against the
best hand-written indexed SQL for the same answer, in the same run. Target: within 2x.

Run: python tests/bench/bench_due.py [SCALE]   (SCALE 1.0 = full size; 0.1 for a quick look)
The script also checks that both give exactly the same (leak, kind, due date) set.
"""

from __future__ import annotations

import random
import sys
import tempfile
import time
from datetime import date, timedelta
from pathlib import Path

from fieldapp.store.base import Store, new_ids
from fieldapp.store.due import leak_items, survey_items

TODAY = date(2026, 12, 1)
# OOOOa as shipped: resurvey and re-repair fall on the final-repair deadline (40 CFR 60.5397a(h)(2), (h)(4)).
BASELINE_SQL = """
WITH ol AS MATERIALIZED (
  SELECT l.id, substr(l.detected_at, 1, 10) AS det, s.name AS site_name, c.tag,
    (SELECT COUNT(DISTINCT l2.survey_id) FROM leaks l2 JOIN surveys v2 ON v2.id = l2.survey_id
     WHERE l2.component_id = l.component_id AND (SELECT COUNT(*) FROM surveys v3 WHERE v3.site_id = v2.site_id
     AND v3.deleted = 0 AND v3.started_at > v2.started_at) < 4) >= 2 AS repeat_leaker
  FROM leaks l JOIN components c ON c.id = l.component_id JOIN surveys v ON v.id = l.survey_id
  JOIN sites s ON s.id = v.site_id
  WHERE l.deleted = 0 AND NOT EXISTS (SELECT 1 FROM actions t WHERE t.leak_id = l.id
                                      AND t.kind IN ('resurvey_passed', 'voided'))),
agg AS (
  SELECT ol.id, ol.det, ol.site_name, ol.tag, ol.repeat_leaker,
    MIN(CASE WHEN a.kind IN ('first_attempt', 'repaired') THEN a.done_on END) AS fa,
    MIN(CASE WHEN a.kind = 'repaired' THEN a.done_on END) AS first_rep,
    MAX(CASE WHEN a.kind = 'repaired' THEN a.done_on END) AS last_rep,
    MAX(CASE WHEN a.kind = 'resurvey_failed' THEN a.done_on END) AS failed,
    MAX(CASE WHEN a.kind IN ('resurvey_passed', 'resurvey_failed') THEN a.done_on END) AS resurveyed,
    MAX(CASE WHEN a.kind = 'delay_of_repair' THEN a.done_on END) AS delayed_on,
    MAX(CASE WHEN a.kind = 'delay_of_repair' THEN a.shutdown_on END) AS shutdown,
    substr(MAX(a.done_on || printf('%06d', a.seq) || a.kind), 17) AS last_kind
  FROM ol LEFT JOIN actions a ON a.leak_id = ol.id GROUP BY ol.id)
SELECT id, 'first_attempt', date(det, '+30 days'), site_name, tag, repeat_leaker FROM agg WHERE fa IS NULL
UNION ALL
SELECT id, 'final_repair', date(min(coalesce(fa, '9999-12-31'), date(det, '+30 days')), '+30 days'),
  site_name, tag, repeat_leaker
  FROM agg WHERE first_rep IS NULL AND coalesce(last_kind, '') != 'delay_of_repair'
UNION ALL
SELECT id, 'resurvey', date(min(coalesce(fa, '9999-12-31'), date(det, '+30 days')), '+30 days'),
  site_name, tag, repeat_leaker FROM agg
  WHERE last_rep IS NOT NULL AND (resurveyed IS NULL OR resurveyed < last_rep)
UNION ALL
SELECT id, 're_repair', date(min(coalesce(fa, '9999-12-31'), date(det, '+30 days')), '+30 days'),
  site_name, tag, repeat_leaker FROM agg
  WHERE failed IS NOT NULL AND (last_rep IS NULL OR last_rep <= failed)
  AND coalesce(last_kind, '') != 'delay_of_repair'
UNION ALL
SELECT id, 'delay_limit', min(coalesce(shutdown, '9999-12-31'), date(det, '+2 years')),
  site_name, tag, repeat_leaker FROM agg
  WHERE delayed_on IS NOT NULL AND (last_rep IS NULL OR last_rep < delayed_on)
"""


def build(path: Path, scale: float) -> dict[str, int]:
    rng = random.Random(7)
    store = Store(path)
    conn = store.conn
    n_sites, n_comp, n_leaks = int(2000 * scale), int(1_000_000 * scale), int(200_000 * scale)
    sites = new_ids(n_sites)
    comps = new_ids(n_comp)
    conn.execute("BEGIN")
    conn.executemany("INSERT INTO sites (id, name, kind, program_id, timezone, methane_mole_fraction, startup_date) "
                     "VALUES (?, ?, 'well_site', 'us-nsps-oooo-a', 'UTC', 0.8, '2020-01-01')",
                     [(s, f"site {i}") for i, s in enumerate(sites)])
    per = n_comp // n_sites
    conn.executemany("INSERT INTO components (id, site_id, tag, type, service) VALUES (?, ?, ?, 'valve', 'gas')",
                     [(c, sites[i // per % n_sites], f"T-{i}") for i, c in enumerate(comps)])
    surveys = []
    for i, s in enumerate(sites):
        for k in range(4):
            day = TODAY - timedelta(days=30 + 150 * k + i % 60)
            surveys.append((new_ids(1)[0], s, f"{day.isoformat()}T09:00:00+00:00", day))
    conn.executemany("INSERT INTO surveys (id, site_id, method, started_at, operator) VALUES (?, ?, 'ogi', ?, 'b')",
                     [s[:3] for s in surveys])
    leaks, actions = [], []
    for lid in new_ids(n_leaks):
        si = rng.randrange(n_sites)
        sv = surveys[si * 4 + rng.randrange(4)]
        comp = comps[si * per + rng.randrange(per)]
        det = sv[3]
        leaks.append((lid, sv[0], comp, f"{det.isoformat()}T10:00:00+00:00"))
        fate = rng.random()
        steps = []
        if fate < 0.88:
            steps = [("first_attempt", 2), ("repaired", 5), ("resurvey_passed", 20)]
        elif fate < 0.90:
            steps = [("voided", 1)]
        elif fate < 0.925:
            steps = []
        elif fate < 0.95:
            steps = [("first_attempt", 3)]
        elif fate < 0.97:
            steps = [("first_attempt", 3), ("repaired", 8)]
        elif fate < 0.985:
            steps = [("repaired", 3), ("resurvey_failed", 15)]
        else:
            steps = [("first_attempt", 2), ("delay_of_repair", 6)]
        for seq, (kind, offset) in enumerate(steps):
            on = min(det + timedelta(days=offset), TODAY)
            shutdown = (det + timedelta(days=200)).isoformat() if kind == "delay_of_repair" else None
            reason = "needs shutdown" if kind in ("delay_of_repair", "voided") else ""
            actions.append((lid, kind, on.isoformat(), seq, reason, shutdown))
    conn.executemany("INSERT INTO leaks (id, survey_id, component_id, detected_at) VALUES (?, ?, ?, ?)", leaks)
    conn.executemany("INSERT INTO actions (id, leak_id, kind, done_on, actor, seq, reason, shutdown_on, recorded_at) "
                     "VALUES (?, ?, ?, ?, 'b', ?, ?, ?, '2026-12-01')",
                     [(i, *a) for i, a in zip(new_ids(len(actions)), actions, strict=True)])
    conn.execute("COMMIT")
    conn.execute("ANALYZE")
    store.close()
    return {"sites": n_sites, "components": n_comp, "leaks": n_leaks, "actions": len(actions)}


def best(fn, repeat=3):
    times, result = [], None
    for _ in range(repeat):
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
    return min(times), result


def main(scale: float = 1.0) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "big.db"
        t0 = time.perf_counter()
        counts = build(path, scale)
        print(f"synthetic store {counts} built in {time.perf_counter() - t0:.1f} s")
        store = Store(path)
        base_s, base = best(lambda: store.conn.execute(BASELINE_SQL).fetchall())
        ours_s, ours = best(lambda: leak_items(store))
        win_s, (windows, _problems) = best(lambda: survey_items(store))
        expected = {(r[0], r[1], r[2], r[3], r[4], bool(r[5])) for r in base}
        got = {(i.leak_id, i.kind, i.due.isoformat(), i.site_name, i.tag, i.repeat_leaker) for i in ours}
        print(f"leak deadlines: hand-written SQL {base_s:.3f} s ({len(expected)} items); "
              f"plumebook {ours_s:.3f} s ({len(got)} items); same answer: {expected == got}")
        print(f"ratio plumebook/SQL: {ours_s / base_s:.2f} (target <= 2.0)")
        print(f"survey windows for {len(windows)} site inspections: {win_s:.3f} s")
        if expected != got:
            print("differences (first 5):", sorted(expected ^ got)[:5])
        store.close()


if __name__ == "__main__":
    main(float(sys.argv[1]) if len(sys.argv) > 1 else 1.0)
