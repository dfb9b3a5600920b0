"""Portfolio statistics and the overlapping-cohort backtest."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from valuesift.core.portfolio.backtest import run_backtest
from valuesift.core.regression.famamacbeth import fm_slopes
from valuesift.core.correlation.ic import ic_by_date
from valuesift.core.portfolio.performance import hit_rate, max_drawdown, sharpe_ratio


def test_max_drawdown_reference() -> None:
    # REFERENCE_CHECKS 9 (common practice): MDD 0.235 (peak index 3, trough index 5).
    r = np.array([0.10, -0.05, -0.10, 0.20, -0.15, -0.10, 0.05])
    assert max_drawdown(r) == pytest.approx(1 - 0.863379 / 1.1286, abs=1e-6)
    assert max_drawdown(r) == pytest.approx(0.235, abs=1e-6)
    # ValueSift counts the starting wealth 1.0 as a peak:
    assert max_drawdown(np.array([-0.10, 0.05])) == pytest.approx(0.10)


def test_sharpe_reference() -> None:
    # REFERENCE_CHECKS 10 (Sharpe 1994, J. Portfolio Mgmt 21(1); sqrt(12) scaling, Lo 2002, FAJ 58(4)):
    # rf 0.002 a month -> annual Sharpe 0.5291503.
    r = np.array([0.02, -0.01, 0.03, -0.05, -0.02, 0.04, 0.01, -0.03, 0.05, 0.02, -0.01, 0.03])
    assert sharpe_ratio(r, 0.002) == pytest.approx(0.5291503, abs=1e-7)


def test_hit_rate_reference_strict() -> None:
    # REFERENCE_CHECKS 11 (common practice): strictly greater 0.5 (ValueSift's rule: ties are misses);
    # excluding ties would give 0.6.
    a = np.array([.02, -.01, .03, .00, .015, -.02])
    b = np.array([.01, .00, .02, .01, .015, -.03])
    assert hit_rate(a, b) == pytest.approx(0.5)
    assert hit_rate(a[a != b], b[a != b]) == pytest.approx(0.6)


def test_fundamental_law_sanity() -> None:
    # REFERENCE_CHECKS 8 (Grinold 1989, J. Portfolio Mgmt 15(3)): IR = IC * sqrt(breadth); IC 0.05, N 100 -> 0.5.
    # The per-date Fama-MacBeth slope is the return of a z-weighted portfolio; its IR over many
    # independent dates should be close to IC * sqrt(N).  Invented data (seeded).
    rng = np.random.default_rng(2024)
    t, n, ic = 3000, 100, 0.05
    z = rng.normal(size=(t, n))
    r = ic * z + np.sqrt(1 - ic**2) * rng.normal(size=(t, n))
    b, _ = fm_slopes(z, r)
    ir = b.mean() / b.std(ddof=1)
    rho, pr, _ = ic_by_date(z, r, 10)
    assert pr.mean() == pytest.approx(ic, abs=0.005)
    # sampling SE of an IR over T dates ~ sqrt((1 + IR^2/2)/T) ~ 0.02; allow 4 of them.
    assert ir == pytest.approx(0.05 * np.sqrt(100), abs=0.08)


def _bt(q: np.ndarray, m: np.ndarray, **kw):  # type: ignore[no-untyped-def]
    t, n = q.shape
    dates = pd.date_range("2005-01-31", periods=t, freq="ME")
    secs = pd.Index([f"QQ{i}" for i in range(n)])
    args = dict(holding_months=1, cost_bps=0.0, risk_free_annual=0.0, comparison="universe")
    args.update(kw)
    return run_backtest(q, 2, np.isfinite(q), m, dates, secs, **args)  # type: ignore[arg-type]


def test_monthly_rebalance_returns_and_costs() -> None:
    q = np.array([[2, 1, 2, 1], [1, 2, 2, 1], [1, 2, 2, 1]], dtype=float)
    m = np.array([[0.10, 0.00, 0.02, -0.02], [0.01, 0.03, 0.05, 0.00], [np.nan] * 4])
    res = _bt(q, m)
    np.testing.assert_allclose(res.gross_returns["cheapest"], [0.06, 0.04])
    np.testing.assert_allclose(res.gross_returns["long_short"], [0.06 - (-0.01), 0.04 - 0.005])
    np.testing.assert_allclose(res.gross_returns["universe"], [0.025, 0.0225])
    assert res.turnover["cheapest"].iloc[1] == pytest.approx(0.5)  # {0, 2} -> {1, 2}
    cost = _bt(q, m, cost_bps=100.0)
    # traded value: first month 1.0 (from cash), then 2 x 0.5 = 1.0; cost 1 % of traded value.
    np.testing.assert_allclose(cost.returns["cheapest"], [0.06 - 0.01, 0.04 - 0.01])
    assert res.stats.loc["cheapest", "hit_rate"] == pytest.approx(1.0)
    assert list(res.returns.index) == list(pd.date_range("2005-02-28", periods=2, freq="ME"))


def test_overlapping_cohorts_weights() -> None:
    # Jegadeesh & Titman (1993), J. Finance 48(1): each month 1/h of capital in a new cohort.
    q = np.array([[2, 1, 1, 1], [1, 2, 1, 1], [1, 1, 2, 1], [1, 1, 1, 2]], dtype=float)
    q = np.where(q == 2, 2.0, 1.0)
    m = np.zeros((4, 4))
    res = _bt(q, m, holding_months=2)
    w = res.weights_cheapest.to_numpy()
    np.testing.assert_allclose(w[0], [1, 0, 0, 0])  # only one cohort exists yet
    np.testing.assert_allclose(w[1], [0.5, 0.5, 0, 0])
    np.testing.assert_allclose(w[3], [0, 0, 0.5, 0.5])


def test_cohort_outcomes() -> None:
    q = np.array([[2, 1], [2, 1], [2, 1], [2, 1]], dtype=float)
    m = np.array([[0.1, 0.0], [0.0, 0.2], [0.1, 0.0], [np.nan, np.nan]])
    res = _bt(q, m, holding_months=2)
    coh = res.cohorts
    assert coh["portfolio"].iloc[0] == pytest.approx(0.1)
    assert coh["comparison"].iloc[0] == pytest.approx(1.05 * 1.1 - 1)
    assert not coh["beat"].iloc[0]
    assert coh["portfolio"].iloc[1] == pytest.approx(0.1)
    assert coh["comparison"].iloc[1] == pytest.approx(1.1 * 1.05 - 1)
    assert res.cohort_share_beat == pytest.approx(0.0)
