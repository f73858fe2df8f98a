"""Shared PDF layout: page template with header, page numbers ("page N of M") and the data fingerprint."""

from __future__ import annotations

from reportlab.graphics.charts.barcharts import HorizontalBarChart
from reportlab.graphics.shapes import Drawing, String
from reportlab.lib import colors
from reportlab.lib.pagesizes import LETTER
from reportlab.lib.styles import ParagraphStyle, getSampleStyleSheet
from reportlab.lib.units import mm
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen import canvas
from reportlab.platypus import Paragraph, Table, TableStyle

PAGE = LETTER
MARGIN = 16 * mm
INK = colors.HexColor("#1b1f24")
RULE = colors.HexColor("#8a939c")
SHADE = colors.HexColor("#eef1f4")
ALERT = colors.HexColor("#b3261e")

_base = getSampleStyleSheet()
STYLES = {
    "title": ParagraphStyle("title", parent=_base["Title"], fontSize=17, leading=21, alignment=0, spaceAfter=4),
    "h2": ParagraphStyle("h2", parent=_base["Heading2"], fontSize=12.5, leading=15, spaceBefore=8, spaceAfter=4,
                         keepWithNext=1),
    "h3": ParagraphStyle("h3", parent=_base["Heading3"], fontSize=10.5, leading=13, spaceBefore=4, spaceAfter=2,
                         keepWithNext=1),
    "alert": ParagraphStyle("alert", parent=_base["BodyText"], fontName="Helvetica-Bold", fontSize=8, leading=10,
                            textColor=ALERT),
    "caption": ParagraphStyle("caption", parent=_base["BodyText"], fontSize=8, leading=10),
    "body": ParagraphStyle("body", parent=_base["BodyText"], fontSize=9, leading=11.5),
    "small": ParagraphStyle("small", parent=_base["BodyText"], fontSize=7.5, leading=9.5, textColor=RULE),
    "cell": ParagraphStyle("cell", parent=_base["BodyText"], fontSize=8, leading=10),
    "caution": ParagraphStyle("caution", parent=_base["BodyText"], fontSize=8.5, leading=11, leftIndent=6,
                              borderColor=ALERT, borderWidth=0.8, borderPadding=5, spaceBefore=4, spaceAfter=6),
    "hazard": ParagraphStyle("hazard", parent=_base["BodyText"], fontSize=9, leading=11.5, textColor=ALERT),
}


class _Para(Paragraph):
    """A Paragraph that breaks its lines once per width.

    Tables and KeepTogether measure their content before the frame lays it out, so the same paragraph
    is wrapped several times at the same width; reportlab's Paragraph.wrap reads only the width (not the
    height), so its answer for a width it has already broken at is reused (tests/bench/bench_report.py).
    """

    def _key(self, width: float) -> tuple:
        # a split copies attributes into new paragraphs: the key also names the text and lines it was made for
        return width, id(self.frags), id(self.__dict__.get("blPara"))

    def wrap(self, availWidth, availHeight):  # noqa: N803 (reportlab's names)
        if self.__dict__.get("_wrap_key") == self._key(availWidth):
            return self.width, self.height
        answer = super().wrap(availWidth, availHeight)
        self._wrap_key = self._key(availWidth) if answer[1] != 0x7FFFFFFF else None
        return answer


class Grid(Table):
    """A Table that measures itself once per available size.

    KeepTogether and nested tables ask a table's size several times at the same place before it is drawn;
    reportlab recomputes every cell each time. The answer depends only on the available width and height
    (the height only for long tables), so it is reused for the same pair (tests/bench/bench_report.py).
    """

    def wrap(self, availWidth, availHeight):  # noqa: N803 (reportlab's names)
        key = (availWidth, availHeight)
        if self.__dict__.get("_wrap_key") == key:
            return self._width, self._height
        answer = super().wrap(availWidth, availHeight)
        self._wrap_key = key
        return answer


CELL_PAD = 6  # reportlab's default left and right cell padding, points


def para(text: str, style: str | ParagraphStyle = "body") -> Paragraph:
    """A paragraph with the text escaped for reportlab's mini-markup; ``style`` a name in STYLES or a style."""
    safe = str(text).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return _Para(safe, STYLES[style] if isinstance(style, str) else style)


def _cell(text: str, width: float):
    """A string cell as it is when it fits on one line of its column (drawn by the table itself, the same
    font, size and leading as the "cell" paragraph style), else a wrapped paragraph."""
    cell = STYLES["cell"]
    if "\n" not in text and stringWidth(text, cell.fontName, cell.fontSize) <= width - 2 * CELL_PAD:
        return text
    return para(text, "cell")


