"""Least-squares lines (one cross-section per date, and pooled) against statsmodels OLS."""

from __future__ import annotations

import math

import numpy as np
import pytest
import statsmodels.api as sm

from valuesift.core.regression.pooled import row_simple_ols, simple_ols


@pytest.fixture()
def xy() -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(8)
    x = rng.normal(size=(6, 30))
    y = 0.01 + 0.02 * x + rng.normal(scale=0.05, size=x.shape)
    x[0, :5] = np.nan
    y[1, 3:9] = np.nan
    return x, y


def test_each_row_equals_statsmodels(xy: tuple[np.ndarray, np.ndarray]) -> None:
    x, y = xy
    a, b, t, n = row_simple_ols(x, y)
    for i in range(x.shape[0]):
        ok = np.isfinite(x[i]) & np.isfinite(y[i])
        # Reference: statsmodels OLS with a constant, classical (non-robust) standard errors.
        fit = sm.OLS(y[i, ok], sm.add_constant(x[i, ok])).fit()
        assert (a[i], b[i]) == pytest.approx(tuple(fit.params), rel=1e-10)   # coefficients: tight
        assert t[i] == pytest.approx(float(fit.tvalues[1]), rel=1e-8)          # t: slightly looser
        assert n[i] == int(ok.sum())


def test_pooled_equals_statsmodels(xy: tuple[np.ndarray, np.ndarray]) -> None:
    x, y = xy
    a, b, t, n = simple_ols(x, y)
    ok = np.isfinite(x) & np.isfinite(y)
    fit = sm.OLS(y[ok], sm.add_constant(x[ok])).fit()
    assert (a, b) == pytest.approx(tuple(fit.params), rel=1e-10)
    assert t == pytest.approx(float(fit.tvalues[1]), rel=1e-8) and n == int(ok.sum())


@pytest.mark.parametrize("x, y", [([1.0, 2.0], [1.0, 3.0]), ([2.0, 2.0, 2.0], [1.0, 2.0, 3.0])],
                         ids=["two-points", "no-spread-in-x"])
def test_undefined_lines_are_nan(x: list[float], y: list[float]) -> None:
    a, b, t, _ = simple_ols(np.array(x), np.array(y))
    assert math.isnan(a) and math.isnan(b) and math.isnan(t)
