"""Least-squares lines of return on the signal: one cross-section per date, and all dates pooled.

The fitted lines drawn on the scatter charts and the pooled slope of the report.  Pooled
points overlap in time, so the pooled t is a classical one and is never the evidence (the
mean IC and the Fama-MacBeth slope are).

References
----------
Greene, W. H. (2012). Econometric Analysis, 7th ed., ch. 3-4 (least squares, the classical
standard error of a slope).
"""

from __future__ import annotations

import numpy as np

__all__ = ["simple_ols", "row_simple_ols"]


def simple_ols(x: np.ndarray, y: np.ndarray) -> tuple[float, float, float, int]:
    """Intercept, slope, classical t of the slope and the count of ``y = a + b x`` (NaN pairs dropped).

    Parameters
    ----------
    x, y : array
        Paired values (any shape; flattened).

    Returns
    -------
    (intercept, slope, t_slope, n)
        NaN for all three when fewer than 3 pairs or no spread in ``x``.

    Notes
    -----
    .. math:: b = S_{xy}/S_{xx},\\ a = \\bar y - b \\bar x,\\
              s^2 = \\sum e^2/(n-2),\\ t = b / \\sqrt{s^2 / S_{xx}}

    References
    ----------
    Greene (2012), Econometric Analysis, ch. 4.

    Examples
    --------
    >>> a, b, t, n = simple_ols(np.array([0., 1, 2, 3]), np.array([1., 3, 4, 7]))
    >>> round(b, 6), n
    (1.9, 4)
    """
    x = np.asarray(x, dtype=float).ravel()
    y = np.asarray(y, dtype=float).ravel()
    ok = np.isfinite(x) & np.isfinite(y)
    a_, b_, t_, n_ = row_simple_ols(np.where(ok, x, np.nan)[None, :], np.where(ok, y, np.nan)[None, :])
    return float(a_[0]), float(b_[0]), float(t_[0]), int(n_[0])


def row_simple_ols(x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """:func:`simple_ols` on every row of two (dates x names) arrays at once, without a loop.

    Returns
    -------
    (intercept, slope, t_slope, n) : arrays of one value per row
        NaN (count still given) for rows with fewer than 3 pairs or no spread in ``x``.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    ok = np.isfinite(x) & np.isfinite(y)
    n = ok.sum(axis=1)
    nn = np.maximum(n, 1)
    xs = np.where(ok, x, 0.0)
    ys = np.where(ok, y, 0.0)
    xm = xs.sum(axis=1) / nn
    ym = ys.sum(axis=1) / nn
    dx = np.where(ok, x - xm[:, None], 0.0)
    dy = np.where(ok, y - ym[:, None], 0.0)
    sxx = (dx * dx).sum(axis=1)
    sxy = (dx * dy).sum(axis=1)
    good = (n >= 3) & (sxx > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        b = np.where(good, sxy / np.where(good, sxx, 1.0), np.nan)
        a = np.where(good, ym - b * xm, np.nan)
        e = np.where(ok, y - a[:, None] - b[:, None] * x, 0.0)
        s2 = (e * e).sum(axis=1) / np.maximum(n - 2, 1)
        se = np.sqrt(s2 / np.where(good, sxx, 1.0))
        t = np.where(good & (s2 > 0), b / np.where(se > 0, se, 1.0), np.nan)
    return a, b, t, n.astype(int)
