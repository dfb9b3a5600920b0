"""Standard errors of a time-mean with autocorrelated (overlapping) observations.

References
----------
Newey, W. & West, K. (1987). Econometrica 55(3), 703-708.
Newey, W. & West, K. (1994). Rev. Econ. Stud. 61(4), 631-653 (automatic lag).
Hansen, L. P. & Hodrick, R. J. (1980). JPE 88(5), 829-853 (h - 1 lags for overlapping h-period returns).
"""

from __future__ import annotations

import math

import numpy as np

from valuesift.core.choices import HacLagRule

__all__ = ["auto_lags", "hac_lags", "newey_west_se", "mean_inference"]


def auto_lags(t: int) -> int:
    """Newey & West (1994) automatic lag ``floor(4 (T/100)^(2/9))``."""
    return int(math.floor(4.0 * (t / 100.0) ** (2.0 / 9.0))) if t > 0 else 0


def hac_lags(h: int, t: int, rule: HacLagRule = "overlap_or_auto") -> int:
    """Lags for an h-month overlapping series of length T.

    Notes
    -----
    ``overlap``: ``L = h - 1`` (Hansen & Hodrick 1980: overlapping h-period
    returns are MA(h-1)).  ``overlap_or_auto``: ``L = max(h - 1, floor(4 (T/100)^(2/9)))``,
    so a 1-month series still gets the Newey-West (1994) automatic lags.
    The lag never exceeds ``T - 1``.
    """
    base = max(int(h) - 1, 0)
    if rule == "overlap_or_auto":
        base = max(base, auto_lags(t))
    return max(min(base, t - 1), 0)


def newey_west_se(x: np.ndarray, lags: int) -> float:
    """Newey-West standard error of the mean of ``x`` (Bartlett kernel).

    Notes
    -----
    ``u = x - mean``; ``gamma_j = (1/T) sum_{t>j} u_t u_{t-j}``;
    ``Omega = gamma_0 + 2 sum_{j=1..L} (1 - j/(L+1)) gamma_j``;
    ``SE = sqrt(Omega / T)``.  No small-sample correction (as statsmodels'
    ``cov_type="HAC"`` with ``use_correction=False``).

    References
    ----------
    Newey, W. & West, K. (1987). Econometrica 55(3), 703-708.
    """
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    t = x.size
    if t < 2:
        return float("nan")
    u = x - x.mean()
    omega = float(u @ u) / t
    for j in range(1, min(lags, t - 1) + 1):
        omega += 2.0 * (1.0 - j / (lags + 1.0)) * float(u[j:] @ u[:-j]) / t
    return math.sqrt(omega / t) if omega > 0 else float("nan")


def mean_inference(x: np.ndarray, lags: int) -> dict[str, float]:
    """Mean, HAC SE and t, naive SE and t, 95 % interval and count of a series (NaN dropped).

    Notes
    -----
    95 % interval ``mean +/- 1.959964 * SE_HAC`` (normal approximation).
    The naive SE is ``sd(ddof=1)/sqrt(T)``, shown for comparison only.
    """
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    t = int(x.size)
    out = {"mean": float("nan"), "sd": float("nan"), "se_hac": float("nan"), "t_hac": float("nan"),
           "ci_low": float("nan"), "ci_high": float("nan"), "se_naive": float("nan"),
           "t_naive": float("nan"), "n_dates": float(t), "hac_lags": float(lags)}
    if t == 0:
        return out
    m = float(x.mean())
    out["mean"] = m
    if t >= 2:
        sd = float(x.std(ddof=1))
        out["sd"] = sd
        se = newey_west_se(x, lags)
        out["se_hac"] = se
        if np.isfinite(se) and se > 0:
            out["t_hac"] = m / se
            out["ci_low"], out["ci_high"] = m - 1.959964 * se, m + 1.959964 * se
        if sd > 0:
            out["se_naive"] = sd / math.sqrt(t)
            out["t_naive"] = m / out["se_naive"]
    return out
