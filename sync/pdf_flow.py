"""Flowables for long tables: a heading that stays with the first rows, a table that splits across pages.

``HeadWithRows`` places its heading where the heading and the first body rows of the table fit, and
otherwise starts a new page; the table then splits across pages with its header row repeated. A plain
``keepWithNext`` heading would move the whole table to the next page and leave the rest of this one blank.
"""

from __future__ import annotations

from reportlab.lib.styles import ParagraphStyle
from reportlab.platypus import Flowable, Table, TableStyle
from reportlab.platypus.doctemplate import FrameBreak

from sync.pdf_common import RULE, SHADE, STYLES, Grid, para

# a table wider than this many columns is set in smaller type so its words fit their columns
NARROW_AT = 10
# embeddedHyphenation: a long word breaks at its own hyphen ("not operating-depressurized"), not mid-word
CELL = ParagraphStyle("report_cell", parent=STYLES["cell"], embeddedHyphenation=1)
NARROW_CELL = ParagraphStyle("narrow_cell", parent=CELL, fontSize=7, leading=8.6)
NARROW_HEAD = ParagraphStyle("narrow_head", parent=NARROW_CELL, fontName="Helvetica-Bold")
HEAD = ParagraphStyle("head_cell", parent=CELL, fontName="Helvetica-Bold")


def column_table(columns: list[str], weights: list[float], rows: list[list[str]], width: float,
                 empty: str = "none", notes: list[str] | None = None) -> Table:
    """A table with a header row repeated on every page, column widths in proportion to ``weights``.

    ``notes`` (the citation, fields not recorded) go in a last row across all columns that never parts from
    the last body row, so a table split across pages keeps its citation under it.
    """
    narrow = len(columns) >= NARROW_AT
    body_style, head_style = (NARROW_CELL, NARROW_HEAD) if narrow else (CELL, HEAD)
    total = sum(weights)
    body = rows or [[empty] + [""] * (len(columns) - 1)]
    data = [[para(c, head_style) for c in columns]] + [[para(c, body_style) for c in row] for row in body]
    last = len(data) - 1
    if notes:
        data.append([[para(n, STYLES["small"]) for n in notes]] + [""] * (len(columns) - 1))
    table = Grid(data, colWidths=[width * w / total for w in weights], repeatRows=1)
    pad = 3 if narrow else 6
    style = [("GRID", (0, 0), (-1, last), 0.3, RULE), ("VALIGN", (0, 0), (-1, -1), "TOP"),
             ("TOPPADDING", (0, 0), (-1, -1), 2), ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
             ("LEFTPADDING", (0, 0), (-1, last), pad), ("RIGHTPADDING", (0, 0), (-1, last), pad),
             ("BACKGROUND", (0, 0), (-1, 0), SHADE)]
    if notes:
        style += [("SPAN", (0, last + 1), (-1, last + 1)), ("NOSPLIT", (0, last), (-1, last + 1)),
                  ("LEFTPADDING", (0, last + 1), (-1, last + 1), 0), ("TOPPADDING", (0, last + 1), (-1, last + 1), 3)]
    table.setStyle(TableStyle(style))
    return table


class HeadWithRows(Flowable):
    """Heading flowables and a table, kept together only as far as the heading and the first ``rows`` rows."""

    def __init__(self, head: list[Flowable], table: Table, rows: int = 2) -> None:
        super().__init__()
        for f in head:  # inside this group a heading must not pull the whole table along
            f.keepWithNext = 0
        self.head, self.table, self.rows = head, table, rows

    def _needed(self, width: float, height: float) -> float:
        need = 0.0
        for f in self.head:
            need += f.wrap(width, height)[1] + f.getSpaceBefore() + f.getSpaceAfter()
        self.table.wrap(width, height)
        return need + sum(self.table._rowHeights[: 1 + self.rows])

    def wrap(self, width: float, height: float) -> tuple[float, float]:
        self._size = (width, height)
        return width, 0xFFFFFF  # always split: the frame then places heading and table one by one

    def split(self, width: float, height: float) -> list[Flowable]:
        at_top = getattr(getattr(self, "_frame", None), "_atTop", False)
        if self._needed(width, height) > height and not at_top:
            return [FrameBreak(), *self.head, self.table]
        return [*self.head, self.table]

    def draw(self) -> None:  # never drawn itself: split always hands over its parts
        raise AssertionError("HeadWithRows is split, not drawn")
