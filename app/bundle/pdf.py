"""report.pdf: cover, one-page summary, one page per chart, the screen and a data-quality appendix.

Built with reportlab's page layout engine on landscape A4 in one font family
(Bitstream Vera, shipped inside reportlab, so every machine prints the same
glyphs).  ``invariant=1`` fixes the document id and dates, so the same input
gives the same bytes.  Every dynamic string is escaped before layout.
"""

from __future__ import annotations

import io
import time
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path
from typing import Any, Sequence
from xml.sax.saxutils import escape

import pandas as pd
import reportlab
from PIL import Image as PILImage
from reportlab import rl_config
from reportlab.lib import colors
from reportlab.lib.fonts import addMapping
from reportlab.lib.pagesizes import A4, landscape
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfdoc, pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen import canvas as rl_canvas
from reportlab.platypus.flowables import BalancedColumns
from reportlab.platypus import (CondPageBreak, Image, KeepInFrame, KeepTogether, PageBreak, Paragraph, SimpleDocTemplate,
                                Spacer, Table, TableStyle)

from valuesift.app.bundle.charts import print_jpeg

__all__ = ["ReportInput", "build_pdf", "FONT"]

# Binary streams as they are (JPEG passes through; no ASCII85 text encoding that costs time and 25 % size).
rl_config.useA85 = 0

FONT = "VSSans"
_PAGE = landscape(A4)
_MARGIN = 14 * mm
_INK = colors.HexColor("#26313d")
_MUTED = colors.HexColor("#6f7782")
_CHEAP = colors.HexColor("#1f4f85")
_RULE = colors.HexColor("#cfc9bf")
_SHADE = colors.HexColor("#f1eee8")


def _register_fonts() -> None:
    if FONT in pdfmetrics.getRegisteredFontNames():
        return
    base = Path(reportlab.__file__).parent / "fonts"
    pdfmetrics.registerFont(TTFont(FONT, str(base / "Vera.ttf")))
    pdfmetrics.registerFont(TTFont(FONT + "-Bold", str(base / "VeraBd.ttf")))
    pdfmetrics.registerFont(TTFont(FONT + "-Italic", str(base / "VeraIt.ttf")))
    pdfmetrics.registerFont(TTFont(FONT + "-BoldItalic", str(base / "VeraBI.ttf")))
    addMapping(FONT, 0, 0, FONT)
    addMapping(FONT, 1, 0, FONT + "-Bold")
    addMapping(FONT, 0, 1, FONT + "-Italic")
    addMapping(FONT, 1, 1, FONT + "-BoldItalic")


def _styles() -> dict[str, ParagraphStyle]:
    _register_fonts()
    body = ParagraphStyle("body", fontName=FONT, fontSize=9.5, leading=12.5, textColor=_INK)
    return {
        "title": ParagraphStyle("title", parent=body, fontName=FONT + "-Bold", fontSize=22, leading=27, spaceAfter=4),
        "subtitle": ParagraphStyle("subtitle", parent=body, fontSize=12, leading=15, textColor=_MUTED, spaceAfter=8),
        "h1": ParagraphStyle("h1", parent=body, fontName=FONT + "-Bold", fontSize=15, leading=19, spaceAfter=6),
        "h2": ParagraphStyle("h2", parent=body, fontName=FONT + "-Bold", fontSize=11, leading=14, spaceBefore=6,
                             spaceAfter=3),
        "body": body,
        "reading": ParagraphStyle("reading", parent=body, fontSize=10.5, leading=14),
        "small": ParagraphStyle("small", parent=body, fontSize=7.6, leading=9.4, spaceAfter=1.5),
        "cell": ParagraphStyle("cell", parent=body, fontSize=7.6, leading=9.2),
        "tiny": ParagraphStyle("tiny", parent=body, fontSize=6.6, leading=7.6),
        "cellb": ParagraphStyle("cellb", parent=body, fontName=FONT + "-Bold", fontSize=7.6, leading=9.2),
        "mono": ParagraphStyle("mono", parent=body, fontName="Courier", fontSize=7, leading=9),
        "caution": ParagraphStyle("caution", parent=body, fontSize=9, leading=12, borderColor=_DEAR_BORDER,
                                  borderWidth=0.8, borderPadding=6, backColor=colors.HexColor("#fbf6ef"),
                                  spaceBefore=6, spaceAfter=6),
        "missing": ParagraphStyle("missing", parent=body, fontSize=11, leading=15, borderColor=_RULE,
                                  borderWidth=0.8, borderPadding=10, backColor=_SHADE),
    }


