"""Signals and cleaning: winsorising, z-scores, yields, P/E, the reporting lag, sectors."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from scipy.stats import mstats

from valuesift.core.panel import Panel
from valuesift.core.signals.build import dividend_yield, earnings_yield, lagged_eps, pe_ratio, trailing_dividends
from valuesift.core.signals.clean import sector_zscore
from valuesift.core.signals.clean import MAD_SCALE, clip_robust_rows, winsorise_rows, zscore_rows


def test_winsorise_matches_scipy_mstats_reference() -> None:
    # REFERENCE_CHECKS 12: scipy.stats.mstats.winsorize, limits (0.1, 0.1) -> [1, 1, 2, ..., 8, 8]
    # (order-statistic winsorising; percentile clipping would give -4.1 and 27.2 instead).
    x = np.array([-50, 1, 2, 3, 4, 5, 6, 7, 8, 200], dtype=float)
    got = winsorise_rows(x[None, :], 0.1, 0.1)[0]
    np.testing.assert_array_equal(got, [1, 1, 2, 3, 4, 5, 6, 7, 8, 8])
    np.testing.assert_array_equal(got, np.asarray(mstats.winsorize(x, limits=(0.1, 0.1))))
    assert got[0] != pytest.approx(np.percentile(x, 10))


@pytest.mark.parametrize("limits", [(0.01, 0.01), (0.05, 0.1), (0.2, 0.0), (0.0, 0.25)])
@pytest.mark.parametrize("n", [7, 50, 333])
def test_winsorise_random_rows_match_scipy(limits: tuple[float, float], n: int) -> None:
    rng = np.random.default_rng(n)
    x = rng.standard_t(2, size=(6, n))
    x[rng.random(x.shape) < 0.2] = np.nan
    got = winsorise_rows(x, *limits)
    for t in range(x.shape[0]):
        ok = np.isfinite(x[t])
        ref = np.asarray(mstats.winsorize(x[t, ok], limits=limits))  # scipy.stats.mstats.winsorize
        np.testing.assert_array_equal(got[t, ok], ref)
        assert np.isnan(got[t, ~ok]).all()


def test_zscore_ddof1_and_scipy_ddof0() -> None:
    # REFERENCE_CHECKS 13 (common practice): ddof 1 -> [-0.4590781, ...]; scipy.stats.zscore uses ddof 0.
    x = np.array([[0.05, 0.08, 0.02, 0.10, 0.07]])
    np.testing.assert_allclose(zscore_rows(x)[0], [-0.4590781, 0.5246607, -1.4428168, 1.1804865, 0.1967478],
                               atol=1e-7)
    np.testing.assert_allclose(zscore_rows(x, ddof=0)[0], [-0.5132649, 0.5865885, -1.6131183, 1.3198240, 0.2199707],
                               atol=1e-7)
    np.testing.assert_allclose(zscore_rows(x, ddof=0)[0], stats.zscore(x[0]), atol=1e-12)


def test_median_mad_zscore_matches_scipy_mad() -> None:
    # scipy.stats.median_abs_deviation(scale="normal") uses 1/Phi^{-1}(0.75) = 1.482602...;
    # ValueSift uses the rounded 1.4826 (relative difference < 2e-6).
    rng = np.random.default_rng(2)
    x = rng.normal(size=(1, 41))
    mad = stats.median_abs_deviation(x[0], scale="normal")
    ref = (x[0] - np.median(x[0])) / mad
    np.testing.assert_allclose(zscore_rows(x, "median_mad")[0], ref, rtol=2e-6)
    assert MAD_SCALE == pytest.approx(1 / stats.norm.ppf(0.75), rel=2e-6)


def test_constant_row_zscore_is_nan() -> None:
    z = zscore_rows(np.array([[0.1, 0.1, 0.1], [0.1, np.nan, np.nan], [0.1, 0.2, 0.3]]))
    assert np.isnan(z[:2]).all() and np.isfinite(z[2]).all()


def test_clip_robust_z() -> None:
    x = np.array([[1.0, 2.0, 3.0, 4.0, 100.0]])
    med, mad = 3.0, 1.0  # median 3, |x - 3| = [2, 1, 0, 1, 97] -> MAD 1
    got = clip_robust_rows(x, 3.0)[0]
    np.testing.assert_allclose(got, [1, 2, 3, 4, med + 3 * MAD_SCALE * mad])


def test_yields_and_pe_reference() -> None:
    # REFERENCE_CHECKS 14 (common practice): price 50, quarterly dividends .25 .25 .30 .30 -> TTM yield 0.022;
    # EPS 2.50 -> P/E 20, EY 0.05; EPS -1 -> P/E not meaningful, EY -0.02 (ranked dearest).
    price = np.array([[50.0, 50.0, 50.0]])
    eps = np.array([[2.50, -1.00, 0.0]])
    np.testing.assert_allclose(earnings_yield(price, eps)[0], [0.05, -0.02, 0.0])
    pe = pe_ratio(price, eps)[0]
    assert pe[0] == pytest.approx(20.0) and np.isnan(pe[1]) and np.isnan(pe[2])
    ey = earnings_yield(price, eps)
    assert np.argmin(ey[0]) == 1  # the loss-maker is dearest by earnings yield ...
    assert np.argmin(np.array([10.0, 20.0, -5.0])) == 2  # ... while a P/E sort puts it first (the trap)
    d = np.zeros((15, 1))
    d[[2, 5, 8, 11], 0] = [0.25, 0.25, 0.30, 0.30]
    dy = dividend_yield(np.full((15, 1), 50.0), d)
    assert dy[11, 0] == pytest.approx(0.022, abs=1e-12)
    assert np.isnan(dy[10, 0])  # first 11 dates: incomplete trailing window
    assert dy[14, 0] == pytest.approx((0.25 + 0.30 + 0.30) / 50)  # the first payment left the window


def test_trailing_window_is_twelve_months_inclusive() -> None:
    d = np.zeros((25, 1))
    d[0, 0] = 1.0
    d[12, 0] = 2.0
    ttm = trailing_dividends(d)
    assert ttm[11, 0] == 1.0 and ttm[12, 0] == 2.0 and ttm[23, 0] == 2.0 and ttm[24, 0] == 0.0


def test_reporting_lag_shifts_eps() -> None:
    dates = pd.date_range("2010-01-31", periods=8, freq="ME")
    prices = pd.DataFrame({"AAA01": np.full(8, 10.0)}, index=dates)
    eps = pd.DataFrame({"AAA01": [np.nan, 1.0, np.nan, np.nan, 2.0, np.nan, np.nan, np.nan]}, index=dates)
    p = Panel(prices=prices, eps=eps)
    e0 = lagged_eps(p, 0, 15)[:, 0]
    e3 = lagged_eps(p, 3, 15)[:, 0]
    np.testing.assert_array_equal(e0[1:], [1, 1, 1, 2, 2, 2, 2])
    assert np.isnan(e3[:4]).all()
    np.testing.assert_array_equal(e3[4:], [1, 1, 1, 2])
    e_short = lagged_eps(p, 0, 1)[:, 0]
    assert np.isnan(e_short[3])  # used at most one month after the stamp
    assert eps.iloc[1, 0] == 1.0 and np.isnan(eps.iloc[2, 0])  # caller's frame untouched


def test_sector_zscore_rules() -> None:
    x = np.array([[1.0, 2.0, 3.0, 10.0, 20.0, 30.0, 5.0]])
    codes = np.array([0, 0, 0, 1, 1, 1, 2])  # sector 2 has one name
    z = sector_zscore(x, 1.0, codes, "mean_std", 3, "drop")[0]
    np.testing.assert_allclose(z[:3], [-1, 0, 1])
    np.testing.assert_allclose(z[3:6], [-1, 0, 1])
    assert np.isnan(z[6])
    zr = sector_zscore(x, 1.0, codes, "mean_std", 3, "raw")[0]
    assert zr[6] == pytest.approx(zscore_rows(x)[0, 6])
    zp = sector_zscore(x, 1.0, codes, "mean_std", 3, "pool")[0]
    assert zp[6] == pytest.approx(zscore_rows(x)[0, 6])  # pooled group of 1 < 3 -> universe z
    zneg = sector_zscore(x, -1.0, codes, "mean_std", 3, "drop")[0]
    np.testing.assert_allclose(zneg[:3], [1, 0, -1])  # orientation flips
