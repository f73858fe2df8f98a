"""The benchmark scripts still run against today's code, at a tiny size (no timing is checked here).

Benchmarks live in tests/bench/ and are never collected by pytest, so a change in the code they drive (a site kind a
program no longer schedules, a renamed argument) used to break them unseen until someone ran one. Each is run
here with a size small enough to take a second or two; the figures they print are not looked at.
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import pytest

BENCH = Path(__file__).parent / "bench"
TINY = {"bench_due": (0.002,), "bench_emissions": (200,), "bench_header": (1000,), "bench_import": (200,),
        "bench_merge": (2, 20), "bench_record": (20,), "bench_report": (3,)}


def _load(name: str):
    spec = importlib.util.spec_from_file_location(f"plumebook_{name}", BENCH / f"{name}.py")
    module = importlib.util.module_from_spec(spec)
    sys.path.insert(0, str(BENCH))
    try:
        spec.loader.exec_module(module)
    finally:
        sys.path.remove(str(BENCH))
    return module


def test_every_bench_script_is_listed_here():
    # bench_app and bench_ingest start their own processes or an offscreen window: left to a manual run
    assert {p.stem for p in BENCH.glob("bench_*.py")} - {"bench_app", "bench_ingest"} == set(TINY)


@pytest.mark.parametrize("name", sorted(TINY))
def test_bench_script_runs_at_a_tiny_size(name, capsys, monkeypatch, tmp_path):
    monkeypatch.chdir(tmp_path)
    _load(name).main(*TINY[name])
    assert capsys.readouterr().out.strip()  # it printed its figures
