"""Quantile membership, mean returns, spread, monotonicity and turnover."""

from __future__ import annotations

import numpy as np
import pytest

from valuesift.core.quantiles.assign import assign_quantiles
from valuesift.core.quantiles.spread import monotonicity
from valuesift.core.quantiles.means import quantile_means
from valuesift.core.quantiles.turnover import quantile_turnover

EY = np.array([[.10, .02, .07, .04, .12, .01, .09, .05, .08, .03]])
R = np.array([[.030, -.010, .015, .000, .040, -.020, .020, .005, .010, -.005]])


def test_quintiles_reference() -> None:
    # REFERENCE_CHECKS 15 (common practice): quintiles [5,1,3,2,5,1,4,3,4,2]; means
    # [-0.015, -0.0025, 0.010, 0.015, 0.035]; spread Q5 - Q1 = 0.05.
    q = assign_quantiles(EY, 5)
    np.testing.assert_array_equal(q[0], [5, 1, 3, 2, 5, 1, 4, 3, 4, 2])
    means, counts = quantile_means(q, R, 5)
    np.testing.assert_allclose(means[0], [-0.015, -0.0025, 0.010, 0.015, 0.035], atol=1e-12)
    assert means[0, -1] - means[0, 0] == pytest.approx(0.05, abs=1e-12)
    np.testing.assert_array_equal(counts[0], [2, 2, 2, 2, 2])
    assert monotonicity(means[0]) == pytest.approx(1.0)


def test_turnover_reference_one_way() -> None:
    # REFERENCE_CHECKS 16 (common practice): top quintile {1st, 5th} -> {5th, 7th}: one-way 0.5 (two-way 1.0).
    nxt = np.array([[.08, .02, .07, .04, .12, .01, .11, .05, .09, .03]])
    q = assign_quantiles(np.vstack([EY, nxt]), 5)
    assert set(np.flatnonzero(q[0] == 5)) == {0, 4}
    assert set(np.flatnonzero(q[1] == 5)) == {4, 6}
    to = quantile_turnover(q, 5)
    assert to[1, 4] == pytest.approx(0.5)
    assert np.isnan(to[0]).all()


def test_remainders_fall_symmetrically_and_the_split_mirrors() -> None:
    # 119 names in 5 quantiles: 24, 24, 23, 24, 24 (not 24 dearest against 23 cheapest), and -z mirrors z.
    z = np.random.default_rng(7).normal(size=(4, 119))
    q = assign_quantiles(z, 5)
    assert [int((q[0] == k).sum()) for k in range(1, 6)] == [24, 24, 23, 24, 24]
    np.testing.assert_array_equal(assign_quantiles(-z, 5), 6 - q)
    # an even number of quantiles and an odd number of names: the median name is on the boundary, left out
    q4 = assign_quantiles(np.arange(1.0, 12.0)[None, :], 4)
    np.testing.assert_array_equal(q4[0], [1, 1, 1, 2, 2, np.nan, 3, 3, 4, 4, 4])


def test_ties_are_ordered_by_the_tiebreak_key_not_by_column_order() -> None:
    # Non-payers all have yield 0: quantiles must stay equal-sized, and the split of tied names
    # must follow the identifier key, whatever the column order.
    z = np.array([[0.0, 0.0, 0.0, 0.0, 0.02, 0.03]])
    key = np.array([3, 0, 2, 1, 4, 5])
    q = assign_quantiles(z, 3, tiebreak=key)
    np.testing.assert_array_equal(q[0], [2, 1, 2, 1, 3, 3])
    perm = np.array([5, 2, 0, 4, 1, 3])
    np.testing.assert_array_equal(assign_quantiles(z[:, perm], 3, tiebreak=key[perm])[0], q[0, perm])


def test_fewer_names_than_quantiles_leaves_date_out() -> None:
    z = np.array([[1.0, 2.0, 3.0, np.nan, np.nan], [1.0, 2.0, 3.0, 4.0, 5.0]])
    q = assign_quantiles(z, 5)
    assert np.isnan(q[0]).all()
    np.testing.assert_array_equal(q[1], [1, 2, 3, 4, 5])


def test_within_groups() -> None:
    z = np.array([[1.0, 2.0, 3.0, 4.0, 10.0, 20.0, 30.0, 40.0]])
    g = np.array([0, 0, 0, 0, 1, 1, 1, 1])
    q = assign_quantiles(z, 2, g)
    np.testing.assert_array_equal(q[0], [1, 1, 2, 2, 1, 1, 2, 2])


def test_monotonicity_against_scipy_spearman() -> None:
    from scipy.stats import spearmanr  # scipy.stats.spearmanr of order vs means

    m = np.array([0.01, 0.0, 0.02, 0.03, 0.025])
    assert monotonicity(m) == pytest.approx(spearmanr(np.arange(5), m).statistic)
    assert np.isnan(monotonicity(np.array([0.01, 0.01, 0.01])))
