"""Figure functions: pure, built from a real StudyResult, each chart carrying its sample and t-statistics."""

from __future__ import annotations

import re

import numpy as np
import plotly.graph_objects as go
import pytest
from scipy import stats

from valuesift.app.figures import backtest as fb
from valuesift.app.figures import company as fc
from valuesift.core.regression.pooled import simple_ols
from valuesift.core.study.derived import POOLED_BINS
from valuesift.app.figures import study as fs
from valuesift.app.figures.data import coverage_figure
from valuesift.app.figures.theme import CHEAP, DEAR, TEMPLATE_NAME, diverging
from valuesift.app.figures.common import message_figure

T_STAT = re.compile(r"\bt\s*[=~]\s*-?\d|t=-?\d")


def _text(fig: go.Figure) -> str:
    parts = [fig.layout.title.text or "", fig.layout.title.subtitle.text or ""]
    parts += [a.text or "" for a in fig.layout.annotations]
    ticks = fig.layout.xaxis.ticktext
    parts += list(ticks) if ticks else []
    return " ".join(parts)


def _has_data(fig: go.Figure) -> bool:
    for tr in fig.data:
        for attr in ("y", "z"):
            v = getattr(tr, attr, None)
            if v is not None and len(v) and np.isfinite(np.asarray(v, dtype=float)).any():
                return True
    return False


def _all_figures(res):  # type: ignore[no-untyped-def]
    h = 3
    d = res.rank_ic.index[res.rank_ic[h].notna().to_numpy()][5]
    sec = res.screen.index[0]
    return {
        "ic_by_horizon": fs.ic_by_horizon_figure(res),
        "ic_over_time": fs.ic_over_time_figure(res, h),
        "quantiles": fs.quantile_returns_figure(res, h),
        "spread": fs.spread_over_time_figure(res, h),
        "scatter_date": fs.scatter_figure(res, h, d),
        "scatter_pooled": fs.scatter_figure(res, h),
        "fm": fs.fm_slopes_figure(res),
        "growth": fb.growth_figure(res),
        "drawdown": fb.drawdown_figure(res),
        "cohorts": fb.cohort_figure(res),
        "company_signal": fc.signal_history_figure(res, sec),
        "company_returns": fc.later_returns_figure(res, sec, h),
    }


def test_every_figure_has_data_and_uses_the_one_template(small_result) -> None:  # type: ignore[no-untyped-def]
    for name, fig in _all_figures(small_result).items():
        assert fig.data, name
        assert _has_data(fig), name
        assert fig.layout.template.layout.font.family == go.layout.Template(
            __import__("plotly.io", fromlist=["templates"]).templates[TEMPLATE_NAME]).layout.font.family, name


STAT_CHARTS = ["ic_by_horizon", "ic_over_time", "quantiles", "spread", "scatter_date", "scatter_pooled", "fm",
               "growth", "cohorts", "company_returns"]


@pytest.mark.parametrize("name", STAT_CHARTS)
def test_charts_state_t_statistics_and_sample(small_result, name: str) -> None:  # type: ignore[no-untyped-def]
    text = _text(_all_figures(small_result)[name])
    assert T_STAT.search(text), text
    assert re.search(r"\d+ (dates|names|months|pairs|cohorts|formation dates)|n=\d+|Sample", text), text


def test_ic_bars_are_the_engine_numbers(small_result) -> None:  # type: ignore[no-untyped-def]
    fig = fs.ic_by_horizon_figure(small_result)
    s = small_result.ic_summary
    bar = fig.data[0]
    np.testing.assert_allclose(np.asarray(bar.y, dtype=float), s["mean_ic"].to_numpy(dtype=float))
    np.testing.assert_allclose(np.asarray(bar.error_y.array, dtype=float),
                               (s["ci_high"] - s["mean_ic"]).to_numpy(dtype=float))
    for h, tick in zip(s.index, fig.layout.xaxis.ticktext):
        assert f"t={s.loc[h, 't_hac']:.1f}" in tick
        assert f"n={int(s.loc[h, 'n_dates'])}" in tick


def test_scatter_line_matches_scipy_linregress(small_result) -> None:  # type: ignore[no-untyped-def]
    # Reference: scipy.stats.linregress (slope, intercept, stderr of the slope) on the same pairs.
    h = 3
    d = small_result.rank_ic.index[small_result.rank_ic[h].notna().to_numpy()][10]
    x = small_result.signal_z.loc[d].to_numpy(dtype=float)
    y = small_result.forward_returns[h].loc[d].to_numpy(dtype=float)
    ok = np.isfinite(x) & np.isfinite(y)
    ref = stats.linregress(x[ok], y[ok])
    a, b, t, _ = simple_ols(x[ok], y[ok])
    fit = small_result.cross_section_fit[h].loc[d]  # the field the figure draws
    assert (fit['intercept'], fit['slope'], fit['t_slope']) == pytest.approx((a, b, t), rel=1e-12)
    assert b == pytest.approx(ref.slope, rel=1e-10)
    assert a == pytest.approx(ref.intercept, rel=1e-10, abs=1e-12)
    assert t == pytest.approx(ref.slope / ref.stderr, rel=1e-9)
    fig = fs.scatter_figure(small_result, h, d)
    line = fig.data[1]
    xs = np.asarray(line.x, dtype=float)
    np.testing.assert_allclose(np.asarray(line.y, dtype=float), ref.intercept + ref.slope * xs, rtol=1e-9)
    assert f"{small_result.rank_ic.loc[d, h]:.3f}" in _text(fig)
    assert len(fig.data[0].x) == int(ok.sum())


