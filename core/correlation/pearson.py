"""Pearson correlation of two series and its t-statistic (one security's signal against its own returns).

References
----------
Pearson, K. (1896). Phil. Trans. R. Soc. A 187; Fisher, R. A. (1915). Biometrika 10(4) (the
t-distribution of r under zero correlation).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["correlation_t", "pearson_with_t"]


def correlation_t(r: float, n: int) -> float:
    """t-statistic of a correlation ``r`` from ``n`` pairs: ``r sqrt((n - 2)/(1 - r^2))``.

    NaN when ``n < 3``, ``r`` is not finite or ``|r| = 1``.

    Notes
    -----
    Under zero correlation and independent normal pairs the statistic is t with ``n - 2``
    degrees of freedom (Fisher 1915); overlapping returns make it optimistic.

    Examples
    --------
    >>> round(correlation_t(0.5, 12), 6)
    1.825742
    """
    if n < 3 or not math.isfinite(r) or abs(r) >= 1.0:
        return float("nan")
    return float(r * math.sqrt((n - 2) / (1.0 - r * r)))


def pearson_with_t(x: np.ndarray, y: np.ndarray) -> tuple[float, float, int]:
    """Pearson ``r`` of the finite pairs of ``x`` and ``y``, its t (:func:`correlation_t`) and the count.

    Notes
    -----
    .. math:: r = \\frac{\\sum (x - \\bar x)(y - \\bar y)}{\\sqrt{\\sum (x-\\bar x)^2 \\sum (y - \\bar y)^2}}

    Examples
    --------
    >>> r, t, n = pearson_with_t(np.array([1., 2, 3, 4]), np.array([2., 1, 4, 3]))
    >>> round(r, 6), n
    (0.6, 4)
    """
    x = np.asarray(x, dtype=float).ravel()
    y = np.asarray(y, dtype=float).ravel()
    ok = np.isfinite(x) & np.isfinite(y)
    n = int(ok.sum())
    if n < 3:
        return float("nan"), float("nan"), n
    dx = x[ok] - x[ok].mean()
    dy = y[ok] - y[ok].mean()
    den = math.sqrt(float((dx * dx).sum()) * float((dy * dy).sum()))
    if den <= 0:
        return float("nan"), float("nan"), n
    r = float((dx * dy).sum() / den)
    return r, correlation_t(r, n), n
