"""report.pdf read back with poppler (pdftotext, pdftoppm), the plain-language readings, determinism and no browser."""

from __future__ import annotations

import dataclasses
import hashlib
import json
import re
import shutil
import subprocess
from pathlib import Path
from typing import Any

import numpy as np
import pytest

from valuesift.app.words import settings_in_words
from valuesift.app.bundle import INCLUDE_CHOICES, write_bundle
from valuesift.app.bundle.text import CHART_READINGS, headline_sentences, verdict
from valuesift.app.caution import CAUTION
from valuesift.core.errors import ConfigError

PDFTOTEXT = shutil.which("pdftotext")
PDFTOPPM = shutil.which("pdftoppm")
poppler = pytest.mark.skipif(PDFTOTEXT is None or PDFTOPPM is None,
                             reason="poppler-utils (pdftotext, pdftoppm) not installed")


def _text(pdf: Path, first: int, last: int) -> str:
    out = subprocess.run([str(PDFTOTEXT), "-layout", "-f", str(first), "-l", str(last), str(pdf), "-"],
                         check=True, capture_output=True, timeout=60).stdout.decode("utf-8")
    return out


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


@poppler
def test_cover_carries_configuration_inputs_and_caution(built: Any, demo_result: Any, demo_panel: Any) -> None:
    paths, _ = built
    cover = _flat(_text(paths.folder / "report.pdf", 1, 1))
    # every setting in words: its label and its value as a person reads it (the settings table), never the code;
    # read in drawing order (-raw), so that a label wrapped inside its cell reads as one phrase
    drawn = _flat(subprocess.run([str(PDFTOTEXT), "-raw", "-f", "1", "-l", "1", str(paths.folder / "report.pdf"), "-"],
                                 check=True, capture_output=True, timeout=60).stdout.decode("utf-8"))
    for _, label, value in settings_in_words(demo_result.config):
        assert _flat(label) in drawn, label
        assert _flat(value).split(",")[0] in drawn, label
    assert "hac_lag_rule" not in cover and "overlap_or_auto" not in cover and "earnings_yield" not in cover
    for src in demo_panel.sources:
        assert src["name"] in cover and src["sha256"] in cover, src["name"]
    assert _flat(CAUTION) in cover
    assert "Committee demo" in cover and "2024-12-31" in cover
    assert "Prepared for the spring meeting." in cover
    assert "119 names on the as-of date" in drawn      # the demo universe: 120 companies, one delisted by then
    # the reading decisions a committee sees first: the index column left out, the suspected splits
    assert "Columns left out prices.csv: Maren All-Share" in drawn
    assert "Suspected splits" in drawn and "see the appendix" in drawn


@poppler
def test_summary_page_numbers_equal_summary_json(built: Any) -> None:
    paths, _ = built
    summary = json.loads((paths.folder / "summary.json").read_text(encoding="utf-8"))
    page = _flat(_text(paths.folder / "report.pdf", 2, 2))
    assert page.startswith("Summary") or " Summary " in f" {page}"
    for h in summary["config"]["horizons"]:
        b = summary[str(h)]
        assert f"{100 * b['spread_annualised']:.1f}%" in page and f"{b['spread_t']:.2f}" in page, h
        assert f"{b['mean_ic']:.3f}" in page and f"{b['ic_t']:.2f}" in page
        assert f"{b['ic_ci_low']:.3f} to {b['ic_ci_high']:.3f}" in page
        assert f"{b['fm_t']:.2f}" in page
    # the summary leads with the answer, and the shown horizon's sentence carries its numbers
    assert page.lstrip().startswith("Summary The clearest horizon is")
    b = summary["12"]
    assert f"{100 * abs(b['spread_annualised']):.1f}% a year; t = {b['spread_t']:.2f}" in page
    assert "not distinguishable from noise" not in page


