"""Per-date breakpoints and equal-count bins against pandas and scipy."""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import stats

from valuesift.core.quantiles.bands import equal_count_bins, row_breakpoints


def test_breakpoints_equal_pandas_quantiles() -> None:
    rng = np.random.default_rng(5)
    x = rng.normal(size=(8, 25))
    x[2, :20] = np.nan           # five names: enough for quintiles
    x[3, :23] = np.nan           # two names: too few
    med, bps, n = row_breakpoints(x, 5)
    # Reference: pandas DataFrame.quantile across each row (linear interpolation, Hyndman & Fan type 7).
    ref = pd.DataFrame(x).quantile([0.5, 0.2, 0.4, 0.6, 0.8], axis=1).T.to_numpy()
    ok = n >= 5
    np.testing.assert_allclose(med[ok], ref[ok, 0], rtol=1e-13)
    np.testing.assert_allclose(bps[ok], ref[ok, 1:], rtol=1e-13)
    assert not ok[3] and np.isnan(med[3]) and np.isnan(bps[3]).all() and n[3] == 2


def test_bins_equal_scipy_binned_statistic() -> None:
    rng = np.random.default_rng(6)
    x = rng.normal(size=500)
    y = 0.1 * x + rng.normal(size=500)
    got = equal_count_bins(x, y, 10)
    edges = np.quantile(x, np.linspace(0, 1, 11))
    # Reference: scipy.stats.binned_statistic with the same edges (last bin closed on the right, as ours).
    ym = stats.binned_statistic(x, y, "mean", bins=edges).statistic
    xm = stats.binned_statistic(x, x, "mean", bins=edges).statistic
    cnt = stats.binned_statistic(x, y, "count", bins=edges).statistic
    np.testing.assert_allclose(got["y_mean"], ym, rtol=1e-12)
    np.testing.assert_allclose(got["x_mean"], xm, rtol=1e-12)
    np.testing.assert_array_equal(got["count"], cnt.astype(int))
    assert got["count"].sum() == 500
