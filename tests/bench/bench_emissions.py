"""Emission totals of 100,000 leaks: plumebook's totals() against a plain loop over the same leaks.

The plain loop is the obvious code over the same leaks and the same rule (count from detection to the
repair day, else to the as-of day, clipped to the period; one total); totals() also builds per-leak rows
(with the days counted and why the count stopped) and per-site and per-type sums. Target: within 2x of
the plain loop. Both run five times, interleaved; the best of each is compared (the machine is shared).
Run: python tests/bench/bench_emissions.py [LEAKS]
"""

from __future__ import annotations

import random
import sys
import time
from datetime import date, timedelta

from fieldapp.core.emissions import LeakPeriod, totals

START, END, AS_OF = date(2026, 1, 1), date(2026, 12, 31), date(2026, 12, 1)


def make(n: int) -> list[LeakPeriod]:
    rng = random.Random(3)
    out = []
    for i in range(n):
        det = START + timedelta(days=rng.randrange(330))
        stop = det + timedelta(days=rng.randrange(1, 60)) if rng.random() < 0.8 else None
        out.append(LeakPeriod(f"L{i}", f"S{i % 500}", f"site {i % 500}", rng.choice(["valve", "connector", "flange"]),
                              f"T{i}", det, rng.random(), "leaker_factor", det - timedelta(days=90), stop,
                              rng.random() < 0.01))
    return out


def plain_loop(leaks: list[LeakPeriod]) -> float:
    total = 0.0
    for leak in leaks:
        if leak.void:
            continue
        end = min(leak.stopped_on or AS_OF + timedelta(days=1), END + timedelta(days=1))
        days = (end - max(leak.detected_on, START)).days
        if days > 0:
            total += days * 24 * leak.methane_kg_per_h
    return total


def main(n: int = 100_000) -> None:
    leaks = make(n)
    base_s = ours_s = float("inf")
    for _ in range(5):
        t = time.perf_counter()
        base = plain_loop(leaks)
        base_s = min(base_s, time.perf_counter() - t)
        t = time.perf_counter()
        report = totals(leaks, START, END, AS_OF, "detection")
        ours_s = min(ours_s, time.perf_counter() - t)
    same = abs(report.total.methane_kg - base) < 1e-6 * base
    print(f"leaks: {n}")
    print(f"plain loop (total only): {base_s:.3f} s")
    print(f"plumebook totals (rows + by site + by type + total): {ours_s:.3f} s; same total: {same}")
    ratio = ours_s / base_s
    print(f"ratio plumebook/plain: {ratio:.2f}; target: within 2x -> {'OK' if ratio <= 2 else 'SLOW'}")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100_000)
