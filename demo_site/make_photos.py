"""Invented OGI-style stills for the demo's leaks: a false-colour thermal scene with a gas plume.

Nothing here is a real image: shapes, colours and plume are drawn from a seeded random generator.
``photo(seed, tag, taken)`` returns JPEG bytes; ``python demo_site/make_photos.py OUT_DIR`` writes a
few samples to look at.
"""

from __future__ import annotations

import io
import random
import sys
from datetime import datetime
from pathlib import Path

from PIL import Image, ImageChops, ImageDraw, ImageFilter

SIZE = (960, 720)


def _palette(v: float) -> tuple[int, int, int]:
    """An 'ironbow'-like false colour for a value 0..1 (dark blue-violet → red → yellow → white)."""
    stops = [(0.0, (10, 5, 40)), (0.3, (90, 10, 120)), (0.55, (200, 40, 60)), (0.8, (250, 160, 20)),
             (1.0, (255, 250, 220))]
    for (a, ca), (b, cb) in zip(stops, stops[1:], strict=False):
        if v <= b:
            t = (v - a) / (b - a)
            return tuple(int(ca[i] + (cb[i] - ca[i]) * t) for i in range(3))
    return stops[-1][1]


def photo(seed: int, tag: str, taken: datetime | None = None) -> tuple[bytes, tuple[float, float]]:
    """One invented thermal-looking still (JPEG, EXIF capture time when given) and where its plume starts."""
    rng = random.Random(seed)
    w, h = SIZE
    heat = Image.new("L", SIZE, 40)
    draw = ImageDraw.Draw(heat)
    for y in range(h):  # sky cool at the top, ground warmer
        draw.line((0, y, w, y), fill=int(30 + 60 * y / h))
    for _ in range(rng.randint(3, 5)):  # warm pipes
        y = rng.randint(h // 3, h - 80)
        draw.rectangle((0, y, w, y + rng.randint(18, 40)), fill=rng.randint(140, 200))
    vx, vy = rng.randint(w // 3, 2 * w // 3), rng.randint(h // 2, h - 150)
    draw.rectangle((vx - 40, vy - 90, vx + 40, vy + 30), fill=210)  # a valve body
    draw.ellipse((vx - 55, vy - 130, vx + 55, vy - 80), fill=230)
    heat = heat.filter(ImageFilter.GaussianBlur(3))
    plume = Image.new("L", SIZE, 0)
    pd = ImageDraw.Draw(plume)
    px, py = vx + rng.randint(-20, 20), vy - 100
    for i in range(60):  # a drifting, widening cool cloud
        r = 12 + i * 2.2
        cx = px + i * rng.uniform(2.0, 4.5) + rng.uniform(-8, 8)
        cy = py - i * rng.uniform(3.0, 5.0)
        pd.ellipse((cx - r, cy - r, cx + r, cy + r), fill=max(0, 150 - i * 2))
    plume = plume.filter(ImageFilter.GaussianBlur(14))
    heat = ImageChops.subtract(heat, plume)
    lut = [_palette(i / 255) for i in range(256)]
    img = Image.merge("RGB", [heat.point([c[k] for c in lut]) for k in range(3)])
    label = ImageDraw.Draw(img)
    label.rectangle((0, h - 34, w, h), fill=(0, 0, 0))
    label.text((12, h - 28), f"DEMO IMAGE (invented)  {tag}  {taken:%Y-%m-%d %H:%M}" if taken else tag,
               fill=(255, 255, 255))
    out = io.BytesIO()
    exif = Image.Exif()
    if taken:
        exif[0x0132] = taken.strftime("%Y:%m:%d %H:%M:%S")  # DateTime
    img.save(out, "JPEG", quality=82, exif=exif)
    return out.getvalue(), (px / w, (py + 10) / h)


if __name__ == "__main__":
    folder = Path(sys.argv[1] if len(sys.argv) > 1 else "demo-photos")
    folder.mkdir(parents=True, exist_ok=True)
    for n in range(3):
        (folder / f"sample-{n}.jpg").write_bytes(photo(n, f"SAMPLE-{n}", datetime(2026, 5, 1, 9, 30))[0])
