"""The bundle's slides.pptx: read back with python-pptx (the round trip a presentation program relies on)."""

from __future__ import annotations

import io
import re
from pathlib import Path
from typing import Any

import pytest
from pptx import Presentation
from pptx.util import Inches

from valuesift.app.bundle import CHART_KEYS
from valuesift.app.bundle.build import creation_time, settings_hash, source_line
from valuesift.app.caution import CAUTION
from valuesift.app.bundle.text import CHART_READINGS
from valuesift.app.bundle.stability_text import STABILITY_READINGS
from valuesift.core.errors import ConfigError


@pytest.fixture(scope="module")
def deck(built: Any) -> Any:
    paths, _ = built
    assert "slides.pptx" in paths.files
    return Presentation(str(paths.folder / "slides.pptx"))


def _texts(slide: Any) -> list[str]:
    return [sh.text_frame.text for sh in slide.shapes if sh.has_text_frame]


def test_deck_is_16_to_9_with_title_summary_a_slide_per_chart_and_two_screen_slides(deck: Any) -> None:
    assert deck.slide_width == Inches(13.333) and deck.slide_height == Inches(7.5)
    assert abs(deck.slide_width / deck.slide_height - 16 / 9) < 0.001
    slides = list(deck.slides)
    assert len(slides) == 2 + len(CHART_KEYS) + 2
    assert any("Committee demo" in t for t in _texts(slides[0]))
    assert any(t == "Summary" for t in _texts(slides[1]))
    assert [t for t in _texts(slides[-2]) if t == "Cheapest names"] and [t for t in _texts(slides[-1])
                                                                          if t == "Dearest names"]


def test_every_slide_carries_the_caution_and_the_source_line(deck: Any, demo_result: Any, demo_panel: Any) -> None:
    from valuesift.app.bundle.build import merge_inputs

    line = source_line(demo_result, merge_inputs(None, demo_panel))
    assert "prices.csv" in line and settings_hash(demo_result) in line
    for slide in deck.slides:
        text = "\n".join(_texts(slide))
        assert CAUTION in text and line in text


def test_chart_slides_read_as_the_report_with_the_reading_as_speaker_notes(deck: Any, demo_result: Any,
                                                                           demo_panel: Any) -> None:
    chart_slides = list(deck.slides)[2:2 + len(CHART_KEYS)]
    for key, slide in zip(CHART_KEYS, chart_slides):
        reading = [str(x) for x in {**CHART_READINGS, **STABILITY_READINGS}[key](demo_result, 12, demo_panel)]
        body = "\n".join(_texts(slide))
        notes = slide.notes_slide.notes_text_frame.text
        for sentence in reading:
            assert sentence in body and sentence in notes, key


def test_cheapest_and_dearest_are_native_tables_of_the_screen(deck: Any, demo_result: Any) -> None:
    from valuesift.app.bundle.content import screen_frames

    _, cheap, dear = screen_frames(demo_result)
    for slide, frame in zip(list(deck.slides)[-2:], (cheap, dear)):
        tables = [sh.table for sh in slide.shapes if sh.has_table]
        assert len(tables) == 1
        t = tables[0]
        header = [t.cell(0, j).text for j in range(len(t.columns))]
        assert header[0] == "Security" and "P/E" in header
        names = [t.cell(i, 0).text for i in range(1, len(t.rows))]
        assert names == frame["Security"].head(15).tolist()


def test_pdf_and_deck_carry_the_real_creation_date(built: Any, created: Any) -> None:
    paths, _ = built
    pdf = (paths.folder / "report.pdf").read_bytes()
    stamp = re.search(rb"/CreationDate \(D:(\d{14})", pdf)
    assert stamp and stamp.group(1).decode() == created.strftime("%Y%m%d%H%M%S")   # not 2000-01-01
    deck = Presentation(str(paths.folder / "slides.pptx"))
    assert deck.core_properties.created == created.replace(tzinfo=None)


def test_source_date_epoch_sets_the_creation_time() -> None:
    assert creation_time({"SOURCE_DATE_EPOCH": "1700000000"}).isoformat() == "2023-11-14T22:13:20+00:00"
    assert creation_time({}).year >= 2024
    with pytest.raises(ConfigError, match="SOURCE_DATE_EPOCH"):
        creation_time({"SOURCE_DATE_EPOCH": "soon"})


def test_deck_bytes_depend_only_on_content_and_time(built: Any, demo_result: Any, demo_panel: Any, created: Any,
                                                     tmp_path: Path) -> None:
    from valuesift.app.bundle.build import merge_inputs
    from valuesift.app.bundle.content import report_input
    from valuesift.app.bundle.slides import build_slides

    data = report_input(demo_result, demo_panel, merge_inputs(None, demo_panel), study_name="x", title=None,
                        note=None, horizon=12, chart_keys=["ic_by_horizon"], images={}, images_note="no images",
                        created=created)
    build_slides(data, tmp_path / "a.pptx", source="Source: test", created=created)
    build_slides(data, tmp_path / "b.pptx", source="Source: test", created=created)
    assert (tmp_path / "a.pptx").read_bytes() == (tmp_path / "b.pptx").read_bytes()


def test_png_images_carry_the_source_line_along_their_bottom(built: Any) -> None:
    import numpy as np
    import plotly.graph_objects as go
    from PIL import Image

    from valuesift.app.render import render_images

    paths, _ = built
    for key in CHART_KEYS:
        im = np.asarray(Image.open(paths.folder / "charts" / f"{key}.png").convert("L"), dtype=float)
        strip = im[-int(im.shape[0] * 0.034):]
        assert im.shape == (1440, 2560)
        assert (strip < 200).mean() > 0.01, key          # text is written in the bottom strip
    # The stamp writes the line and nothing else: on an empty white figure an empty line leaves the image
    # white, and a line darkens only the bottom strip (12 px at this size: max(12, 3.4 % of 225)).
    blank = go.Figure(layout=dict(width=400, height=225, paper_bgcolor="white", plot_bgcolor="white",
                                  xaxis=dict(visible=False), yaxis=dict(visible=False)))
    got = render_images({"plain": blank}, width=400, height=225, svg=False, stamp="")
    plain = np.asarray(Image.open(io.BytesIO(got.png["plain"])).convert("L"))
    got = render_images({"written": blank}, width=400, height=225, svg=False, stamp="Source: x")
    written = np.asarray(Image.open(io.BytesIO(got.png["written"])).convert("L"))
    assert plain.shape == (225, 400) and plain.min() >= 250
    assert written[-12:].min() < 200 and written[:-12].min() >= 250
