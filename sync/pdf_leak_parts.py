"""The parts of a leak both PDFs draw: its fields, deadlines, who did what, its timeline, photos and clips.

The survey report draws them for every leak of a survey (``sync.pdf_survey``), the leak record for one
leak (``sync.pdf_leak``); both take a ``LeakLine`` of the report model, so they say the same thing.
"""

from __future__ import annotations

from typing import Any

from reportlab.lib.units import mm
from reportlab.platypus import Flowable, Image, Table

from fieldapp.evidence.ingest import ensure
from fieldapp.store.base import Store
from sync.pdf_common import Grid, fields, grid, para
from sync.report_fields import METHOD_WORDS
from sync.report_model import LeakLine, Progress, words


def when(iso: str) -> str:
    """'2026-10-22T09:00:00-06:00' as '2026-10-22 09:00 (UTC-06:00)'."""
    if not iso:
        return "-"
    return f"{iso[:10]} {iso[11:16]} (UTC{iso[19:] or '+00:00'})"


def due_cell(due: str, done: str, kind: str, overdue: str):
    """The due date; OVERDUE in red bold when this deadline is overdue and not done."""
    if kind in overdue.split(";") and not done:
        return para(f"{due or '-'}  OVERDUE", "alert")
    return due or "-"


def num(value: float | None, digits: int = 4) -> str:
    """A number to ``digits`` significant figures, '-' when there is none."""
    return "-" if value is None else f"{value:.{digits}g}"


def flags(line: LeakLine) -> list[str]:
    """The leak's component flags in words (difficult / unsafe to monitor, repeat leaker)."""
    return [w for w, on in (("difficult to monitor", line.difficult_to_monitor),
                            ("unsafe to monitor", line.unsafe_to_monitor), ("repeat leaker", line.repeat_leaker)) if on]


def leak_fields(line: LeakLine, gwp_set: str, width: float):
    """Location, detection, screening and measured values, estimate and CO2e, as label/value pairs."""
    return fields([
        ("Location", line.location_note), ("Detected", when(line.detected_at)),
        ("Screening", f"{num(line.screening_ppm)} ppmv" if line.screening_ppm is not None else "-"),
        ("Measured", f"{num(line.measured_rate)} {line.measured_unit} ({line.measured_instrument or '-'})"
         if line.measured_rate is not None else "-"),
        ("Estimate", f"{num(line.methane_kg_per_h)} kg CH4/h ({words(line.basis)})"),
        ("CO2e", f"{num(line.co2e_kg_per_h_100yr)} kg/h 100-yr, {num(line.co2e_kg_per_h_20yr)} kg/h 20-yr "
                 f"({gwp_set.upper()})"),
        ("Basis", line.factor_row), ("Source", line.estimate_source),
    ], width, label_share=0.66)  # "Screening" fits its label column at 7.5 pt


def deadline_table(line: LeakLine, width: float) -> Table:
    """Due and done dates of the first attempt, final repair, resurvey and delay of repair."""
    return grid([
        ["", "due", "done"],
        ["first attempt", due_cell(line.first_attempt_due, line.first_attempt_on, "first_attempt", line.overdue),
         line.first_attempt_on or "-"],
        ["final repair", due_cell(line.final_repair_due, line.repaired_on, "final_repair", line.overdue),
         line.repaired_on or "-"],
        ["resurvey", due_cell(line.resurvey_due, line.resurveyed_on, "resurvey", line.overdue),
         line.resurveyed_on or "-"],
        ["delay of repair", due_cell(line.delay_limit, "", "delay_limit", line.overdue),
         f"{line.delay_on} {line.delay_reason}".strip() or "-"],
    ], [width * 0.24, width * 0.38, width * 0.38])


def method_words(code: str) -> str:
    """'ogi' -> 'OGI', 'method21' -> 'Method 21', 'avo' -> 'AVO'; '-' when there is none."""
    return METHOD_WORDS.get((code or "").replace(" ", ""), code) or "-"


