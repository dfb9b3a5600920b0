"""Fama-MacBeth cross-sectional regressions, vectorised over dates."""

from __future__ import annotations

import numpy as np
import pandas as pd

from valuesift.core.choices import HacLagRule
from valuesift.core.inference.nonoverlap import headline_block

__all__ = ["fm_slopes", "slope_from_centred", "fm_summary"]

_IDENT = 1e-14  # szz must exceed this share of sum(z^2) for the slope to be identified


def _demean(x: np.ndarray, mask: np.ndarray, codes: np.ndarray) -> np.ndarray:
    """Subtract the per-date mean within each group over ``mask`` (zero outside ``mask``)."""
    uniq = np.unique(codes)
    if uniq.size == 1:  # one group (no dummies): the plain per-date mean, without a group loop
        n = mask.sum(axis=1)
        s = np.where(mask, x, 0.0).sum(axis=1)
        with np.errstate(invalid="ignore", divide="ignore"):
            mu = np.where(n > 0, s / np.maximum(n, 1), 0.0)
        return np.where(mask, x - mu[:, None], 0.0)
    out = np.zeros_like(x)
    for c in uniq:
        m = mask & (codes == c)[None, :]
        n = m.sum(axis=1)
        s = np.where(m, x, 0.0).sum(axis=1)
        with np.errstate(invalid="ignore", divide="ignore"):
            mu = np.where(n > 0, s / np.maximum(n, 1), 0.0)
        out = np.where(m, x - mu[:, None], out)
    return out


def fm_slopes(
    z: np.ndarray,
    y: np.ndarray,
    controls: list[np.ndarray] | None = None,
    groups: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Per-date OLS slope of ``y`` on ``z`` with an intercept and optional controls.

    Parameters
    ----------
    z : ndarray (D x S)
        Signal z-score.
    y : ndarray (D x S)
        Forward returns.
    controls : list of ndarray (D x S), optional
        Extra regressors (at most one, e.g. log market capitalisation).
    groups : ndarray (S,) of int, optional
        Group dummies (e.g. sectors) replacing the intercept.

    Returns
    -------
    slopes : ndarray (D,)
        NaN where the regression is not identified.
    n : ndarray (D,)
        Observations used.

    Notes
    -----
    By the Frisch-Waugh-Lovell theorem, the slope on ``z`` in
    ``y = a_g + b z + c x + e`` equals the slope from regressing the
    group-demeaned ``y`` on the group-demeaned ``z`` and ``x``; the normal
    equations ``(X'X) beta = X'y`` with one or two regressors are solved in
    closed form for all dates at once.  A date needs
    ``n > (number of groups present) + (number of regressors)``.

    References
    ----------
    Fama, E. & MacBeth, J. (1973). JPE 81(3), 607-636.
    """
    controls = list(controls or [])
    if len(controls) > 1:
        raise ValueError("fm_slopes supports at most one control besides group dummies")
    codes = np.zeros(z.shape[1], dtype=int) if groups is None else np.asarray(groups)
    mask = np.isfinite(z) & np.isfinite(y)
    for c in controls:
        mask &= np.isfinite(c)
    n = mask.sum(axis=1)
    present = np.zeros(z.shape[0], dtype=int)
    uniq = np.unique(codes)
    if uniq.size == 1:
        present += mask.any(axis=1)
    else:
        for c in uniq:
            present += (mask & (codes == c)[None, :]).any(axis=1)
    zm = np.where(mask, z, 0.0)
    zd = _demean(zm, mask, codes)
    yd = _demean(np.where(mask, y, 0.0), mask, codes)
    szz = (zd * zd).sum(axis=1)
    szy = (zd * yd).sum(axis=1)
    k = 1 + len(controls)
    enough = n > present + k
    with np.errstate(invalid="ignore", divide="ignore"):
        if not controls:
            b = _slope(szz, szy, zm, enough)
        else:
            xd = _demean(np.where(mask, controls[0], 0.0), mask, codes)
            sxx = (xd * xd).sum(axis=1)
            szx = (zd * xd).sum(axis=1)
            sxy = (xd * yd).sum(axis=1)
            det = szz * sxx - szx * szx
            ok = enough & (det > 1e-12 * np.maximum(szz * sxx, 1e-300)) & (szz > 0) & (sxx > 0)
            b = np.where(ok, (sxx * szy - szx * sxy) / np.where(ok, det, 1.0), np.nan)
    return b, n


def _slope(szz: np.ndarray, szy: np.ndarray, zm: np.ndarray, enough: np.ndarray) -> np.ndarray:
    """``szy / szz`` where identified: enough names and a spread of z not lost to rounding."""
    ok = enough & (szz > _IDENT * np.maximum((zm ** 2).sum(axis=1), 1e-300))
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(ok, szy / np.where(ok, szz, 1.0), np.nan)


def slope_from_centred(zd: np.ndarray, yd: np.ndarray, zm: np.ndarray, n: np.ndarray) -> np.ndarray:
    """:func:`fm_slopes` without controls or groups, from already demeaned ``zd``, ``yd``.

    ``zm`` is ``z`` with zeros outside the common mask and ``n`` the names per
    date; the sums are the same expressions as in :func:`fm_slopes`, so the
    slopes are the same numbers.
    """
    present = (n > 0).astype(int)
    szz = (zd * zd).sum(axis=1)
    szy = (zd * yd).sum(axis=1)
    return _slope(szz, szy, zm, n > present + 1)


def fm_summary(slopes: np.ndarray, horizons: tuple[int, ...], rule: HacLagRule) -> pd.DataFrame:
    """Time-mean of the per-date Fama-MacBeth slopes per horizon with its HAC standard error.

    Parameters
    ----------
    slopes : ndarray (D x H)
        Per-date slope on the signal z-score (NaN where not identified).
    horizons : tuple of int
    rule : {"overlap", "overlap_or_auto"}

    Returns
    -------
    DataFrame (H x statistics)
        ``mean_slope, se_hac, t_hac, hac_lags, se_naive, n_dates``.

    References
    ----------
    Fama, E. & MacBeth, J. (1973). JPE 81(3), 607-636.
    """
    rows = []
    for j, h in enumerate(horizons):
        inf = headline_block(slopes[:, j], h, rule)
        rows.append({"horizon": h, "mean_slope": inf["mean"], "se_hac": inf["se"], "t_hac": inf["t"],
                     "hac_lags": int(inf["lags"]), "se_naive": inf["se_naive"], "n_dates": int(inf["n_dates"]),
                     "se_method": inf["method"], "t_bartlett": inf["t_bartlett"],
                     "independent_periods": inf["independent_periods"], "too_short": inf["too_short"],
                     "evidence": inf["evidence"]})
    return pd.DataFrame(rows).set_index("horizon")
