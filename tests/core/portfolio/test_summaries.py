"""Backtest summaries for reading: Sharpe t, the cohorts' record and the drawdowns, against outside tools."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from scipy import stats

from valuesift.core.portfolio.performance import sharpe_ratio
from valuesift.core.portfolio.summaries import cohort_summary, drawdown_summary, sharpe_inference

CASE_10 = np.array([0.02, -0.01, 0.03, -0.05, -0.02, 0.04, 0.01, -0.03, 0.05, 0.02, -0.01, 0.03])


def test_sharpe_inference_is_case_19() -> None:
    # Reference case 19 (Lo 2002): monthly SR 0.15275252, SE 0.29035419, t 0.52609030.
    st = pd.DataFrame({"sharpe": [sharpe_ratio(CASE_10, 0.002)], "n_months": [12.0]}, index=["cheapest"])
    si = sharpe_inference(st)
    assert si.loc["cheapest", "sharpe_monthly"] == pytest.approx(0.15275252, abs=1e-8)
    assert si.loc["cheapest", "se_monthly"] == pytest.approx(0.29035419, abs=1e-8)
    assert si.loc["cheapest", "t"] == pytest.approx(0.52609030, abs=1e-7)


@pytest.mark.parametrize("holding", [1, 3], ids=["one-month", "overlapping"])
def test_cohort_record_against_scipy_and_statsmodels(holding: int) -> None:
    rng = np.random.default_rng(3)
    dates = pd.date_range("2010-01-31", periods=40, freq="ME")
    ex = pd.Series(rng.normal(0.004, 0.03, size=40), index=dates)
    ex.iloc[[5, 17]] = np.nan                                   # cohorts not completed
    cs = cohort_summary(ex, holding)
    x = ex.dropna().to_numpy()
    # Reference: scipy.stats.ttest_1samp (the naive t); statsmodels OLS on a constant with HAC,
    # maxlags = holding - 1 and no small-sample correction; the uniform kernel (Hansen & Hodrick 1980,
    # reference case 17) for overlapping cohorts (with 0 lags both kernels are the plain variance).
    assert cs["t_naive"] == pytest.approx(stats.ttest_1samp(x, 0.0).statistic, rel=1e-12)
    fit = sm.OLS(x, np.ones_like(x)).fit(cov_type="HAC", cov_kwds={"maxlags": holding - 1, "kernel": "uniform",
                                                                  "use_correction": False})
    assert cs["t_hac"] == pytest.approx(float(fit.tvalues[0]), rel=1e-9)
    assert cs["n_cohorts"] == 38 and cs["n_beat"] == int((x > 0).sum())
    assert cs["share_beat"] == pytest.approx((x > 0).mean())
    assert cs["best_formed"] == ex.idxmax() and cs["worst_excess"] == pytest.approx(x.min())


def test_no_cohort_gives_an_empty_record() -> None:
    cs = cohort_summary(pd.Series(dtype=float), 1)
    assert cs["n_cohorts"] == 0 and math.isnan(cs["share_beat"]) and pd.isna(cs["best_formed"])


def test_drawdown_summary_by_hand() -> None:
    # Hand calculation: deepest -0.25 in March; 2 of 5 months more than 10 % below the peak.
    idx = pd.date_range("2020-01-31", periods=5, freq="ME")
    dd = pd.DataFrame({"cheapest": [0.0, -0.05, -0.25, -0.12, 0.0], "universe": [np.nan] * 5}, index=idx)
    ds = drawdown_summary(dd)
    assert ds.loc["cheapest", "deepest"] == -0.25 and ds.loc["cheapest", "trough"] == idx[2]
    assert ds.loc["cheapest", "share_below"] == pytest.approx(2 / 5) and ds.loc["cheapest", "n_months"] == 5
    assert ds.loc["universe", "n_months"] == 0 and math.isnan(ds.loc["universe", "deepest"])
