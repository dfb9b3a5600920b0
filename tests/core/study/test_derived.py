"""The fields derived for display equal what an outside tool computes from the study's own fields."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from _panels import make_panel
from scipy import stats

from valuesift.core.config import StudyConfig
from valuesift.core.inference.hac import headline_inference
from valuesift.core.reporting.screen import security_history
from valuesift.core.result import StudyResult
from valuesift.core.study import run_study


@pytest.fixture(scope="module")
def res() -> StudyResult:
    return run_study(make_panel(n_dates=72, n_sec=40, seed=2, ic=0.2),
                     StudyConfig(horizons=(1, 3), min_breadth=5, holding_months=3))


def test_rolling_spread_is_the_full_window_rolling_mean(res: StudyResult) -> None:
    for h in (1, 3):
        # Reference: pandas rolling mean needing all 12 dates (the rule of the rolling IC).
        ref = res.spread[h].rolling(12, min_periods=12).mean()
        pd.testing.assert_series_equal(res.rolling_spread[(h, 12)], ref, check_names=False)
        pd.testing.assert_series_equal(res.rolling_ic[(h, 12)], res.rank_ic[h].rolling(12, min_periods=12).mean(),
                                       check_names=False)


def test_pooled_and_per_date_lines_equal_statsmodels(res: StudyResult) -> None:
    h = 3
    z = res.signal_z.reindex_like(res.forward_returns[h]).to_numpy(dtype=float)
    y = res.forward_returns[h].to_numpy(dtype=float)
    ok = np.isfinite(z) & np.isfinite(y)
    fit = sm.OLS(y[ok], sm.add_constant(z[ok])).fit()
    pf = res.pooled_fit.loc[h]
    assert (pf["intercept"], pf["slope"]) == pytest.approx(tuple(fit.params), rel=1e-10)
    assert pf["t_slope"] == pytest.approx(float(fit.tvalues[1]), rel=1e-8) and pf["n_pairs"] == ok.sum()
    i = 20
    ref = stats.linregress(z[i, ok[i]], y[i, ok[i]])
    row = res.cross_section_fit[h].iloc[i]
    assert row["slope"] == pytest.approx(ref.slope, rel=1e-10)
    assert row["t_slope"] == pytest.approx(ref.slope / ref.stderr, rel=1e-8)
    assert res.pooled_bins[h]["count"].sum() == ok.sum()


def test_medians_and_bands_equal_numpy(res: StudyResult) -> None:
    uni = res.universe.to_numpy(dtype=bool)
    raw = np.where(uni, res.signal_raw.to_numpy(dtype=float), np.nan)
    fwd = np.where(uni, res.forward_returns[1].to_numpy(dtype=float), np.nan)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)      # all-NaN dates: NaN, as the field holds
        ref_med = np.nanmedian(raw, axis=1)
        ref_fwd = np.nanmedian(fwd, axis=1)
        ref_q = np.nanquantile(raw, [0.2, 0.8], axis=1).T
    ok = res.signal_bands["n_names"].to_numpy() >= 5
    np.testing.assert_allclose(res.signal_bands["median"].to_numpy()[ok], ref_med[ok], rtol=1e-13)
    np.testing.assert_allclose(res.signal_bands[["b1", "b4"]].to_numpy()[ok], ref_q[ok], rtol=1e-13)
    np.testing.assert_allclose(res.forward_return_median[1].to_numpy(), ref_fwd, rtol=1e-13, equal_nan=True)


def test_security_history_correlation_equals_scipy(res: StudyResult) -> None:
    sec = res.signal_z.columns[3]
    hist = security_history(res, sec, 3)
    a, b = hist["signal_z"].to_numpy(), hist["return_z"].to_numpy()
    ok = np.isfinite(a) & np.isfinite(b)
    ref = stats.pearsonr(a[ok], b[ok])
    assert hist.attrs["correlation"] == pytest.approx(ref.statistic, rel=1e-12) and hist.attrs["n_pairs"] == ok.sum()
    assert 2 * stats.t.sf(abs(hist.attrs["correlation_t_naive"]), ok.sum() - 2) == pytest.approx(ref.pvalue, rel=1e-9)
    # The shown t allows for the 3-month overlap: the headline t (Hansen-Hodrick, checked against its references
    # in tests/core/inference) of the standardised cross products, whose mean is Pearson's r (scipy above).
    x, y = a[ok], b[ok]
    u = stats.zscore(x, ddof=1) * stats.zscore(y, ddof=1) * len(x) / (len(x) - 1)
    assert u.mean() == pytest.approx(ref.statistic, rel=1e-12)
    head = headline_inference(u, 3)
    assert hist.attrs["correlation_t"] == pytest.approx(head["t"], rel=1e-12)
    assert hist.attrs["correlation_t_method"] == head["method"]
    assert hist.attrs["independent_periods"] == pytest.approx(ok.sum() / 3)


def test_backtest_records_and_coverage(res: StudyResult) -> None:
    assert set(res.sharpe_inference.index) == set(res.backtest.stats.index)
    ex = res.backtest.cohorts["excess"].dropna()
    assert res.cohort_summary["n_cohorts"] == len(ex)
    assert res.cohort_summary["t_naive"] == pytest.approx(stats.ttest_1samp(ex, 0.0).statistic, rel=1e-12)
    assert res.cohort_summary["hac_lags"] == 2                       # holding 3 months: h - 1 lags
    names = res.universe.sum(axis=1)
    assert res.coverage["mean_universe_names"] == pytest.approx(names[names > 0].mean())
    assert res.spread_facts.loc[1, "positive_share"] == pytest.approx((res.spread[1].dropna() > 0).mean())
