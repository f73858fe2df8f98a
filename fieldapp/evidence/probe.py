"""What a file is: an image Pillow can read safely, or a video clip; refused otherwise.

Pillow's decompression-bomb limit is set deliberately (``MAX_PIXELS``): tablet cameras and OGI
camera stills are far below it, and anything above is refused instead of decoded.
"""

from __future__ import annotations

import io
import struct
import warnings
from dataclasses import dataclass
from datetime import datetime

from PIL import ExifTags, Image, UnidentifiedImageError

from fieldapp.core.fields import FieldProblem, ValidationError

MAX_PIXELS = 80_000_000
MAX_BYTES = 2 * 1024**3
IMAGE_FORMATS = {"JPEG": "image/jpeg", "PNG": "image/png", "TIFF": "image/tiff"}
VIDEO_BRANDS = {b"qt  ": "video/quicktime"}
Image.MAX_IMAGE_PIXELS = MAX_PIXELS


@dataclass(frozen=True, slots=True)
class Probe:
    """Facts read from a file without changing it."""

    media_kind: str
    content_type: str
    width: int | None = None
    height: int | None = None
    captured_at: str = ""
    gps_lat: float | None = None
    gps_lon: float | None = None
    duration_s: float | None = None


def refuse(message: str) -> ValidationError:
    """The error for a refused file."""
    return ValidationError([FieldProblem("file", message)])


def probe(data: bytes, name: str = "") -> Probe:
    """Identify an image or clip; ValidationError naming the problem for anything else."""
    if not data:
        raise refuse(f"{name or 'the file'} is empty (0 bytes)")
    if len(data) > MAX_BYTES:
        raise refuse(f"{name} is larger than {MAX_BYTES // 1024**3} GiB")
    if data[4:8] == b"ftyp":
        return _video(data, name)
    return _image(data, name)


def _image(data: bytes, name: str) -> Probe:
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error", Image.DecompressionBombWarning)
            with Image.open(io.BytesIO(data)) as img:
                fmt = img.format
                if fmt not in IMAGE_FORMATS:
                    raise refuse(f"{name}: {fmt} images are not supported; allowed: JPEG, PNG, TIFF stills and "
                                 "MP4/MOV clips")
                img.verify()  # structure only; truncated pixel data is caught by the derivative decode
            with Image.open(io.BytesIO(data)) as img:
                size = img.size
                exif = img.getexif()
    except (Image.DecompressionBombError, Image.DecompressionBombWarning):
        raise refuse(f"{name}: more than {MAX_PIXELS:,} pixels; refused as a possible decompression bomb") from None
    except UnidentifiedImageError:
        raise refuse(f"{name}: not an image or clip that plumebook can read") from None
    except (OSError, SyntaxError, ValueError) as exc:
        raise refuse(f"{name}: damaged or truncated image ({exc})") from None
    lat, lon = _gps(exif)
    return Probe("photo", IMAGE_FORMATS[fmt], size[0], size[1], _captured(exif), lat, lon)


def _captured(exif: Image.Exif) -> str:
    sub = exif.get_ifd(ExifTags.IFD.Exif)
    raw = sub.get(ExifTags.Base.DateTimeOriginal) or exif.get(ExifTags.Base.DateTime)
    if not raw:
        return ""
    text = str(raw).strip().strip("\x00")
    try:  # kept as found; only the EXIF colon form is made ISO-like, with no zone invented
        return datetime.strptime(text, "%Y:%m:%d %H:%M:%S").isoformat()
    except ValueError:
        return text


def _gps(exif: Image.Exif) -> tuple[float | None, float | None]:
    gps = exif.get_ifd(ExifTags.IFD.GPSInfo)
    try:
        def degrees(value, ref) -> float:
            d, m, s = (float(x) for x in value)
            sign = -1 if str(ref).upper() in ("S", "W") else 1
            return sign * (d + m / 60 + s / 3600)

        return degrees(gps[2], gps[1]), degrees(gps[4], gps[3])
    except (KeyError, TypeError, ValueError, ZeroDivisionError):
        return None, None


def _video(data: bytes, name: str) -> Probe:
    brand = data[8:12]
    content_type = VIDEO_BRANDS.get(brand, "video/mp4")
    try:
        duration = _mp4_duration(data)
    except struct.error:
        raise refuse(f"{name}: an MP4/MOV clip whose box headers are cut short (movie header too short): "
                     "truncated or damaged") from None
    if duration is None and b"moov" not in data:
        raise refuse(f"{name}: an MP4/MOV clip without its index (moov box): truncated or damaged")
    return Probe("video", content_type, duration_s=duration)


def _mp4_duration(data: bytes) -> float | None:
    """Duration from the movie header (mvhd) when the top-level boxes say it cheaply."""
    pos = 0
    while pos + 8 <= len(data):
        size, kind = struct.unpack(">I4s", data[pos:pos + 8])
        header = 8
        if size == 1 and pos + 16 <= len(data):
            size, header = struct.unpack(">Q", data[pos + 8:pos + 16])[0], 16
        elif size == 0:
            size = len(data) - pos
        if size < header:
            return None
        if kind == b"moov":
            return _mvhd(data[pos + header:pos + size])
        pos += size
    return None


def _mvhd(moov: bytes) -> float | None:
    pos = 0
    while pos + 8 <= len(moov):
        size, kind = struct.unpack(">I4s", moov[pos:pos + 8])
        if size < 8:
            return None
        if kind == b"mvhd":
            body = moov[pos + 8:pos + size]
            if body[:1] == b"\x01":
                timescale, duration = struct.unpack(">IQ", body[20:32])
            else:
                timescale, duration = struct.unpack(">II", body[12:20])
            return duration / timescale if timescale else None
        pos += size
    return None