@poppler
def test_every_page_renders_with_content_and_page_numbers(built: Any, tmp_path: Path) -> None:
    from PIL import Image

    paths, _ = built
    subprocess.run([str(PDFTOPPM), "-png", "-r", "30", str(paths.folder / "report.pdf"), str(tmp_path / "pg")],
                   check=True, timeout=120)
    pages = sorted(tmp_path.glob("pg-*.png"))
    assert len(pages) == paths.pages
    for i, p in enumerate(pages, start=1):
        grey = np.asarray(Image.open(p).convert("L"), dtype=float)
        page_text = _text(paths.folder / "report.pdf", i, i)
        assert f"page {i} of {paths.pages}" in page_text
        body = [ln for ln in page_text.splitlines() if ln.strip() and "research use only" not in ln]
        assert len(body) >= 3, f"page {i} has almost nothing on it"
        assert (grey < 160).mean() > 0.002, f"{p.name} looks blank"


@poppler
def test_chart_pages_have_two_line_readings_from_the_numbers(built: Any, demo_result: Any, demo_panel: Any) -> None:
    paths, _ = built
    text = _flat(_text(paths.folder / "report.pdf", 3, paths.pages))
    for key, fn in CHART_READINGS.items():
        lines = [x for x in fn(demo_result, 12, demo_panel) if x]
        assert len(lines) == 2, key
        for line in lines:
            assert _flat(line) in text, (key, line)


@poppler
def test_screen_page_lists_cheapest_and_dearest_holdings(built: Any, demo_result: Any) -> None:
    paths, _ = built
    text = _flat(_text(paths.folder / "report.pdf", 1, paths.pages))
    s = demo_result.screen
    held = s[s["holding_weight"].notna() & np.isfinite(s["zscore"].to_numpy(dtype=float))]
    # "lowest-ranked", not "dearest": the lower 15 of 30 holdings include middle quantiles
    assert "The 15 highest-ranked (cheapest)" in text and "The 15 lowest-ranked" in text and "Dearest 15" not in text
    for sec in list(held.index[:15]) + list(held.index[-15:]):
        assert sec in text, sec
    assert "Appendix: data quality" in text and "prices.csv" in text


def test_verdict_wording_follows_t() -> None:
    # Common practice: |t| below 2 is not distinguishable from zero at the 5 % level (normal 97.5 % point 1.96);
    # that is absence of evidence, not evidence of absence. Sign-aware: a negative t is the reverse relation.
    assert verdict(1.2) == verdict(-1.99) == "no evidence either way at this sample size"
    assert "5% level" in verdict(2.4) and "reverse" in verdict(-2.01)
    assert "strong" in verdict(3.5) and "reverse" in verdict(-3.5)
    assert "cannot be judged" in verdict(float("nan"))


def test_too_short_horizons_get_no_verdict_word(demo_panel: Any) -> None:
    # The demo's 36-month horizon rests on 4 independent periods: its sentences carry numbers, no verdict.
    from valuesift.app.bundle.text import answer_sentences
    from valuesift.core.study import StudyConfig, run_study

    res = run_study(demo_panel, StudyConfig(horizons=(1, 36)))
    for sent in headline_sentences(res, 36):
        for word in ("strong evidence", "some evidence", "no evidence either way"):
            assert word not in sent
    assert "too short to judge" in headline_sentences(res, 36)[0]
    assert "Too short to judge: 36 months (4.0 independent periods)." in answer_sentences(res)


def test_headline_is_generated_from_the_numbers(demo_result: Any) -> None:
    ss = demo_result.spread_summary.copy()
    h = 12
    ss.loc[h, "mean_annualised"] = -0.031
    ss.loc[h, "t_hac"] = -0.84
    ss.loc[h, "evidence"] = "no_evidence"
    weak = dataclasses.replace(demo_result, spread_summary=ss)
    first = headline_sentences(weak, h)[0]
    assert "the dearest fifth of the universe (equal-weighted, gross of costs, in-sample) out-earned the cheapest " \
           "fifth by 3.1% a year; t = -0.84" in first
    assert "no evidence either way at this sample size" in first
    strong = headline_sentences(demo_result, h)[0]
    assert "the cheapest fifth" in strong and strong != first


