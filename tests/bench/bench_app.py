"""App start to first frame, and one leak save, against an empty Kivy app in the same run.

Each start is measured in a fresh process (Kivy keeps one window per process). The leak save is the
store call the Leak screen makes (validation + one transaction), without any photo decode.
Targets (../shared/DESIGN.md): first frame well under a second; a leak save under 100 ms.
Run: python tests/bench/bench_app.py
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

CHILD = r"""
import os, sys, time
start = time.perf_counter()
from kivy.base import EventLoop
if sys.argv[1] == "empty":
    from kivy.app import App
    from kivy.uix.label import Label
    class Empty(App):
        def build(self):
            return Label(text="empty")
    app = Empty()
else:
    from fieldapp.ui.app import PlumebookApp
    app = PlumebookApp(sys.argv[2], animate=False)
app._run_prepare()
EventLoop.idle()
print(time.perf_counter() - start)
"""


def first_frame(kind: str, db: str, env: dict) -> float:
    script = Path(env["KIVY_HOME"]) / "first_frame.py"  # Kivy's App needs its class in a real file
    script.write_text(CHILD)
    out = subprocess.run([sys.executable, str(script), kind, db], env=env, capture_output=True, text=True, check=True)
    return float(out.stdout.strip().splitlines()[-1])


def leak_saves(db: Path, n: int = 30) -> list[float]:
    from fieldapp.store import ops
    from fieldapp.store.base import Store

    store = Store(db)
    survey = store.rows("SELECT id FROM surveys ORDER BY started_at DESC LIMIT 1")[0]["id"]
    times = []
    for i in range(n):
        start = time.perf_counter()
        ops.add_leak(store, {"survey_id": survey, "detected_at": "2026-11-30T10:00:00-07:00",
                             "location_note": "bench", "screening_ppm": "1200"},
                     new_component={"tag": f"BENCH-{i}", "type": "valve", "service": "gas"})
        times.append(time.perf_counter() - start)
    return times


def main() -> None:
    tmp = tempfile.mkdtemp()
    env = {**os.environ, "KIVY_NO_ARGS": "1", "KIVY_NO_CONFIG": "1", "KIVY_NO_FILELOG": "1",
           "KIVY_NO_CONSOLELOG": "1", "KIVY_WINDOW": "sdl2", "SDL_VIDEODRIVER": "offscreen",
           "XDG_CONFIG_HOME": tmp, "KIVY_HOME": tmp}
    db = Path(tmp) / "demo.db"
    subprocess.run([sys.executable, "-m", "fieldapp", "--db", str(db), "demo", "--no-app"], env=env, check=True,
                   capture_output=True)
    empty = [first_frame("empty", str(db), env) for _ in range(3)]
    ours = [first_frame("app", str(db), env) for _ in range(3)]
    saves = leak_saves(db)
    print(f"first frame, empty Kivy app: {min(empty) * 1000:.0f} ms (best of 3, in-process time incl. imports)")
    print(f"first frame, plumebook on the demo store: {min(ours) * 1000:.0f} ms = {min(ours) / min(empty):.2f}x empty")
    print(f"leak save (validation + one transaction, new tag): median {statistics.median(saves) * 1000:.1f} ms, "
          f"max {max(saves) * 1000:.1f} ms (target < 100 ms)")


if __name__ == "__main__":
    main()
