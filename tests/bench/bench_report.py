"""Survey PDF with 200 leaks and 200 distinct photos against raw reportlab drawing the same images.

Target (../shared/DESIGN.md): within 3x of the raw drawing. The first report of a survey also draws
the marked-up copies (cold); later reports reuse them (warm). Both are printed.
Run: python tests/bench/bench_report.py [LEAKS]
"""

from __future__ import annotations

import io
import sys
import tempfile
import time
from pathlib import Path

from PIL import Image, ImageDraw
from reportlab.lib.pagesizes import LETTER
from reportlab.pdfgen import canvas

from fieldapp.evidence.ingest import add_media, ensure
from fieldapp.store import ops
from fieldapp.store.base import Store
from sync.pdf_survey import render
from sync.report_model import survey_report


def photo(n: int) -> bytes:
    img = Image.new("RGB", (1280, 960), (40 + n % 200, 20, 90))
    ImageDraw.Draw(img).ellipse((300 + n, 200, 700 + n, 600), fill=(250, 160, 20))
    out = io.BytesIO()
    img.save(out, "JPEG", quality=85)
    return out.getvalue()


def build(folder: Path, leaks: int) -> tuple[Store, str]:
    store = Store(folder / "r.db")
    site = ops.add_site(store, {"name": "Bench station", "kind": "compressor_station", "program_id": "us-nsps-oooo-a",
                                "timezone": "UTC", "methane_mole_fraction": 0.8})
    survey, _ = ops.start_survey(store, {"site_id": site.id, "method": "ogi", "operator": "b", "qualification": "q",
                                         "started_at": "2026-11-30T08:00:00+00:00", "camera_make": "m",
                                         "camera_model": "x", "camera_check": "passed", "ambient_temp_c": 5,
                                         "sky": "clear", "wind_max_m_s": 2})
    for n in range(leaks):
        leak = ops.add_leak(store, {"survey_id": survey.id, "detected_at": "2026-11-30T09:00:00+00:00"},
                            new_component={"tag": f"R-{n:04d}", "type": "valve", "service": "gas"})
        add_media(store, leak.id, photo(n), f"p{n}.jpg", [(0.5, 0.5, f"R-{n:04d}")])
    return store, survey.id


def raw(paths: list[Path]) -> bytes:
    out = io.BytesIO()
    c = canvas.Canvas(out, pagesize=LETTER)
    for i, path in enumerate(paths):
        c.drawImage(str(path), 340, 520 - (i % 3) * 230, width=230, height=172)
        c.drawString(50, 700 - (i % 3) * 230, f"leak {i}")
        if i % 3 == 2:
            c.showPage()
    c.save()
    return out.getvalue()


def main(leaks: int = 200) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        store, survey_id = build(Path(tmp), leaks)
        start = time.perf_counter()
        render(store, survey_report(store, survey_id))
        cold = time.perf_counter() - start
        start = time.perf_counter()
        pdf = render(store, survey_report(store, survey_id))
        warm = time.perf_counter() - start
        marked = [ensure(store, m, "marked") for m in store.rows("SELECT * FROM media ORDER BY added_at")]
        start = time.perf_counter()
        raw(marked)
        raw_s = time.perf_counter() - start
    print(f"{leaks} leaks, {leaks} distinct photos; PDF {len(pdf) / 1e6:.1f} MB")
    print(f"raw reportlab drawing the same {len(marked)} images: {raw_s:.2f} s")
    print(f"plumebook survey report, cold (draws marked-up copies): {cold:.2f} s = {cold / raw_s:.2f}x raw")
    print(f"plumebook survey report, warm: {warm:.2f} s = {warm / raw_s:.2f}x raw (target <= 3.0)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 200)
