"""App start to first frame, and leak saves, against baselines in the same run.

- first frame: plumebook on the demo store against an empty Kivy app, each in a fresh process (Kivy
  keeps one window per process);
- leak save without photos: the store call (validation + one transaction);
- leak save with one 12 MP photo (what the Leak screen's Save does: the photo checked, its original and
  copies stored, then leak + media row + marker in one transaction) against the raw-ingest floor
  (copy + SHA-256 + fsync + reduced-scale decode) and against adding the same photo to an existing leak.
Targets (../shared/DESIGN.md): first frame well under a second; a leak save under 100 ms without the
photo decode; photo ingest within 2x of the floor.
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


def photo_saves(folder: Path, data: bytes, n: int = 5) -> tuple[float, float, float]:
    """Best of ``n``: leak + one photo in one action, the same photo added to a leak, the raw floor."""
    from bench_ingest import floor

    from fieldapp.evidence.ingest import add_media
    from fieldapp.evidence.leak_save import PhotoIn, save_leak_with_media
    from fieldapp.store import ops
    from fieldapp.store.base import Store

    store = Store(folder / "photos.db")
    site = ops.add_site(store, {"name": "Bench", "kind": "well_site", "program_id": "us-nsps-oooo-a",
                                "timezone": "UTC", "methane_mole_fraction": 0.9})
    survey, _ = ops.start_survey(store, {"site_id": site.id, "method": "ogi", "operator": "b",
                                         "started_at": "2026-11-30T08:00:00+00:00", "qualification": "q",
                                         "camera_make": "m", "camera_model": "x", "camera_check": "passed",
                                         "ambient_temp_c": 5, "sky": "clear", "wind_max_m_s": 2})
    leak = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00+00:00"},
                        new_component={"tag": "B-0", "type": "valve", "service": "gas"})
    pending = folder / "pending"
    pending.mkdir()
    whole, ingest, raw = [], [], []
    for i in range(n):  # a distinct original each time (one changed byte at the end)
        photo = pending / f"p{i}.jpg"
        photo.write_bytes(data + bytes([i]))
        start = time.perf_counter()
        save_leak_with_media(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00+00:00"},
                             {"tag": f"B-{i + 1}", "type": "valve", "service": "gas"},
                             [PhotoIn(photo, "b.jpg", (0.5, 0.5))], f"B-{i + 1}")
        whole.append(time.perf_counter() - start)
        start = time.perf_counter()
        add_media(store, leak.id, data + bytes([100 + i]), "b.jpg", [(0.5, 0.5, "B-0")])
        ingest.append(time.perf_counter() - start)
        start = time.perf_counter()
        floor(data + bytes([200 + i]), folder)
        raw.append(time.perf_counter() - start)
    store.close()
    return min(whole), min(ingest), min(raw)


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
    from bench_ingest import photo_12mp

    data = photo_12mp()
    whole, ingest, raw = photo_saves(Path(tmp), data)
    print(f"first frame, empty Kivy app: {min(empty) * 1000:.0f} ms (best of 3, in-process time incl. imports)")
    print(f"first frame, plumebook on the demo store: {min(ours) * 1000:.0f} ms = {min(ours) / min(empty):.2f}x empty")
    print(f"leak save (validation + one transaction, new tag): median {statistics.median(saves) * 1000:.1f} ms, "
          f"max {max(saves) * 1000:.1f} ms (target < 100 ms)")
    print(f"12 MP JPEG, {len(data) / 1e6:.1f} MB (best of 5 each)")
    print(f"raw-ingest floor (copy + SHA-256 + fsync + draft decode): {raw * 1000:.0f} ms")
    print(f"photo added to an existing leak (add_media): {ingest * 1000:.0f} ms = {ingest / raw:.2f}x floor")
    print(f"leak + one photo saved as one action: {whole * 1000:.0f} ms = {whole / raw:.2f}x floor, "
          f"{whole / ingest:.2f}x add_media alone")


if __name__ == "__main__":
    main()