_DEAR_BORDER = colors.HexColor("#c77a2e")


def _p(text: Any, style: ParagraphStyle) -> Paragraph:
    return Paragraph(escape(str(text)), style)


@dataclass(frozen=True)
class ReportInput:
    """Everything the report lays out (all text already generated from the numbers)."""

    title: str
    study_name: str
    footer: str
    facts: Sequence[tuple[str, str]]
    configuration: Sequence[tuple[str, str]]
    inputs: Sequence[dict[str, Any]]
    caution: str
    note: str | None
    summary_lead: Sequence[str]
    summary_table: pd.DataFrame
    summary_after: Sequence[str]
    charts: Sequence[tuple[str, str, bytes | None, Sequence[str]]]   # (key, heading, JPEG/PNG or None, 2 lines)
    images_note: str | None
    screen_title: str
    screen_cheap: pd.DataFrame
    screen_dear: pd.DataFrame
    quality_files: pd.DataFrame
    quality_lines: Sequence[str]
    quality_reasons: pd.DataFrame


class _NumberedCanvas(rl_canvas.Canvas):
    """Writes "page x of y" and the footer once the page count is known."""

    footer = ""
    #: the document's creation time (seconds since 1970, UTC); None keeps reportlab's own
    created_epoch: float | None = None

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self._saved: list[dict[str, Any]] = []
        if self.created_epoch is not None:
            # The real creation date in the document information (invariant mode alone writes 2000-01-01);
            # the document id stays fixed, so identical content at the same time gives identical bytes.
            stamp = pdfdoc.TimeStamp(1)
            stamp.t = float(self.created_epoch)
            stamp.lt = time.gmtime(stamp.t)
            stamp.YMDhms = tuple(stamp.lt)[:6]
            stamp.dhh = stamp.dmm = 0
            stamp.tzname = "UTC"
            self._doc._timeStamp = stamp

    def showPage(self) -> None:  # noqa: N802 - reportlab's name
        self._saved.append(dict(self.__dict__))
        self._startPage()

    def save(self) -> None:
        n = len(self._saved)
        for state in self._saved:
            self.__dict__.update(state)
            self._footer(n)
            super().showPage()
        super().save()

    def _footer(self, n: int) -> None:
        w, _ = _PAGE
        self.setFont(FONT, 7.5)
        self.setFillColor(_MUTED)
        self.setStrokeColor(_RULE)
        self.line(_MARGIN, 10 * mm, w - _MARGIN, 10 * mm)
        self.drawString(_MARGIN, 6.5 * mm, self.footer[:150])
        self.drawRightString(w - _MARGIN, 6.5 * mm, f"page {self._pageNumber} of {n}")


def _table(rows: list[list[Any]], widths: Sequence[float], *, header: bool = True, zebra: bool = True,
           align_right_from: int | None = None, pad: float = 2) -> Table:
    t = Table(rows, colWidths=list(widths), repeatRows=1 if header else 0)
    style = [
        ("FONT", (0, 0), (-1, -1), FONT, 7.6),
        ("TEXTCOLOR", (0, 0), (-1, -1), _INK),
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        ("LINEBELOW", (0, 0), (-1, 0 if header else -1), 0.6 if header else 0.25, _RULE),
        ("TOPPADDING", (0, 0), (-1, -1), pad),
        ("BOTTOMPADDING", (0, 0), (-1, -1), pad),
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
    ]
    if header:
        style += [("FONT", (0, 0), (-1, 0), FONT + "-Bold", 7.6), ("BACKGROUND", (0, 0), (-1, 0), _SHADE)]
    if zebra:
        for i in range(2 if header else 1, len(rows), 2):
            style.append(("BACKGROUND", (0, i), (-1, i), colors.HexColor("#f8f6f2")))
    if align_right_from is not None:
        style.append(("ALIGN", (align_right_from, 1 if header else 0), (-1, -1), "RIGHT"))
    t.setStyle(TableStyle(style))
    return t


