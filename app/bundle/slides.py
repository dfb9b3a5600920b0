"""The committee slide deck of the bundle (``slides.pptx``, python-pptx).

16:9 slides laid out from the same :class:`~valuesift.app.bundle.pdf.ReportInput` as the report, so
every sentence and number is the one the report prints (nothing is computed here):

* a title slide (study, universe, dates, as-of date);
* a summary slide: the report's leading sentences and a native table of the key numbers;
* one slide per chart: the chart image, its generated reading as the slide text and as speaker notes;
* the screen's cheapest and dearest names as native tables;
* on every slide a footer with the research-use caution and the source line (input files, dates,
  settings hash).

The deck is a ZIP like any Office file; its entries get a fixed time, so the same content and
creation time give the same bytes.
"""

from __future__ import annotations

import io
import zipfile
from datetime import datetime
from pathlib import Path
from typing import Any, Sequence

import pandas as pd
from pptx import Presentation
from pptx.dml.color import RGBColor
from pptx.util import Emu, Inches, Pt

from valuesift.app.bundle.pdf import ReportInput

__all__ = ["build_slides", "SLIDE_WIDTH_IN", "SLIDE_HEIGHT_IN", "SUMMARY_COLUMNS", "SCREEN_COLUMNS"]

SLIDE_WIDTH_IN = 13.333
SLIDE_HEIGHT_IN = 7.5
#: columns of the report's summary table shown on the summary slide
SUMMARY_COLUMNS = ("Horizon", "Mean rank IC", "IC t", "Spread a year", "Spread t", "Dates", "Evidence (spread)")
#: columns of the screen tables shown on the screen slides
SCREEN_COLUMNS = ("Security", "Sector", "Signal", "P/E", "Z-score", "Quantile")
_INK = RGBColor(0x26, 0x31, 0x3D)
_MUTED = RGBColor(0x6F, 0x77, 0x82)
_ACCENT = RGBColor(0x1F, 0x4F, 0x85)
_FIXED_TIME = (1980, 1, 1, 0, 0, 0)
_BLANK_LAYOUT = 6


def _text(slide: Any, left: float, top: float, width: float, height: float, lines: Sequence[str], *,
          size: int = 16, bold: bool = False, color: RGBColor = _INK) -> Any:
    box = slide.shapes.add_textbox(Inches(left), Inches(top), Inches(width), Inches(height))
    tf = box.text_frame
    tf.word_wrap = True
    for i, line in enumerate(lines):
        para = tf.paragraphs[0] if i == 0 else tf.add_paragraph()
        para.text = str(line)
        para.space_after = Pt(6)
        for run in para.runs:
            run.font.size = Pt(size)
            run.font.bold = bold
            run.font.color.rgb = color
    return box


def _footer(slide: Any, caution: str, source: str) -> None:
    _text(slide, 0.5, SLIDE_HEIGHT_IN - 0.72, SLIDE_WIDTH_IN - 1.0, 0.62, [caution, source], size=9, color=_MUTED)


def _notes(slide: Any, lines: Sequence[str]) -> None:
    slide.notes_slide.notes_text_frame.text = "\n".join(str(x) for x in lines)


def _table(slide: Any, df: pd.DataFrame, left: float, top: float, width: float, *, size: int = 11) -> Any:
    rows, cols = len(df) + 1, len(df.columns)
    height = 0.3 * rows
    shape = slide.shapes.add_table(rows, cols, Inches(left), Inches(top), Inches(width), Inches(height))
    table = shape.table
    for j, name in enumerate(df.columns):
        table.cell(0, j).text = str(name)
    for i, (_, row) in enumerate(df.iterrows(), start=1):
        for j, value in enumerate(row):
            table.cell(i, j).text = "" if value is None else str(value)
    for r in range(rows):
        for j in range(cols):
            for para in table.cell(r, j).text_frame.paragraphs:
                for run in para.runs:
                    run.font.size = Pt(size)
    return shape


def _title(slide: Any, text: str) -> None:
    _text(slide, 0.5, 0.3, SLIDE_WIDTH_IN - 1.0, 0.8, [text], size=26, bold=True, color=_ACCENT)


def _picture(slide: Any, image: bytes, left: float, top: float, max_w: float, max_h: float) -> None:
    from PIL import Image

    with Image.open(io.BytesIO(image)) as im:
        w, h = im.size
    scale = min(max_w / w, max_h / h)
    slide.shapes.add_picture(io.BytesIO(image), Inches(left), Inches(top), Emu(int(Inches(w * scale))),
                             Emu(int(Inches(h * scale))))


