"""Pearson r and its t against scipy.stats.pearsonr (r, and the p-value the t implies)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from valuesift.core.correlation.pearson import correlation_t, pearson_with_t


def test_against_scipy() -> None:
    rng = np.random.default_rng(4)
    x = rng.normal(size=40)
    y = 0.3 * x + rng.normal(size=40)
    x[[3, 9]] = np.nan
    r, t, n = pearson_with_t(x, y)
    ok = np.isfinite(x) & np.isfinite(y)
    ref = stats.pearsonr(x[ok], y[ok])
    assert n == 38 and r == pytest.approx(ref.statistic, rel=1e-12)
    # scipy's two-sided p-value comes from the t distribution with n - 2 degrees of freedom
    assert 2 * stats.t.sf(abs(t), n - 2) == pytest.approx(ref.pvalue, rel=1e-9)


def test_reference_case_1_pearson() -> None:
    # Reference case 1 (/work/shared/REFERENCE_CHECKS.md): Pearson on the raw values -0.0376015.
    x = np.array([106, 86, 100, 101, 99, 103, 97, 113, 112, 110], dtype=float)
    y = np.array([7, 0, 27, 50, 28, 29, 20, 12, 6, 17], dtype=float)
    assert pearson_with_t(x, y)[0] == pytest.approx(-0.0376015, abs=1e-7)


def test_undefined() -> None:
    assert math.isnan(correlation_t(1.0, 10)) and math.isnan(correlation_t(0.3, 2))
    assert math.isnan(pearson_with_t(np.ones(5), np.arange(5.0))[0])
