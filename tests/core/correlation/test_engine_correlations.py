"""Rank and Pearson ICs against scipy.stats and published worked examples."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from valuesift.core.correlation.ic import ic_by_date
from valuesift.core.correlation.ranks import average_ranks
from valuesift.core.correlation.rowwise import row_pearson, row_spearman


def test_spearman_no_ties_worked_example() -> None:
    # REFERENCE_CHECKS 1: Wikipedia "Spearman's rank correlation coefficient", Example section;
    # sum d^2 = 194, rho = -29/165.
    x = np.array([[106, 86, 100, 101, 99, 103, 97, 113, 112, 110]], dtype=float)
    y = np.array([[7, 0, 27, 50, 28, 29, 20, 12, 6, 17]], dtype=float)
    rho, n = row_spearman(x, y)
    assert rho[0] == pytest.approx(-29 / 165, abs=1e-12)
    assert n[0] == 10
    assert rho[0] == pytest.approx(stats.spearmanr(x[0], y[0]).statistic, abs=1e-12)  # scipy.stats.spearmanr
    r, _ = row_pearson(x, y)
    assert r[0] == pytest.approx(-0.0376015, abs=1e-7)  # REFERENCE_CHECKS 1, Pearson on raw values
    assert r[0] == pytest.approx(stats.pearsonr(x[0], y[0]).statistic, abs=1e-12)  # scipy.stats.pearsonr


def test_spearman_with_ties_uses_average_ranks() -> None:
    # REFERENCE_CHECKS 2: ties take average ranks; Spearman = Pearson on ranks = 0.8720816
    # (the no-ties shortcut 1 - 6 sum d^2 / (n(n^2-1)) = 0.875 is wrong with ties).
    x = np.array([[1, 2, 2, 3, 4]], dtype=float)
    y = np.array([[0.01, 0.03, 0.02, 0.05, 0.04]])
    np.testing.assert_allclose(average_ranks(x)[0], [1, 2.5, 2.5, 4, 5])
    rho, _ = row_spearman(x, y)
    assert rho[0] == pytest.approx(0.8720816, abs=1e-7)
    assert rho[0] != pytest.approx(0.875, abs=1e-4)
    r, _ = row_pearson(x, y)
    assert r[0] == pytest.approx(0.8320503, abs=1e-7)


def test_quintile_example_correlations() -> None:
    # REFERENCE_CHECKS 15: EY and R of ten names; Spearman 0.9878788, Pearson 0.9819050.
    ey = np.array([[.10, .02, .07, .04, .12, .01, .09, .05, .08, .03]])
    r = np.array([[.030, -.010, .015, .000, .040, -.020, .020, .005, .010, -.005]])
    rho, _ = row_spearman(ey, r)
    pr, _ = row_pearson(ey, r)
    assert rho[0] == pytest.approx(0.9878788, abs=1e-7)
    assert pr[0] == pytest.approx(0.9819050, abs=1e-7)


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_average_ranks_match_scipy_rankdata(seed: int) -> None:
    # scipy.stats.rankdata(method="average", nan_policy="omit") along axis 1.
    rng = np.random.default_rng(seed)
    x = rng.integers(0, 6, size=(40, 25)).astype(float)
    x[rng.random(x.shape) < 0.25] = np.nan
    x[3] = np.nan  # an empty row
    ref = stats.rankdata(x, axis=1, nan_policy="omit")
    np.testing.assert_allclose(average_ranks(x), ref, equal_nan=True)


def test_row_ics_match_scipy_on_random_masked_rows() -> None:
    # scipy.stats.spearmanr / pearsonr on the common non-missing names of each date.
    rng = np.random.default_rng(7)
    z = rng.normal(size=(30, 50))
    f = 0.2 * z + rng.normal(size=z.shape)
    z[rng.random(z.shape) < 0.1] = np.nan
    f[rng.random(z.shape) < 0.1] = np.nan
    rho, pr, n = ic_by_date(z, f, min_breadth=3)
    for t in range(z.shape[0]):
        ok = np.isfinite(z[t]) & np.isfinite(f[t])
        assert n[t] == ok.sum()
        assert rho[t] == pytest.approx(stats.spearmanr(z[t, ok], f[t, ok]).statistic, abs=1e-12)
        assert pr[t] == pytest.approx(stats.pearsonr(z[t, ok], f[t, ok]).statistic, abs=1e-12)


def test_constant_signal_gives_nan_not_zero() -> None:
    # A date where every name has the same signal has no correlation (undefined), not 0.
    z = np.array([[0.5, 0.5, 0.5, 0.5, 0.5], [1, 2, 3, 4, 5]], dtype=float)
    f = np.array([[0.01, 0.02, 0.03, 0.04, 0.05], [0.01, 0.02, 0.03, 0.05, 0.04]])
    rho, pr, n = ic_by_date(z, f, min_breadth=3)
    assert np.isnan(rho[0]) and np.isnan(pr[0])
    assert n[0] == 5
    assert rho[1] == pytest.approx(0.9)


def test_below_min_breadth_is_nan_with_count() -> None:
    z = np.array([[1.0, 2.0, 3.0, np.nan], [1.0, 2.0, 3.0, 4.0]])
    f = np.array([[0.1, 0.2, 0.3, 0.4], [0.1, 0.3, 0.2, 0.4]])
    rho, _, n = ic_by_date(z, f, min_breadth=4)
    assert np.isnan(rho[0]) and n[0] == 3
    assert np.isfinite(rho[1])


def test_rank_ic_invariant_under_monotone_transform_and_permutation() -> None:
    # Spearman's rho depends only on ranks (common practice; follows from its definition).
    rng = np.random.default_rng(3)
    z = rng.normal(size=(20, 30))
    f = 0.3 * z + rng.normal(size=z.shape)
    rho, pr, _ = ic_by_date(z, f, 3)
    rho2, _, _ = ic_by_date(np.exp(3 * z) + 5, f, 3)
    np.testing.assert_allclose(rho, rho2, atol=1e-12)
    perm = rng.permutation(z.shape[1])
    rho3, pr3, _ = ic_by_date(z[:, perm], f[:, perm], 3)
    np.testing.assert_allclose(rho, rho3, atol=1e-12)
    np.testing.assert_allclose(pr, pr3, atol=1e-12)


def _tied_panel(seed: int) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    x = rng.integers(0, 6, size=(40, 60)).astype(float)  # heavy ties
    x[:20] = rng.normal(size=(20, 60))  # and rows without ties
    x[rng.random(x.shape) < 0.15] = np.nan
    mask = np.isfinite(x) & (rng.random(x.shape) < 0.8)
    return x, mask


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_ranks_within_match_scipy_rankdata_on_the_subset(seed: int) -> None:
    # scipy.stats.rankdata(method="average") of each row's members; and average_ranks to the bit.
    from valuesift.core.correlation.ranks import ranks_within, row_sort

    x, mask = _tied_panel(seed)
    got = ranks_within(row_sort(x), mask)
    assert np.array_equal(got, average_ranks(np.where(mask, x, np.nan)), equal_nan=True)
    for i in range(x.shape[0]):
        assert np.array_equal(got[i][mask[i]], stats.rankdata(x[i][mask[i]]))
        assert np.isnan(got[i][~mask[i]]).all()


@pytest.mark.parametrize("seed", [0, 1])
def test_rank_ic_grid_matches_spearmanr_and_ic_by_date(seed: int) -> None:
    # scipy.stats.spearmanr per date over the names both arrays hold; ic_by_date to the bit.
    from valuesift.core.correlation.ic import rank_ic_grid

    rng = np.random.default_rng(seed)
    x, _ = _tied_panel(seed)
    ys = {h: np.where(rng.random(x.shape) < 0.1, np.nan, rng.normal(size=x.shape)) for h in (1, 3)}
    zs = {0: x, 1: np.vstack([np.full((1, x.shape[1]), np.nan), x[:-1]])}
    grid = rank_ic_grid(zs, ys, 5)
    for (d, h), ric in grid.items():
        assert np.array_equal(ric, ic_by_date(zs[d], ys[h], 5)[0], equal_nan=True)
        for t in range(x.shape[0]):
            ok = np.isfinite(zs[d][t]) & np.isfinite(ys[h][t])
            if ok.sum() >= 5:
                assert ric[t] == pytest.approx(stats.spearmanr(zs[d][t][ok], ys[h][t][ok]).statistic, abs=1e-12)
