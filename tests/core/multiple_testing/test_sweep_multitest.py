"""Multiple-testing columns: against statsmodels and a hand-worked Benjamini-Hochberg example."""

from __future__ import annotations

import numpy as np
from scipy import stats
from statsmodels.stats.multitest import multipletests

from valuesift.core.sweep import adjust_pvalues, comparison_table, two_sided_p


def test_hand_worked_benjamini_hochberg_example() -> None:
    # Benjamini, Y. & Hochberg, Y. (1995), "Controlling the false discovery rate", J. R. Stat. Soc. B 57(1),
    # 289-300: sort the m p-values, find the largest k with p_(k) <= k q / m and reject H_(1..k).  The
    # adjusted p-value is min over j >= i of min(1, m p_(j) / j).  Hand calculation (this test's author),
    # m = 10, q = 0.05, thresholds k q / m = 0.005, 0.010, ..., 0.050:
    #   p_(1) = 0.001 <= 0.005 and p_(2) = 0.008 <= 0.010 pass; p_(3) = 0.039 > 0.015, and no later p_(k)
    #   is under its threshold (0.042 > 0.025, 0.060 > 0.030, 0.074 > 0.035, 0.205 > 0.040 ...): reject 2.
    #   m p_(k) / k = 0.01, 0.04, 0.13, 0.1025, 0.084, 0.1, 0.105714, 0.25625, 0.235556, 0.216;
    #   running minimum from the largest k down gives the adjusted values below.
    p = np.array([0.001, 0.008, 0.039, 0.041, 0.042, 0.060, 0.074, 0.205, 0.212, 0.216])
    by_hand = np.array([0.01, 0.04, 0.084, 0.084, 0.084, 0.1, 0.74 / 7, 0.216, 0.216, 0.216])
    bh, bon = adjust_pvalues(p[::-1])          # order of the input must not matter
    np.testing.assert_allclose(bh[::-1], by_hand, rtol=0, atol=1e-12)
    assert int((bh <= 0.05).sum()) == 2
    # Bonferroni (common practice): min(1, m p).
    np.testing.assert_allclose(bon[::-1], np.minimum(1.0, 10 * p), rtol=0, atol=1e-12)


def test_two_sided_p_of_the_normal_table_values() -> None:
    # Standard normal table (common practice, from memory): P(|Z| > 1.959964) = 0.05, P(|Z| > 2.575829) = 0.01.
    p = two_sided_p(np.array([1.959963985, -2.575829304, 0.0, np.nan]))
    np.testing.assert_allclose(p[:3], [0.05, 0.01, 1.0], rtol=0, atol=1e-9)
    assert np.isnan(p[3])


def test_table_columns_equal_statsmodels_on_the_same_p_values() -> None:
    rng = np.random.default_rng(3)
    t = rng.normal(scale=2.0, size=24)
    t[[4, 9]] = np.nan                                   # failed points: left out of the adjustment
    rows = [{"point_id": f"p{i}", "signal": "earnings_yield", "status": "ok", "error": "", "horizon": 1 + i % 3,
             "mean_ic": 0.01, "ic_t": t[i], "spread": 0.0, "spread_t": 0.0, "sharpe": 0.0, "max_drawdown": 0.0,
             "breadth": 30.0, "n_dates": 50} for i in range(24)]
    tab = comparison_table(rows, ("signal",))
    ok = np.isfinite(t)
    p = 2 * stats.norm.sf(np.abs(t[ok]))               # scipy, independently of two_sided_p
    np.testing.assert_allclose(tab["ic_p"].to_numpy()[ok], p, rtol=1e-14, atol=0)
    for col, method in (("ic_p_bh", "fdr_bh"), ("ic_p_bonferroni", "bonferroni")):
        ref = multipletests(p, alpha=0.05, method=method)
        np.testing.assert_allclose(tab[col].to_numpy()[ok], ref[1], rtol=1e-14, atol=0)
        flag = "significant_bh" if method == "fdr_bh" else "significant_bonferroni"
        assert tab[flag].to_numpy()[ok].tolist() == ref[0].tolist()
    assert tab.loc[~ok, ["ic_p", "ic_p_bh", "ic_p_bonferroni", "ic_t_bh"]].isna().all().all()
    # adjusted t: same sign as the raw t, never larger in size, and back on the p scale it gives the adjusted p
    adj = tab["ic_t_bh"].to_numpy()[ok]
    assert np.all(np.sign(adj) == np.sign(t[ok])) and np.all(np.abs(adj) <= np.abs(t[ok]) + 1e-12)
    np.testing.assert_allclose(2 * stats.norm.sf(np.abs(adj)), tab["ic_p_bh"].to_numpy()[ok], rtol=1e-9)


def test_nothing_to_adjust() -> None:
    bh, bon = adjust_pvalues(np.array([np.nan, np.nan]))
    assert np.isnan(bh).all() and np.isnan(bon).all()
