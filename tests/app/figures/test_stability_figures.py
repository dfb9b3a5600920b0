"""The stability and comparison figures and sentences draw only the result's numbers and never overclaim."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

from valuesift.app.bundle.stability_text import compare_sentences, period_sentences, stability_sentences
from valuesift.app.figures import compare as fc
from valuesift.app.figures import stability as fst
from valuesift.core.compare import run_compare
from valuesift.core.config import StudyConfig
from valuesift.core.study import run_study

sys.path.insert(0, str(Path(__file__).parents[2] / "core"))  # tests/core: the invented panels
from _panels import make_panel  # noqa: E402


@pytest.fixture(scope="module")
def res():
    return run_study(make_panel(72, 40, seed=1, ic=0.2, with_mcap=True), StudyConfig(horizons=(1, 12)))


def test_figures_draw_the_result_numbers(res) -> None:
    per = fst.periods_figure(res, 1)
    rows = res.ic_by_period[(res.ic_by_period["horizon"] == 1) & (res.ic_by_period["n_dates"] > 0)]
    assert np.allclose(np.asarray(per.data[0].x, dtype=float), rows["mean_ic"].to_numpy(dtype=float), equal_nan=True)
    dec = fst.decay_figure(res)
    assert np.allclose(np.asarray(dec.data[0].y, dtype=float), res.ic_decay["marginal_ic"].to_numpy(dtype=float))
    cw = fst.cap_weight_figure(res)
    assert [t.name for t in cw.data] == ["equal-weighted", "cap-weighted"]
    assert len(fst.sectors_figure(res, 12).data) == 2 and len(fst.regimes_figure(res, 12).data) == 2


def test_every_period_is_a_labelled_row_including_the_two_halves(res) -> None:
    per = fst.periods_figure(res, 1)
    rows = res.ic_by_period[(res.ic_by_period["horizon"] == 1) & (res.ic_by_period["n_dates"] > 0)]
    assert list(per.data[0].y) == list(rows["period"])
    assert any(str(p).startswith("before ") for p in per.data[0].y) and any(str(p).startswith("from ") for p in per.data[0].y)
    # year names are labels: a number axis would drop the halves and label only every other year
    assert per.layout.yaxis.type == "category" and per.layout.yaxis2.type == "category"


def test_too_short_gets_no_verdict_word(res) -> None:
    # 12-month horizon on 72 months: every calendar year is too short to judge
    text = " ".join(period_sentences(res, 12))
    assert "too short to judge" in text or "no single calendar year" in text
    lab = fst.periods_figure(res, 12).data[0].text
    assert all(t == "too short to judge" for t in lab)
    for s in stability_sentences(res, 12):
        assert "strong evidence" not in s or "t =" in s  # a verdict word only beside its t


def test_sentences_say_gross_in_sample_and_not_cause(res) -> None:
    text = " ".join(stability_sentences(res, 1))
    assert "gross of trading costs" in text and "in-sample" in text and "not a cause" in text


def test_comparison_figures_and_sentences() -> None:
    panel = make_panel(60, 30, seed=2, ic=0.2)
    cmp = run_compare(panel, ["earnings_yield", "dividend_yield"], StudyConfig(horizons=(1, 3)))
    hm = fc.correlation_heatmap_figure(cmp)
    assert np.allclose(np.asarray(hm.data[0].z, dtype=float), cmp.correlation.to_numpy())
    assert list(fc.compare_ic_figure(cmp, 3).data[0].y) == list(cmp.table[cmp.table["horizon"] == 3]["mean_ic"])
    text = " ".join(compare_sentences(cmp, 3))
    assert "best of several looks better than it is" in text and "gross of trading costs" in text


def test_a_universe_too_small_for_sectors_and_controls_says_so_in_words() -> None:
    """8 names in 7 sectors: no sector can be ranked inside and the controlled regression (signal, momentum, beta,
    six sector dummies, intercept) has more terms than names, so the page shows a message and sentences instead of
    an empty chart and "n/a"."""
    import dataclasses

    import pandas as pd

    from valuesift.app.bundle.stability_text import controls_sentences, sector_sentences

    panel = make_panel(72, 8, seed=3, ic=0.2)
    secs = panel.prices.columns
    panel = dataclasses.replace(panel, sectors=pd.Series([f"Sector {min(i, 6)}" for i in range(8)], index=secs))
    small = run_study(panel, StudyConfig(horizons=(1, 12), min_breadth=5))
    fig = fst.sectors_figure(small, 12)
    assert not fig.data and "None of the 7 sectors had enough names" in fig.layout.annotations[0].text
    assert sector_sentences(small, 12)[0].startswith("No sector can be judged on its own at 12 months")
    text = " ".join(controls_sentences(small, 12))
    assert "n/a" not in text and "nan" not in text
    assert "cannot be estimated: no date had enough names with every control" in text
