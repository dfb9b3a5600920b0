"""Fama-MacBeth slopes against linearmodels' FamaMacBeth and statsmodels OLS."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from linearmodels.panel import FamaMacBeth

from valuesift.core.regression.famamacbeth import fm_slopes
from valuesift.core.correlation.ic import ic_by_date
from valuesift.core.inference.hac import mean_inference

# REFERENCE_CHECKS 7 (Fama & MacBeth 1973, JPE 81(3)): four dates x six stocks.
EY = np.array([
    [.02, .04, .06, .08, .10, .12],
    [.03, .05, .04, .09, .11, .07],
    [.01, .06, .08, .05, .12, .10],
    [.04, .02, .10, .07, .09, .13],
])
RET = np.array([
    [.010, .000, .020, .030, .025, .040],
    [-.010, .005, .000, .015, .020, .010],
    [.030, .020, .010, .040, .000, .015],
    [.000, -.020, .015, .010, .005, .030],
])


def _linearmodels_fit(y: np.ndarray, x: np.ndarray):  # type: ignore[no-untyped-def]
    t, n = y.shape
    idx = pd.MultiIndex.from_product([[f"s{i}" for i in range(n)], pd.date_range("2001-01-31", periods=t, freq="ME")],
                                     names=["entity", "date"])
    df = pd.DataFrame({"ret": y.T.ravel(), "ey": x.T.ravel()}, index=idx)
    df["const"] = 1.0
    return FamaMacBeth(df["ret"], df[["const", "ey"]]).fit()


def test_reference_slopes_and_mean() -> None:
    b, n = fm_slopes(EY, RET)
    np.testing.assert_allclose(b, [0.33571429, 0.33684211, -0.29605263, 0.38650307], atol=1e-8)
    assert (n == 6).all()
    # linearmodels' default SE is sd(ddof 1)/sqrt(T) of the per-date estimates (no lag): our naive SE.
    inf = mean_inference(b, 0)
    assert inf["mean"] == pytest.approx(0.19075171, abs=1e-8)
    assert inf["se_naive"] == pytest.approx(0.16269952, abs=1e-8)
    assert inf["t_naive"] == pytest.approx(1.1724171, abs=1e-6)
    res = _linearmodels_fit(RET, EY)
    assert inf["mean"] == pytest.approx(float(res.params["ey"]), abs=1e-10)
    assert inf["se_naive"] == pytest.approx(float(res.std_errors["ey"]), abs=1e-10)
    assert inf["t_naive"] == pytest.approx(float(res.tstats["ey"]), abs=1e-8)


def test_reference_spearman_per_date() -> None:
    # REFERENCE_CHECKS 7: per-date Spearman ICs [0.885714, 1, -0.885714, 0.942857].
    rho, _, _ = ic_by_date(EY, RET, min_breadth=3)
    np.testing.assert_allclose(rho, [0.885714, 1, -0.885714, 0.942857], atol=1e-6)


def test_random_panel_matches_linearmodels_with_missing_cells() -> None:
    rng = np.random.default_rng(11)
    x = rng.normal(size=(24, 30))
    y = 0.01 * x + rng.normal(scale=0.05, size=x.shape)
    b, _ = fm_slopes(x, y)
    res = _linearmodels_fit(y, x)
    assert b.mean() == pytest.approx(float(res.params["ey"]), abs=1e-12)
    assert b.std(ddof=1) / np.sqrt(b.size) == pytest.approx(float(res.std_errors["ey"]), rel=1e-9)


def test_controls_match_statsmodels_per_date() -> None:
    # Sector dummies and log market cap: statsmodels OLS on explicit dummies, date by date.
    rng = np.random.default_rng(5)
    t, n = 8, 40
    z = rng.normal(size=(t, n))
    lm = rng.normal(size=(t, n))
    sec = np.arange(n) % 4
    y = 0.02 * z - 0.01 * lm + 0.01 * sec[None, :] + rng.normal(scale=0.03, size=(t, n))
    z[0, :3] = np.nan
    y[1, 5] = np.nan
    b, cnt = fm_slopes(z, y, [lm], sec)
    for d in range(t):
        ok = np.isfinite(z[d]) & np.isfinite(y[d])
        dummies = (sec[ok, None] == np.arange(4)[None, :]).astype(float)
        xmat = np.column_stack([z[d, ok], lm[d, ok], dummies])
        ref = sm.OLS(y[d, ok], xmat).fit()
        assert b[d] == pytest.approx(ref.params[0], abs=1e-12)
        assert cnt[d] == ok.sum()


def test_unidentified_date_is_nan() -> None:
    z = np.array([[1.0, 1.0, 1.0, 1.0], [1.0, 2.0, 3.0, 4.0]])
    y = np.array([[0.1, 0.2, 0.3, 0.4], [0.1, 0.2, 0.3, 0.5]])
    b, _ = fm_slopes(z, y)
    assert np.isnan(b[0]) and np.isfinite(b[1])

