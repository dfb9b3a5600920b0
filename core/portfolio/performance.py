"""Performance figures of a monthly return series: annualising, drawdown, Sharpe ratio, hit rate.

References
----------
Sharpe, W. F. (1994). J. Portfolio Mgmt 21(1). Lo, A. (2002). FAJ 58(4).
Bodie, Kane & Marcus, Investments, ch. 5 (annualising holding-period returns).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["annualise", "max_drawdown", "sharpe_ratio", "hit_rate"]


def annualise(r: np.ndarray | float, months: int) -> np.ndarray:
    """Effective annual rate of an h-month holding-period return: ``(1 + r)^(12/h) - 1``.

    Returns below -100 % give NaN.
    """
    r = np.asarray(r, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.where(r > -1.0, np.power(np.maximum(1.0 + r, 0.0), 12.0 / months) - 1.0, np.nan)


def max_drawdown(r: np.ndarray) -> float:
    """Largest fall of wealth from a running peak; the starting wealth 1.0 counts as a peak.

    Notes
    -----
    ``W_t = prod_{s<=t} (1 + r_s)``, ``W_0 = 1``; ``MDD = max_t (1 - W_t / max_{s<=t} W_s)``.
    """
    r = np.asarray(r, dtype=float)
    r = r[np.isfinite(r)]
    if r.size == 0:
        return float("nan")
    w = np.concatenate([[1.0], np.cumprod(1.0 + r)])
    peak = np.maximum.accumulate(w)
    return float(np.max(1.0 - w / peak))


def sharpe_ratio(r: np.ndarray, rf_monthly: float = 0.0) -> float:
    """Annualised Sharpe ratio of monthly returns: ``sqrt(12) * mean(r - rf) / sd(r - rf)`` (ddof 1)."""
    r = np.asarray(r, dtype=float)
    ex = r[np.isfinite(r)] - rf_monthly
    if ex.size < 2:
        return float("nan")
    sd = float(ex.std(ddof=1))
    return float(math.sqrt(12.0) * ex.mean() / sd) if sd > 0 else float("nan")


def hit_rate(a: np.ndarray, b: np.ndarray) -> float:
    """Share of months where ``a`` is strictly above ``b`` (ties count as misses).

    Months where either side is missing are left out.
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    ok = np.isfinite(a) & np.isfinite(b)
    if not ok.any():
        return float("nan")
    return float(np.mean(a[ok] > b[ok]))
