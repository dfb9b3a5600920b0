"""IC decay, half-life and rank autocorrelation against scipy's Spearman correlation in a plain loop."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from valuesift.core.correlation.decay import half_life, ic_decay, rank_autocorrelation


def _panel(seed: int = 0) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    z = rng.normal(size=(40, 25))
    r1 = 0.02 * np.roll(z, 1, axis=0) + rng.normal(0, 0.05, size=z.shape)
    z[rng.random(z.shape) < 0.1] = np.nan
    r1[rng.random(z.shape) < 0.05] = np.nan
    return z, r1


def test_marginal_ic_equals_a_scipy_loop() -> None:
    z, r1 = _panel()
    tab = ic_decay(z, r1, min_breadth=5, months=4)
    for k in (1, 2, 4):
        vals = []
        for t in range(z.shape[0] - (k - 1)):
            y = r1[t + k - 1]
            ok = np.isfinite(z[t]) & np.isfinite(y)
            if ok.sum() >= 5:
                vals.append(stats.spearmanr(z[t, ok], y[ok]).statistic)  # scipy 1.17
        row = tab.loc[tab["month_ahead"] == k].iloc[0]
        assert row["marginal_ic"] == pytest.approx(np.mean(vals), abs=1e-12)
        assert row["n_dates"] == len(vals)
    assert tab["cumulative_ic"].to_numpy() == pytest.approx(np.cumsum(tab["marginal_ic"].to_numpy()), abs=1e-14)
    assert list(tab.columns[:4]) == ["month_ahead", "marginal_ic", "t", "cumulative_ic"]


def test_half_life_rule_by_hand() -> None:
    assert half_life(np.array([0.04, 0.03, 0.02, 0.01])) == pytest.approx(2.0)   # halves exactly at month 3
    assert half_life(np.array([0.04, 0.035, 0.01])) == pytest.approx(1.6)        # 0.015 / 0.025 of month 2 -> 3
    assert np.isnan(half_life(np.array([0.04, 0.039, 0.038])))                   # never halves in the table
    assert np.isnan(half_life(np.array([-0.01, 0.0])))                           # nothing to decay


def test_rank_autocorrelation_equals_a_scipy_loop() -> None:
    z, _ = _panel(3)
    got, n = rank_autocorrelation(z, 1, 5)
    vals = []
    for t in range(1, z.shape[0]):
        ok = np.isfinite(z[t]) & np.isfinite(z[t - 1])
        vals.append(stats.spearmanr(z[t, ok], z[t - 1, ok]).statistic)
    assert got == pytest.approx(np.mean(vals), abs=1e-12) and n == len(vals)