def test_pooled_scatter_bins_hold_equal_counts(small_result) -> None:  # type: ignore[no-untyped-def]
    fig = fs.scatter_figure(small_result, 1)
    counts = np.asarray(fig.data[0].customdata, dtype=float)
    assert len(counts) == POOLED_BINS
    assert counts.max() - counts.min() <= 0.02 * counts.mean() + 2   # equal-count bins (quantile edges)


def test_quantile_bars_run_dear_to_cheap_colours(small_result) -> None:  # type: ignore[no-untyped-def]
    fig = fs.quantile_returns_figure(small_result, 3)
    colours = list(fig.data[0].marker.color)
    assert colours == diverging(small_result.config.n_quantiles)
    assert colours[0] == DEAR and colours[-1] == CHEAP
    np.testing.assert_allclose(np.asarray(fig.data[0].y, dtype=float),
                               small_result.quantile_mean.loc[3].to_numpy(dtype=float))


def test_palette_is_blue_to_brown_not_red_green() -> None:
    # Common practice for colour-vision deficiency: avoid a red-green contrast; ends are blue and brown.
    cols = diverging(7)
    rgb = [tuple(int(c[i:i + 2], 16) for i in (1, 3, 5)) for c in cols]
    assert rgb[-1][2] > rgb[-1][0]          # cheap end: blue dominates red
    assert rgb[0][0] > rgb[0][2]            # dear end: red/brown dominates blue
    assert all(g <= max(r, b) + 40 for r, g, b in rgb)   # no green-dominated colour


def test_fonts_are_readable_on_a_projector(small_result) -> None:  # type: ignore[no-untyped-def]
    import plotly.io as pio

    tl = pio.templates[TEMPLATE_NAME].layout
    sizes = [tl.font.size, tl.title.font.size, tl.title.subtitle.font.size, tl.xaxis.tickfont.size,
             tl.yaxis.tickfont.size, tl.legend.font.size, tl.hoverlabel.font.size]
    assert min(sizes) >= 13
    for fig in _all_figures(small_result).values():
        for ann in fig.layout.annotations:
            assert ann.font.size is None or ann.font.size >= 13


def test_growth_curve_is_the_backtest_growth(small_result) -> None:  # type: ignore[no-untyped-def]
    fig = fb.growth_figure(small_result)
    names = [t.name for t in fig.data]
    assert "cheapest quantile" in names
    tr = fig.data[names.index("cheapest quantile")]
    np.testing.assert_allclose(np.asarray(tr.y, dtype=float),
                               small_result.backtest.growth["cheapest"].to_numpy(dtype=float))
    assert fig.layout.yaxis.type == "log"


def test_every_growth_and_drawdown_legend_entry_has_a_line_one_can_see(small_result) -> None:  # type: ignore[no-untyped-def]
    """The equal-weight universe and a broad benchmark often coincide: the universe is drawn after the
    benchmark and dashed, so the line beneath shows through and neither legend entry is a line hidden
    under another (issue 13's review saw "universe, equal weight" in the legend with no visible line)."""
    for fig in (fb.growth_figure(small_result), fb.drawdown_figure(small_result)):
        names = [t.name for t in fig.data]
        for tr in fig.data:
            assert np.isfinite(np.asarray(tr.y, dtype=float)).any() and tr.line.width >= 2 and tr.visible in (None, True)
        styles = [(tr.line.color, tr.line.dash) for tr in fig.data]
        assert len(set(styles)) == len(styles), styles              # no two entries drawn alike
        if "universe, equal weight" in names and "benchmark" in names:
            assert names.index("universe, equal weight") > names.index("benchmark")
            assert fig.data[names.index("universe, equal weight")].line.dash == "dash"


def test_company_band_median_is_the_universe_median(small_result) -> None:  # type: ignore[no-untyped-def]
    sec = small_result.screen.index[0]
    fig = fc.signal_history_figure(small_result, sec)
    med = next(t for t in fig.data if t.name == "universe median")
    raw = small_result.signal_raw.where(small_result.universe)
    d = raw.index[raw.notna().sum(axis=1).to_numpy() >= 5][-1]
    j = list(raw.index).index(d)
    # Reference: numpy.nanmedian of the universe's raw signal on that date.
    assert float(med.y[j]) == pytest.approx(float(np.nanmedian(raw.loc[d].to_numpy(dtype=float))))


def test_unknown_company_gives_a_message_not_an_error(small_result) -> None:  # type: ignore[no-untyped-def]
    fig = fc.signal_history_figure(small_result, "NOPE99")
    assert "not part of the study" in fig.layout.annotations[0].text


def test_coverage_counts_valid_cells(small_panel) -> None:  # type: ignore[no-untyped-def]
    fig = coverage_figure(small_panel)
    z = np.asarray(fig.data[0].z, dtype=float)
    assert z.shape == (small_panel.shape[1], small_panel.shape[0])
    assert z.sum() == small_panel.valid_price_mask().sum()
    assert "40 securities x 72 month-ends" in fig.layout.title.subtitle.text


def test_message_figure_is_never_blank() -> None:
    fig = message_figure("Title", "Nothing to draw because of X.")
    assert fig.layout.annotations[0].text == "Nothing to draw because of X."
