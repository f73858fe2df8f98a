"""Derivatives of a photo: thumbnail, report-size copy and marked-up copy, from the original.

JPEG originals are decoded at reduced scale (Pillow's draft mode: the decoder skips detail the
target size does not need), and the EXIF orientation is applied so every copy is upright.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from dataclasses import dataclass

from PIL import Image, ImageDraw, ImageFont, ImageOps

from fieldapp.evidence.probe import refuse

THUMB = 320
REPORT = 1600
QUALITY = 85


@dataclass(frozen=True, slots=True)
class Point:
    """A marker in normalised coordinates of the upright image, with an optional label."""

    x: float
    y: float
    label: str = ""


def decode(data: bytes, longest: int, name: str = "") -> Image.Image:
    """Decode an image upright, no larger than needed for ``longest`` pixels on its longest side."""
    try:
        img = Image.open(io.BytesIO(data))
        if img.format == "JPEG":
            w, h = img.size
            scale = longest / max(w, h)
            if scale < 1:  # draft keeps both sides at or above the request, so ask per side
                img.draft("RGB", (max(1, int(w * scale)), max(1, int(h * scale))))
        orientation = img.getexif().get(0x0112, 1)
        upright = ImageOps.exif_transpose(img) if orientation not in (0, 1) else img
        upright.load()
    except (OSError, SyntaxError, ValueError) as exc:
        raise refuse(f"{name}: damaged or truncated image ({exc})") from None
    if upright.mode not in ("RGB", "L"):
        upright = upright.convert("RGB")
    return upright


def fit(img: Image.Image, longest: int) -> Image.Image:
    """A copy no larger than ``longest`` on its longest side (never enlarged)."""
    copy = img.copy()
    copy.thumbnail((longest, longest), Image.Resampling.LANCZOS if longest <= THUMB else Image.Resampling.BICUBIC)
    return copy


def jpeg(img: Image.Image) -> bytes:
    """JPEG bytes of an image."""
    out = io.BytesIO()
    img.convert("RGB").save(out, "JPEG", quality=QUALITY, optimize=False)
    return out.getvalue()


def make(data: bytes, name: str = "") -> dict[str, bytes]:
    """Thumbnail and report-size JPEGs from one reduced-scale decode."""
    report = fit(decode(data, REPORT, name), REPORT)
    return {"report": jpeg(report), "thumb": jpeg(fit(report, THUMB))}


def marked(report_jpeg: bytes, points: Sequence[Point]) -> bytes:
    """The report-size copy with each marker drawn as a ring, a cross-hair and its label."""
    img = Image.open(io.BytesIO(report_jpeg)).convert("RGB")
    draw = ImageDraw.Draw(img)
    w, h = img.size
    radius = max(18, min(w, h) // 14)
    font = _font(max(28, h // 14))  # legible on a tablet and in a printed report
    for p in points:
        cx, cy = p.x * w, p.y * h
        for width, colour in ((radius // 3 + 4, (0, 0, 0)), (radius // 3, (255, 255, 255))):
            draw.ellipse((cx - radius, cy - radius, cx + radius, cy + radius), outline=colour, width=max(2, width // 2))
        draw.line((cx - radius * 1.6, cy, cx - radius * 0.6, cy), fill=(255, 255, 255), width=3)
        draw.line((cx + radius * 0.6, cy, cx + radius * 1.6, cy), fill=(255, 255, 255), width=3)
        if p.label:
            tx, ty = min(cx + radius * 1.2, w - 10), max(cy - radius * 1.8, 5)
            box = draw.textbbox((tx, ty), p.label, font=font)
            draw.rectangle((box[0] - 6, box[1] - 4, box[2] + 6, box[3] + 4), fill=(0, 0, 0))
            draw.text((tx, ty), p.label, fill=(255, 255, 0), font=font)
    return jpeg(img)


def _font(size: int) -> ImageFont.ImageFont:
    try:
        return ImageFont.load_default(size=size)
    except TypeError:  # Pillow < 10.1
        return ImageFont.load_default()