def grid(rows: list[list], widths: list[float], header: bool = True) -> Table:
    """A table with light rules; string cells that do not fit one line become wrapped paragraphs."""
    data = [[_cell(c, w) if isinstance(c, str) else c for c, w in zip(row, widths, strict=False)] for row in rows]
    table = Grid(data, colWidths=widths, repeatRows=1 if header else 0)
    cell = STYLES["cell"]
    style = [("GRID", (0, 0), (-1, -1), 0.3, RULE), ("VALIGN", (0, 0), (-1, -1), "TOP"),
             ("TOPPADDING", (0, 0), (-1, -1), 2), ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
             ("LEFTPADDING", (0, 0), (-1, -1), CELL_PAD), ("RIGHTPADDING", (0, 0), (-1, -1), CELL_PAD),
             ("FONT", (0, 0), (-1, -1), cell.fontName, cell.fontSize, cell.leading)]
    if header:
        style.append(("BACKGROUND", (0, 0), (-1, 0), SHADE))
    table.setStyle(TableStyle(style))
    return table


def fields(pairs: list[tuple[str, str]], width: float, label_share: float = 0.6) -> Table:
    """Label/value pairs in two columns of pairs; ``label_share``: a label column's share of a quarter width."""
    rows, row = [], []
    for label, value in pairs:
        row += [para(label, "small"), para(value or "-", "cell")]
        if len(row) == 4:
            rows.append(row)
            row = []
    if row:
        rows.append(row + ["", ""])
    quarter = width / 4
    table = Grid(rows, colWidths=[quarter * label_share, quarter * (2 - label_share)] * 2)
    table.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LINEBELOW", (0, 0), (-1, -1), 0.2, SHADE)]))
    return table


def bar_chart(title: str, values: dict[str, float], unit: str, width: float, fmt: str = "%g") -> Drawing:
    """A horizontal bar chart with one bar per category and its value printed at the bar's end."""
    names = list(values) or ["(none)"]
    numbers = [values[n] for n in values] or [0]
    height = 34 + 16 * len(names)
    drawing = Drawing(width, height)
    chart = HorizontalBarChart()
    chart.x, chart.y, chart.width, chart.height = 120, 10, width - 190, height - 34
    chart.data = [numbers]
    chart.categoryAxis.categoryNames = [n.replace("_", " ") for n in names]
    chart.categoryAxis.labels.fontSize = 7.5
    chart.categoryAxis.reverseDirection = True
    chart.valueAxis.valueMin = 0
    if fmt == "%.0f":  # counts: whole-number ticks, and room above the longest bar so a count of 1 is not the axis
        top = max(numbers)
        step = max(1, -(-int(top) // 6))
        chart.valueAxis.valueStep = step
        chart.valueAxis.valueMax = max(step * 2, (int(top) // step + 1) * step)
        chart.valueAxis.labelTextFormat = "%d"
    chart.valueAxis.labels.fontSize = 7
    chart.bars[0].fillColor = colors.HexColor("#3d6b8c")
    chart.barLabelFormat = fmt
    chart.barLabels.fontSize = 7
    chart.barLabels.boxAnchor = "w"
    chart.barLabels.dx = 3
    drawing.add(chart)
    drawing.add(String(0, height - 12, f"{title} ({unit})", fontName="Helvetica-Bold", fontSize=9))
    return drawing


def numbered_canvas(header: str, fingerprint: str, page: tuple[float, float] = PAGE):
    """A canvas class that writes the header, 'page N of M' and the fingerprint on every page."""

    class NumberedCanvas(canvas.Canvas):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []

        def showPage(self):  # noqa: N802 - reportlab's name
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            total = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                self._decorate(total)
                super().showPage()
            super().save()

        def _decorate(self, total: int) -> None:
            w, h = page
            self.setFont("Helvetica", 7.5)
            self.setFillColor(RULE)
            self.drawString(MARGIN, h - 10 * mm, header)
            self.drawRightString(w - MARGIN, 9 * mm, f"page {self._pageNumber} of {total}")
            self.drawString(MARGIN, 9 * mm, f"data fingerprint SHA-256 {fingerprint}")
            self.setStrokeColor(SHADE)
            self.line(MARGIN, h - 11.5 * mm, w - MARGIN, h - 11.5 * mm)

    return NumberedCanvas