def test_unknown_include_and_horizon_are_refused(demo_result: Any, demo_panel: Any, tmp_path: Path) -> None:
    with pytest.raises(ConfigError, match="cannot include 'chart:pie'"):
        write_bundle(demo_result, demo_panel, None, tmp_path, study_name="x", include=["chart:pie"])
    with pytest.raises(ConfigError, match="horizon 7 is not a horizon"):
        write_bundle(demo_result, demo_panel, None, tmp_path, study_name="x", horizon=7)


def _hashes(folder: Path, files: tuple[str, ...]) -> dict[str, str]:
    return {f: hashlib.sha256((folder / f).read_bytes()).hexdigest() for f in files}


def test_same_inputs_give_identical_bundle_apart_from_creation_time(built: Any, demo_result: Any,
                                                                     demo_panel: Any, created: Any,
                                                                     tmp_path: Path) -> None:
    first, _ = built
    later = created.replace(hour=17)
    again = write_bundle(demo_result, demo_panel, None, tmp_path / "b", study_name="Committee demo",
                         note="Prepared for the spring meeting.", created=later)
    assert again.files == first.files
    a, b = _hashes(first.folder, first.files), _hashes(again.folder, again.files)
    # The cover prints the preparation time, so report.pdf differs; the manifest differs in its time and that hash.
    differ = {f for f in a if a[f] != b[f]}
    assert differ <= {"report.pdf", "slides.pptx", "manifest.json"}, differ   # both carry the creation time
    ma = json.loads((first.folder / "manifest.json").read_text(encoding="utf-8"))
    mb = json.loads((again.folder / "manifest.json").read_text(encoding="utf-8"))
    assert ma.pop("created_utc") != mb.pop("created_utc")
    fa = [f for f in ma.pop("files") if f["path"] not in ("report.pdf", "slides.pptx")]
    fb = [f for f in mb.pop("files") if f["path"] not in ("report.pdf", "slides.pptx")]
    assert fa == fb and ma == mb


def test_report_pdf_is_byte_identical_for_identical_content(built: Any, demo_result: Any, demo_panel: Any,
                                                            created: Any, tmp_path: Path) -> None:
    from valuesift.app.bundle.content import report_input
    from valuesift.app.bundle.pdf import build_pdf
    from valuesift.app.bundle.build import merge_inputs

    paths, _ = built
    png = {p.stem: p.read_bytes() for p in sorted((paths.folder / "charts").glob("*.png"))}
    data = report_input(demo_result, demo_panel, merge_inputs(None, demo_panel), study_name="Committee demo",
                        title=None, note=None, horizon=12, chart_keys=list(png) or ["ic_by_horizon"], images=png,
                        images_note=None, created=created)
    build_pdf(data, tmp_path / "a.pdf")
    build_pdf(data, tmp_path / "b.pdf")
    assert (tmp_path / "a.pdf").read_bytes() == (tmp_path / "b.pdf").read_bytes()   # reportlab invariant mode


def test_without_a_browser_the_bundle_still_builds_and_says_how_to_get_images(
        demo_result: Any, demo_panel: Any, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("BROWSER_PATH", str(tmp_path / "no-such-chromium"))
    include = [c for c in INCLUDE_CHOICES if c in ("chart:ic_by_horizon", "chart:growth", "table:ic_by_date",
                                                     "table:screen")]
    paths = write_bundle(demo_result, demo_panel, None, tmp_path / "nb", study_name="no browser", include=include)
    assert not paths.images_rendered
    assert paths.note and "BROWSER_PATH" in paths.note and "chromium" in paths.note.lower()
    assert not any(f.endswith((".png", ".svg")) for f in paths.files)
    for must in ("charts/ic_by_horizon.html", "charts/growth.html", "tables/ic_by_date.csv", "tables/screen.csv",
                 "tables/tables.xlsx", "manifest.json", "report.pdf", "README.txt"):
        assert must in paths.files, must
    assert "tables/fm_slopes.csv" not in paths.files          # left out as asked
    manifest = json.loads((paths.folder / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["bundle"]["images_rendered"] is False and "BROWSER_PATH" in manifest["bundle"]["images_note"]
    if PDFTOTEXT:
        text = _flat(_text(paths.folder / "report.pdf", 1, paths.pages))
        assert "could not be rendered" in text and "BROWSER_PATH" in text and "apt-get install chromium" in text
