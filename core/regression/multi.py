"""Fama-MacBeth cross-sectional regressions with several controls at once, and the IC net of controls.

References
----------
Fama, E. & MacBeth, J. (1973). JPE 81(3), 607-636.
Frisch, R. & Waugh, F. (1933). Econometrica 1(4); Lovell, M. (1963). JASA 58(304) (partialling out).
"""

from __future__ import annotations

import numpy as np

from valuesift.core.correlation.rowwise import row_spearman

__all__ = ["fm_multi", "residualise", "ic_net_of_controls"]


def _group_demean(x: np.ndarray, mask: np.ndarray, codes: np.ndarray | None) -> np.ndarray:
    """Per-date (and per-group) demeaned ``x`` over ``mask``; zero outside it."""
    xm = np.where(mask, x, 0.0)
    if codes is None:
        n = mask.sum(axis=1)
        mu = xm.sum(axis=1) / np.maximum(n, 1)
        return np.where(mask, xm - mu[:, None], 0.0)
    uniq, idx = np.unique(codes, return_inverse=True)
    onehot = np.zeros((codes.size, uniq.size))
    onehot[np.arange(codes.size), idx] = 1.0
    sums = xm @ onehot                                  # D x groups, over the masked names
    counts = mask.astype(float) @ onehot
    mu = sums / np.maximum(counts, 1.0)
    return np.where(mask, xm - mu[:, idx], 0.0)


def _groups_present(mask: np.ndarray, codes: np.ndarray | None) -> np.ndarray:
    if codes is None:
        return mask.any(axis=1).astype(int)
    return sum((mask & (codes == c)[None, :]).any(axis=1).astype(int) for c in np.unique(codes))


def fm_multi(y: np.ndarray, regressors: list[np.ndarray], groups: np.ndarray | None = None,
             rcond: float = 1e-10) -> tuple[np.ndarray, np.ndarray]:
    """Per-date OLS of ``y`` on several regressors with an intercept (or group dummies), all dates at once.

    Parameters
    ----------
    y : ndarray (D x S)
        Forward returns.
    regressors : list of ndarray (D x S)
        The signal first, then the controls; a name-date enters only where every one is finite.
    groups : ndarray (S,) of int, optional
        Group (sector) dummies replacing the intercept.

    Returns
    -------
    coefs : ndarray (D x K)
        Slopes on each regressor per date; NaN where the regression is not identified.
    n : ndarray (D,)
        Names used per date.

    Notes
    -----
    Frisch-Waugh-Lovell: demean ``y`` and every regressor within each date (and group), then solve
    the K x K normal equations ``(X'X) b = X'y`` per date.  A date needs more names than groups
    present plus K, and ``X'X`` with a reciprocal condition number above ``rcond``.
    """
    k = len(regressors)
    mask = np.isfinite(y)
    for x in regressors:
        mask &= np.isfinite(x)
    codes = None if groups is None or np.unique(groups).size < 2 else np.asarray(groups)
    yd = _group_demean(y, mask, codes)
    xd = np.stack([_group_demean(x, mask, codes) for x in regressors], axis=2)  # D x S x K
    xtx = np.einsum("tsk,tsl->tkl", xd, xd)
    xty = np.einsum("tsk,ts->tk", xd, yd)
    n = mask.sum(axis=1)
    enough = n > _groups_present(mask, codes) + k
    out = np.full((y.shape[0], k), np.nan)
    for t in np.flatnonzero(enough):  # K x K solves: a few hundred small systems
        a = xtx[t]
        d = np.sqrt(np.diag(a))
        if not np.all(d > 0):
            continue
        scaled = a / np.outer(d, d)
        if 1.0 / np.linalg.cond(scaled) < rcond:
            continue
        out[t] = np.linalg.solve(scaled, xty[t] / d) / d
    return out, n


def residualise(z: np.ndarray, controls: list[np.ndarray], groups: np.ndarray | None = None) -> np.ndarray:
    """Per date, ``z`` minus its least-squares fit on the controls (with an intercept or group dummies).

    NaN where ``z`` or any control is missing, and on dates where the fit is not identified.
    """
    mask = np.isfinite(z)
    for c in controls:
        mask &= np.isfinite(c)
    codes = None if groups is None or np.unique(groups).size < 2 else np.asarray(groups)
    zd = _group_demean(z, mask, codes)
    if not controls:
        return np.where(mask, zd, np.nan)
    coefs, _ = fm_multi(z, controls, groups)
    xd = np.stack([_group_demean(c, mask, codes) for c in controls], axis=2)
    fit = np.einsum("tsk,tk->ts", xd, np.nan_to_num(coefs))
    ok = mask & np.isfinite(coefs).all(axis=1)[:, None]
    return np.where(ok, zd - fit, np.nan)


def ic_net_of_controls(z: np.ndarray, y: np.ndarray, controls: list[np.ndarray], groups: np.ndarray | None,
                       min_breadth: int) -> np.ndarray:
    """Per-date Spearman IC of the part of the signal the controls do not explain.

    Notes
    -----
    ``e = z - fit(z | controls, dummies)`` on each date (:func:`residualise`); the IC is
    ``spearman(e, y)`` over the names with both; NaN below ``min_breadth`` names.
    """
    e = residualise(z, controls, groups)
    rho, n = row_spearman(e, y)
    return np.where(n < min_breadth, np.nan, rho)