def people_table(line: LeakLine, surveyor: str, instrument: str, width: float) -> Table:
    """Who detected, made the first attempt, repaired and resurveyed, with method, instrument and date."""
    rows = [["step", "by", "method / instrument", "date"],
            ["detection", surveyor or "-", f"{method_words(line.detection_method)} / {instrument or '-'}",
             line.detected_on or "-"],
            ["first attempt", line.first_attempt_by or "-", "-", line.first_attempt_on or "-"],
            ["repair", line.repaired_by or "-", "-", line.repaired_on or "-"],
            ["resurvey", line.resurveyed_by or "-",
             f"{method_words(line.resurvey_method)} / {line.resurvey_instrument or '-'}", line.resurveyed_on or "-"]]
    if line.delay_on:
        rows.append(["delay of repair", f"route: {line.delay_kind or '-'}", line.delay_reason or "-",
                     f"from {line.delay_on}, limit {line.delay_limit or 'not set yet'}"])
        if line.delay_kind == "parts":
            rows.append(["parts", "-", f"ordered {line.parts_ordered_on or '-'}",
                         f"received {line.parts_received_on or 'not yet'}"])
    return grid(rows, [width * 0.16, width * 0.26, width * 0.34, width * 0.24])


def timeline_table(line: LeakLine, width: float) -> Table:
    """The leak's timeline as `history` tells it: when it happened, what, by whom, and when and where it was
    recorded (site time, device and its sequence number; BACKDATED when keyed in on a later day)."""
    rows = [["happened (site time)", "event", "what was recorded", "recorded by, at (site time), device"]]
    for e in line.timeline:
        recorded = f"{e['actor'] or '(not named)'}, {e['recorded_local']}, device {e['device_id'][:8]} #{e['seq']}"
        if e["backdated"]:
            recorded += " BACKDATED"
        rows.append([f"{e['on']} {e['at'] or ''}".strip() or "-", e["event"], e["summary"], recorded])
    return grid(rows, [width * 0.13, width * 0.12, width * 0.47, width * 0.28])


def caption(n: int, total: int, photo: dict[str, Any]) -> str:
    """'Photo 2 of 6: name.jpg, taken 2026-11-30 09:12 (UTC-07:00), SHA-256 <16 hex>'."""
    return (f"Photo {n} of {total}: {photo['file'] or 'unnamed'}, taken {photo['taken']}, "
            f"SHA-256 {photo['sha256'][:16]}")


def clip_caption(n: int, total: int, clip: dict[str, Any]) -> str:
    """'Clip 1 of 1: name.mp4, 4.5 s, taken ..., SHA-256 <16 hex>' (a clip is listed, no frame is drawn)."""
    length = f"{clip['seconds']:g} s" if clip.get("seconds") is not None else "length not recorded"
    return (f"Clip {n} of {total}: {clip['file'] or 'unnamed'}, {length}, taken {clip['taken']}, "
            f"SHA-256 {clip['sha256'][:16]}")


def picture(store: Store, photo: dict[str, Any], width: float, height: float) -> Image:
    """A photo's stored marked-up copy (the original is never touched), scaled to fit width x height."""
    media = {"id": photo["media_id"], "sha256": photo["sha256"], "original_name": photo["file"],
             "markers": photo["markers"]}
    img = Image(str(ensure(store, media, "marked" if photo["markers"] else "report")))
    scale = min(width / img.imageWidth, height / img.imageHeight)
    img.drawWidth, img.drawHeight = img.imageWidth * scale, img.imageHeight * scale
    return img


def photo_grid(store: Store, line: LeakLine, width: float, columns: int, first: int = 1,
               progress: Progress | None = None) -> list:
    """Photos ``first``.. of the leak in a grid of ``columns``, each with its caption, then its clips listed.

    ``progress(1)`` after each photo is placed (its stored copy drawn if it was missing).
    """
    out: list = []
    total = len(line.photos)
    cell = width / columns
    cells = []
    for n, p in enumerate(line.photos[first - 1:], first):
        cells.append([picture(store, p, cell - 4 * mm, (cell - 4 * mm) * 0.75), para(caption(n, total, p), "caption")])
        if progress:
            progress(1)
    if cells:
        rows = [cells[i:i + columns] for i in range(0, len(cells), columns)]
        rows[-1] += [""] * (columns - len(rows[-1]))
        table = Grid(rows, colWidths=[cell] * columns)
        table.setStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0),
                        ("RIGHTPADDING", (0, 0), (-1, -1), 4 * mm), ("BOTTOMPADDING", (0, 0), (-1, -1), 4)])
        out.append(table)
    out += [para(clip_caption(n, len(line.clips), c), "caption") for n, c in enumerate(line.clips, 1)]
    return out


class Tick(Flowable):
    """Takes no room; tells ``progress`` that one more part of the document has been laid out."""

    def __init__(self, progress: Progress | None):
        super().__init__()
        self.progress = progress

    def wrap(self, available_width, available_height):  # noqa: D102 - reportlab's protocol
        return 0, 0

    def draw(self):  # noqa: D102
        if self.progress:
            self.progress(1)