def _fix_zip_times(path: Path) -> None:
    """Rewrite the deck's ZIP with fixed entry times (same content, same bytes)."""
    with zipfile.ZipFile(path) as z:
        entries = [(i.filename, z.read(i.filename)) for i in z.infolist()]
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as z:
        for name, blob in entries:
            zi = zipfile.ZipInfo(name, date_time=_FIXED_TIME)
            zi.compress_type = zipfile.ZIP_DEFLATED
            z.writestr(zi, blob)
    path.write_bytes(buf.getvalue())


def build_slides(data: ReportInput, path: Path, *, source: str, created: datetime) -> int:
    """Write the deck to ``path``; returns the number of slides.

    Parameters
    ----------
    data : ReportInput
        What the report lays out (title, facts, summary, chart readings and images, screen tables).
    source : str
        The source line of every slide's footer (input files, dates, settings hash).
    created : datetime
        Written to the deck's document properties.
    """
    prs = Presentation()
    prs.slide_width = Inches(SLIDE_WIDTH_IN)
    prs.slide_height = Inches(SLIDE_HEIGHT_IN)
    blank = prs.slide_layouts[_BLANK_LAYOUT]
    facts = dict(data.facts)

    s = prs.slides.add_slide(blank)
    _text(s, 0.8, 1.6, SLIDE_WIDTH_IN - 1.6, 1.6, [data.title], size=34, bold=True, color=_ACCENT)
    sub = [f"{k}: {facts[k]}" for k in ("Study", "Universe", "Data period", "As of") if k in facts]
    _text(s, 0.8, 3.5, SLIDE_WIDTH_IN - 1.6, 2.4, sub, size=16)
    _footer(s, data.caution, source)
    _notes(s, [data.title, *sub] + ([data.note] if data.note else []))

    s = prs.slides.add_slide(blank)
    _title(s, "Summary")
    lead = [str(x) for x in data.summary_lead if str(x).strip()]
    _text(s, 0.5, 1.1, SLIDE_WIDTH_IN - 1.0, 2.4, lead, size=14)
    cols = [c for c in SUMMARY_COLUMNS if c in data.summary_table.columns]
    _table(s, data.summary_table[cols], 0.5, 3.6, SLIDE_WIDTH_IN - 1.0, size=12)
    _footer(s, data.caution, source)
    _notes(s, [*lead, *data.summary_after])

    for _key, heading, image, reading in data.charts:
        s = prs.slides.add_slide(blank)
        _title(s, heading)
        lines = [str(x) for x in reading]
        if image:
            _picture(s, image, 0.5, 1.15, 8.6, 5.4)
            _text(s, 9.3, 1.3, SLIDE_WIDTH_IN - 9.8, 5.2, lines, size=14)
        else:
            _text(s, 0.5, 1.3, SLIDE_WIDTH_IN - 1.0, 5.2, lines + [data.images_note or "No image."], size=16)
        _footer(s, data.caution, source)
        _notes(s, lines)

    for heading, df in (("Cheapest names", data.screen_cheap), ("Dearest names", data.screen_dear)):
        s = prs.slides.add_slide(blank)
        _title(s, heading)
        _text(s, 0.5, 1.0, SLIDE_WIDTH_IN - 1.0, 0.5, [data.screen_title], size=12, color=_MUTED)
        cols = [c for c in SCREEN_COLUMNS if c in df.columns]
        shown = df[cols].head(15)
        if len(shown):
            _table(s, shown, 0.5, 1.55, SLIDE_WIDTH_IN - 1.0, size=10)
        else:
            _text(s, 0.5, 1.6, SLIDE_WIDTH_IN - 1.0, 1.0, ["No names to show."], size=16)
        _footer(s, data.caution, source)
        _notes(s, [data.screen_title, f"{len(shown)} names listed."])

    props = prs.core_properties
    props.title = data.title[:250]
    props.author = "ValueSift"
    props.subject = f"Study {data.study_name}"
    props.created = props.modified = created.replace(tzinfo=None)
    props.last_modified_by = "ValueSift"
    props.revision = 1
    prs.save(str(path))
    _fix_zip_times(path)
    return len(prs.slides)
