"""Photo ingest of a 12-megapixel JPEG against two baselines in the same run.

- floor: copy the bytes to a file + SHA-256 + fsync + reduced-scale (draft) decode to report size;
- naive: full decode + resize to report and thumbnail size.
Targets (../shared/DESIGN.md): within 2x of the floor, at least 1.5x faster than naive.
Run: python tests/bench/bench_ingest.py
"""

from __future__ import annotations

import hashlib
import io
import os
import random
import tempfile
import time
from pathlib import Path

from PIL import Image, ImageFilter

from fieldapp.evidence.ingest import add_media
from fieldapp.store import ops
from fieldapp.store.base import Store


def photo_12mp() -> bytes:
    rng = random.Random(5)
    small = Image.effect_noise((500, 375), 60).convert("RGB")
    img = small.resize((4000, 3000), Image.Resampling.BICUBIC).filter(ImageFilter.GaussianBlur(2))
    for _ in range(40):
        x, y = rng.randrange(3800), rng.randrange(2800)
        img.paste((rng.randrange(255), rng.randrange(255), rng.randrange(255)), (x, y, x + 200, y + 150))
    out = io.BytesIO()
    img.save(out, "JPEG", quality=92)
    return out.getvalue()


def floor(data: bytes, folder: Path) -> None:
    path = folder / hashlib.sha256(data).hexdigest()
    with open(path, "wb") as fh:
        fh.write(data)
        fh.flush()
        os.fsync(fh.fileno())
    img = Image.open(io.BytesIO(data))
    img.draft("RGB", (1600, 1600))
    img.load()


def naive(data: bytes, folder: Path) -> None:
    img = Image.open(io.BytesIO(data))
    img.load()
    for size in (1600, 320):
        copy = img.copy()
        copy.thumbnail((size, size), Image.Resampling.LANCZOS)
        copy.save(folder / f"naive-{size}.jpg", quality=85)


def best(fn, repeat=5) -> float:
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return min(times)


def main() -> None:
    data = photo_12mp()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        store = Store(folder / "bench.db")
        site = ops.add_site(store, {"name": "Bench", "kind": "well_site", "program_id": "us-nsps-oooo-a",
                                    "timezone": "UTC", "methane_mole_fraction": 0.9})
        survey, _ = ops.start_survey(store, {"site_id": site.id, "method": "ogi", "operator": "b",
                                             "started_at": "2026-11-30T08:00:00+00:00", "qualification": "q",
                                             "camera_make": "m", "camera_model": "x", "camera_check": "passed",
                                             "ambient_temp_c": 5, "sky": "clear", "wind_max_m_s": 2})
        leak = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00+00:00"},
                            new_component={"tag": "B-1", "type": "valve", "service": "gas"})
        variants = iter(range(1000))

        def ours() -> None:  # a distinct original each time (one changed byte at the end)
            add_media(store, leak.id, data + bytes([next(variants) % 256]), "b.jpg", [(0.5, 0.5, "B-1")])

        floor_s, naive_s, ours_s = best(lambda: floor(data, folder)), best(lambda: naive(data, folder)), best(ours)
    print(f"12 MP JPEG, {len(data) / 1e6:.1f} MB")
    print(f"floor (copy + SHA-256 + fsync + draft decode): {floor_s * 1000:.0f} ms")
    print(f"naive (full decode + 2 resizes): {naive_s * 1000:.0f} ms")
    print(f"plumebook ingest (checks, original, thumb + report + marked copy, row + journal): {ours_s * 1000:.0f} ms")
    print(f"ours/floor: {ours_s / floor_s:.2f} (target <= 2.0); naive/ours: {naive_s / ours_s:.2f} (target >= 1.5)")


if __name__ == "__main__":
    main()
