"""Cap-weighted quantile returns against numpy's weighted average (a hand-checkable definition)."""

from __future__ import annotations

import numpy as np
import pytest

from valuesift.core.portfolio.capweight import cap_weighted_monthly, cap_weighted_quantile_means


def test_quantile_means_equal_numpy_average() -> None:
    rng = np.random.default_rng(0)
    q = rng.integers(1, 4, size=(5, 12)).astype(float)
    r = rng.normal(0, 0.05, size=(5, 12))
    cap = rng.uniform(1, 100, size=(5, 12))
    cap[0, 0] = np.nan
    got = cap_weighted_quantile_means(q, r, cap, 3)
    for t in range(5):
        for k in (1, 2, 3):
            m = (q[t] == k) & np.isfinite(cap[t])
            assert got[t, k - 1] == pytest.approx(np.average(r[t, m], weights=cap[t, m]))


def test_monthly_one_month_holding_is_the_cap_weighted_mean() -> None:
    q = np.array([[1.0, 2.0, 2.0], [1.0, 2.0, 2.0], [1.0, 2.0, 2.0]])
    m = np.array([[0.01, 0.02, 0.05], [0.0, -0.01, 0.03], [np.nan, np.nan, np.nan]])
    cap = np.array([[1.0, 1.0, 3.0], [1.0, 2.0, 2.0], [1.0, 1.0, 1.0]])
    out = cap_weighted_monthly(q, m, cap, 2, 1)
    assert out["cheapest"][0] == pytest.approx((0.02 + 3 * 0.05) / 4)
    assert out["long_short"][1] == pytest.approx((-0.01 + 0.03) / 2 - 0.0)