def _frame_rows(df: pd.DataFrame, st: dict[str, ParagraphStyle], wrap: Sequence[str] = ()) -> list[list[Any]]:
    rows: list[list[Any]] = [[_p(c, st["cellb"]) for c in df.columns]]
    for rec in df.itertuples(index=False, name=None):
        rows.append([_p(v, st["cell"]) if c in wrap else ("" if v is None else str(v)) for c, v in zip(df.columns, rec)])
    return rows


def _image(image: bytes, max_w: float, max_h: float) -> Image:
    """A chart for print: JPEG bytes as they are (a PNG is converted first); the 2x PNG is in charts/."""
    if image[:8] == b"\x89PNG\r\n\x1a\n":
        image = print_jpeg(image)
    with PILImage.open(io.BytesIO(image)) as im:
        width, height = im.size
    ratio = height / width
    w = min(max_w, max_h / ratio)
    return Image(io.BytesIO(image), width=w, height=w * ratio)


def build_pdf(data: ReportInput, path: Path, created: datetime | None = None) -> int:
    """Write the report to ``path``; returns the number of pages."""
    st = _styles()
    w, h = _PAGE
    usable_w = w - 2 * _MARGIN
    usable_h = h - 2 * _MARGIN - 6 * mm
    story: list[Any] = []

    # -- cover -------------------------------------------------------------------------------
    story.append(_p(data.title, st["title"]))
    story.append(_p(f"Study \u201c{data.study_name!s}\u201d: the committee report", st["subtitle"]))
    facts = [[_p(k, st["cellb"]), _p(v, st["cell"])] for k, v in data.facts]
    conf = [[_p(k, st["tiny"]), _p(v, st["tiny"])] for k, v in data.configuration]
    third = (len(conf) + 2) // 3  # three columns of settings in small type keep the cover on one page
    # the facts fill their cell of the row below (usable_w - 166 mm) less a 4 mm gap: never under the settings
    left = _table(facts, [26 * mm, usable_w - 166 * mm - 26 * mm - 4 * mm], header=False, zebra=False)
    cols = [_table(conf[k * third:(k + 1) * third], [27 * mm, 21 * mm], header=False, pad=1.2) for k in range(3)]
    conf_block = [[_p("Every setting", st["h2"]), "", ""], cols]
    right = Table(conf_block, colWidths=[48.5 * mm, 48.5 * mm, 48.5 * mm])
    right.setStyle(TableStyle([("SPAN", (0, 0), (2, 0)), ("VALIGN", (0, 0), (-1, -1), "TOP"),
                               ("LEFTPADDING", (0, 0), (-1, -1), 0)]))
    top = Table([[left, right]], colWidths=[usable_w - 166 * mm, 166 * mm])
    top.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 0)]))
    story.append(top)
    story.append(_p("Input files", st["h2"]))
    frows: list[list[Any]] = [[_p(x, st["cellb"]) for x in ("file (as uploaded)", "kind", "bytes", "rows",
                                                             "securities", "SHA-256")]]
    for f in data.inputs:
        frows.append([_p(f.get("name", ""), st["cell"]), str(f.get("kind", "")), f"{int(f.get('size', 0)):,}",
                      "" if f.get("rows") is None else f"{int(f['rows']):,}",
                      "" if f.get("securities") is None else f"{int(f['securities']):,}",
                      _p(f.get("sha256", ""), st["mono"])])
    story.append(_table(frows, [58 * mm, 22 * mm, 20 * mm, 16 * mm, 18 * mm, usable_w - 134 * mm], align_right_from=None))
    if data.note:
        story.append(_p("Note: " + data.note, st["body"]))
    story.append(_p(data.caution, st["caution"]))
    story.append(PageBreak())

    # -- summary -----------------------------------------------------------------------------
    page: list[Any] = [_p("Summary", st["h1"])]
    for s in data.summary_lead:
        page.append(_p(s, st["reading"]))
        page.append(Spacer(1, 3))
    page.append(Spacer(1, 4))
    tbl = data.summary_table
    n = len(tbl.columns)
    widths = [usable_w * 0.07] + [usable_w * 0.93 / (n - 1)] * (n - 1)
    page.append(_table(_frame_rows(tbl, st, wrap=list(tbl.columns)), widths, align_right_from=1))
    page.append(Spacer(1, 6))
    for s in data.summary_after:
        page.append(_p(s, st["body"]))
        page.append(Spacer(1, 2))
    # One page, as a committee reads it: a summary a few lines too long is set a little smaller rather than
    # leaving its last lines alone on a page of their own.
    story.append(KeepInFrame(usable_w, usable_h - 2 * mm, page, mode="shrink"))
    story.append(PageBreak())

    # -- charts ------------------------------------------------------------------------------
    for key, heading, picture, lines in data.charts:
        head = _p(heading, st["h1"])
        reading = [_p(line, st["reading"]) for line in lines if line]
        # The image takes what the heading and the reading leave of the page, so a longer
        # reading shrinks the chart instead of spilling onto a page of its own.
        taken = head.wrap(usable_w, usable_h)[1] + sum(r.wrap(usable_w, usable_h)[1] + 4 for r in reading)
        img_h = max(usable_h * 0.4, usable_h - taken - 40)
        block: list[Any] = [head]
        if picture is not None:
            block.append(_image(picture, usable_w, img_h))
        else:
            block.append(_p(data.images_note or "The image of this chart could not be rendered.", st["missing"]))
            block.append(Spacer(1, 8))
            block.append(_p(f"The interactive chart is charts/{key}.html in this bundle.", st["body"]))
        block.append(Spacer(1, 6))
        block.extend(reading)
        story.append(KeepTogether(block))
        story.append(PageBreak())

    # -- screen ------------------------------------------------------------------------------
    story.append(_p(data.screen_title, st["h2"]))
    sw = [20 * mm, 26 * mm, 16 * mm, 24 * mm, 14 * mm, 15 * mm, 27 * mm, 17 * mm, 17 * mm]
    sw.append(usable_w - sum(sw))
    for label, df in (("Highest-ranked (cheapest)", data.screen_cheap), ("Lowest-ranked", data.screen_dear)):
        story.append(CondPageBreak(60 * mm))
        story.append(_p(f"The {len(df)} {label.lower()}", st["h2"]))
        t = _table(_frame_rows(df, st, wrap=["Security", "Sector", "P/E", "Quantile", "Flags"]), sw, align_right_from=2)
        t.setStyle(TableStyle([("TOPPADDING", (0, 0), (-1, -1), 1), ("BOTTOMPADDING", (0, 0), (-1, -1), 1),
                               ("ALIGN", (6, 1), (6, -1), "LEFT"), ("ALIGN", (9, 1), (9, -1), "LEFT")]))
        story.append(t)
    story.append(PageBreak())

    # -- data quality ------------------------------------------------------------------------
    story.append(_p("Appendix: data quality", st["h1"]))
    q = data.quality_files
    qw = [46 * mm] + [(usable_w - 46 * mm) / (len(q.columns) - 1)] * (len(q.columns) - 1)
    story.append(_table(_frame_rows(q, st, wrap=list(q.columns)), qw, align_right_from=2))
    if len(data.quality_reasons):
        story.append(_p("Cells set aside, by file and reason", st["h2"]))
        r = data.quality_reasons
        rw = [46 * mm, 30 * mm, 50 * mm, 22 * mm]
        rw.append(usable_w - sum(rw))
        story.append(_table(_frame_rows(r, st, wrap=list(r.columns)), rw))
    story.append(_p("Securities, splits and notes", st["h2"]))
    notes = [_p(line, st["small"]) for line in data.quality_lines]
    if len(notes) > 8:
        story.append(BalancedColumns(notes, nCols=2, spaceBefore=2, innerPadding=8))
    else:
        story.extend(notes)

    canvas_cls = type("_Canvas", (_NumberedCanvas,), {
        "footer": data.footer, "created_epoch": created.timestamp() if created is not None else None})
    doc = SimpleDocTemplate(str(path), pagesize=_PAGE, leftMargin=_MARGIN, rightMargin=_MARGIN,
                            topMargin=_MARGIN, bottomMargin=_MARGIN + 4 * mm, invariant=1,
                            title=data.title, author="ValueSift", subject=f"Study {data.study_name}",
                            creator="ValueSift", producer="ValueSift (reportlab)")
    doc.build(story, canvasmaker=canvas_cls)
    return int(doc.page)

