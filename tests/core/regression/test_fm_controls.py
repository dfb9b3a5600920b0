"""Fama-MacBeth with several controls against linearmodels' FamaMacBeth; residualising against statsmodels OLS;
the control characteristics against plain loops."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from linearmodels import FamaMacBeth
from scipy import stats

from valuesift.core.regression.famamacbeth import fm_slopes
from valuesift.core.regression.factors import log_market_cap, momentum_12_1, rolling_beta
from valuesift.core.regression.multi import fm_multi, ic_net_of_controls, residualise


def _data(seed: int = 0, t: int = 12, n: int = 30):
    rng = np.random.default_rng(seed)
    z = rng.normal(size=(t, n))
    size = rng.normal(8, 1, size=(t, n)) + 0.3 * z
    mom = rng.normal(0, 0.2, size=(t, n))
    y = 0.01 * z + 0.002 * size + 0.03 * mom + rng.normal(0, 0.05, size=(t, n))
    z[rng.random(z.shape) < 0.08] = np.nan
    mom[rng.random(z.shape) < 0.05] = np.nan
    groups = np.arange(n) % 3
    return z, size, mom, y, groups


def _linearmodels(z, size, mom, y, groups, dummies: bool):
    t, n = z.shape
    idx = pd.MultiIndex.from_product([[f"S{i}" for i in range(n)], pd.date_range("2001-01-31", periods=t, freq="ME")],
                                     names=["entity", "date"])
    df = pd.DataFrame({"y": y.T.ravel(), "z": z.T.ravel(), "size": size.T.ravel(), "mom": mom.T.ravel()}, index=idx)
    if dummies:
        for g in range(3):
            df[f"g{g}"] = np.repeat((groups == g).astype(float), t)
        exog = df[["z", "size", "mom", "g0", "g1", "g2"]]
    else:
        exog = sm.add_constant(df[["z", "size", "mom"]])
    df = df.dropna()
    return FamaMacBeth(df["y"], exog.loc[df.index]).fit()  # linearmodels 7.1


@pytest.mark.parametrize("dummies", [False, True], ids=["intercept", "sector-dummies"])
def test_slopes_match_linearmodels(dummies: bool) -> None:
    z, size, mom, y, groups = _data()
    coefs, n = fm_multi(y, [z, size, mom], groups if dummies else None)
    ref = _linearmodels(z, size, mom, y, groups, dummies)
    for j, name in enumerate(["z", "size", "mom"]):
        assert np.nanmean(coefs[:, j]) == pytest.approx(ref.params[name], abs=1e-10)  # mean of per-date slopes
    # linearmodels' default SE: ddof-1 sd of the per-date estimates over sqrt(T) (REFERENCE_CHECKS case 7)
    c = coefs[:, 0]
    assert np.nanstd(c, ddof=1) / np.sqrt(np.isfinite(c).sum()) == pytest.approx(ref.std_errors["z"], rel=1e-8)


def test_one_regressor_equals_the_study_kernel() -> None:
    z, _, _, y, _ = _data(2)
    a = fm_multi(y, [z])[0][:, 0]
    b = fm_slopes(z, y)[0]
    assert np.allclose(a, b, atol=1e-12, equal_nan=True)


def test_reference_case_7_per_date_slopes() -> None:
    # REFERENCE_CHECKS case 7 (four dates x six stocks, checked against linearmodels)
    ey = np.array([[.02, .04, .06, .08, .10, .12], [.03, .05, .04, .09, .11, .07],
                   [.01, .06, .08, .05, .12, .10], [.04, .02, .10, .07, .09, .13]])
    ret = np.array([[.010, .000, .020, .030, .025, .040], [-.010, .005, .000, .015, .020, .010],
                    [.030, .020, .010, .040, .000, .015], [.000, -.020, .015, .010, .005, .030]])
    s = fm_multi(ret, [ey])[0][:, 0]
    assert s == pytest.approx([0.33571429, 0.33684211, -0.29605263, 0.38650307], abs=1e-8)


def test_residualise_matches_statsmodels_per_date() -> None:
    z, size, mom, _, groups = _data(4)
    e = residualise(z, [size, mom], groups)
    for t in (0, 5):
        ok = np.isfinite(z[t]) & np.isfinite(mom[t])
        x = np.column_stack([size[t, ok], mom[t, ok], *[(groups[ok] == g).astype(float) for g in range(3)]])
        res = sm.OLS(z[t, ok], x).fit().resid  # statsmodels 0.15, dummies in place of the constant
        assert e[t, ok] == pytest.approx(res, abs=1e-10)
        assert np.all(np.isnan(e[t, ~ok]))


def test_ic_net_of_controls_is_spearman_of_the_residual() -> None:
    z, size, mom, y, groups = _data(5)
    ic = ic_net_of_controls(z, y, [size], None, 5)
    ok = np.isfinite(z[3])
    res = sm.OLS(z[3, ok], sm.add_constant(size[3, ok])).fit().resid
    assert ic[3] == pytest.approx(stats.spearmanr(res, y[3, ok]).statistic, abs=1e-12)


def test_momentum_skips_the_last_month() -> None:
    lv = np.cumprod(1 + np.linspace(0.01, 0.14, 14))[:, None]
    m = momentum_12_1(lv)
    assert np.all(np.isnan(m[:12]))
    assert m[13, 0] == pytest.approx(lv[12, 0] / lv[1, 0] - 1)  # L_{t-1} / L_{t-12} - 1 (Jegadeesh & Titman 1993)


def test_rolling_beta_matches_polyfit_loop() -> None:
    rng = np.random.default_rng(9)
    mkt = rng.normal(0.005, 0.04, 80)
    r = 1.3 * mkt[:, None] + rng.normal(0, 0.03, size=(80, 3))
    r[rng.random(r.shape) < 0.1] = np.nan
    b = rolling_beta(r, mkt, window=60, min_months=24)
    for t in (23, 40, 79):
        lo = max(0, t - 59)
        ok = np.isfinite(r[lo:t + 1, 1])
        if ok.sum() >= 24:
            assert b[t, 1] == pytest.approx(np.polyfit(mkt[lo:t + 1][ok], r[lo:t + 1, 1][ok], 1)[0], rel=1e-8)
    assert np.all(np.isnan(b[:20]))


def test_log_market_cap_only_where_positive() -> None:
    out = log_market_cap(np.array([[100.0, 0.0, -5.0, np.nan]]))
    assert out[0, 0] == pytest.approx(np.log(100.0)) and np.all(np.isnan(out[0, 1:]))
