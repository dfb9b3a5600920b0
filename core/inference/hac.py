"""Standard errors of a time-mean with autocorrelated (overlapping) observations.

References
----------
Newey, W. & West, K. (1987). Econometrica 55(3), 703-708.
Newey, W. & West, K. (1994). Rev. Econ. Stud. 61(4), 631-653 (automatic lag).
Hansen, L. P. & Hodrick, R. J. (1980). JPE 88(5), 829-853 (h - 1 lags for overlapping h-period returns).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from valuesift.core.choices import HacLagRule

__all__ = ["auto_lags", "hac_lags", "newey_west_se", "mean_inference", "hansen_hodrick_se", "headline_inference"]


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


def _autocovariances(u: np.ndarray, lags: int) -> np.ndarray:
    """``gamma_j = (1/T) sum_{t>j} u_t u_{t-j}`` for ``j = 0..lags`` (u already demeaned)."""
    t = u.size
    return np.array([float(u[j:] @ u[: t - j]) / t for j in range(0, lags + 1)])


def hansen_hodrick_se(x: np.ndarray, lags: int) -> float:
    """Hansen-Hodrick standard error of the mean of ``x``: rectangular (uniform) kernel.

    Notes
    -----
    ``u = x - mean``; ``gamma_j = (1/T) sum_{t>j} u_t u_{t-j}``;
    ``Omega = gamma_0 + 2 sum_{j=1..L} gamma_j`` (every lag up to L weighted 1);
    ``SE = sqrt(Omega / T)``.  No small-sample correction (statsmodels
    ``cov_type="HAC", kernel="uniform", use_correction=False``).  Unlike the
    Bartlett form, Omega is not guaranteed positive: NaN is returned when it is
    not (the caller then falls back, see :func:`headline_inference`).

    References
    ----------
    Hansen, L. P. & Hodrick, R. J. (1980). Forward exchange rates as optimal
    predictors of future spot rates. JPE 88(5), 829-853.

    Examples
    --------
    Reference case 17 of the project's check list (h = 3, L = 2):

    >>> m = [0.02, -0.01, 0.03, 0.01, -0.02, 0.04, 0.00, 0.01, -0.03, 0.02, 0.05, -0.01, 0.02, 0.01]
    >>> y = np.array([m[i] + m[i + 1] + m[i + 2] for i in range(12)])
    >>> round(hansen_hodrick_se(y, 2), 9)
    0.005776008
    """
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    t = x.size
    if t < 2:
        return float("nan")
    g = _autocovariances(x - x.mean(), min(lags, t - 1))
    omega = float(g[0] + 2.0 * g[1:].sum())
    return math.sqrt(omega / t) if omega > 0 else float("nan")


def headline_inference(x: np.ndarray, horizon: int, rule: HacLagRule = "overlap_or_auto") -> dict[str, Any]:
    """The headline standard error and t of a time-mean of an h-month statistic, with its method.

    Parameters
    ----------
    x : ndarray (T,)
        The per-date statistic (NaN dropped).
    horizon : int
        The horizon h in months: observations h-1 dates apart overlap.
    rule : {"overlap", "overlap_or_auto"}
        Lag count L: ``h - 1``, or ``max(h - 1, floor(4 (T/100)^(2/9)))``.

    Returns
    -------
    dict
        ``mean, sd, se, t, method, lags, ci_low, ci_high, se_bartlett, t_bartlett,
        se_naive, t_naive, n_dates``.  ``method`` is ``"hansen_hodrick"``,
        ``"newey_west"`` or ``"newey_west_fallback"``.

    Notes
    -----
    For ``h > 1`` the headline is Hansen & Hodrick (1980): every one of the L
    autocovariances is weighted 1, because overlapping h-month returns are
    MA(h-1) and Bartlett weights would down-weight exactly those lags.  Where
    that variance is not positive the headline is Newey-West (Bartlett) with
    ``min(2L, T - 1)`` lags (``"newey_west_fallback"``).  For ``h = 1`` it is
    Newey-West with L lags.  The Bartlett figure with L lags is always given as
    ``se_bartlett``/``t_bartlett``; ``t_naive`` assumes independent dates.  The
    95 % interval is ``mean +/- 1.959964 SE`` (normal approximation).

    References
    ----------
    Hansen & Hodrick (1980), JPE 88(5); Newey & West (1987), Econometrica 55(3);
    Newey & West (1994), Rev. Econ. Stud. 61(4).
    """
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    t = int(x.size)
    lags = hac_lags(int(horizon), t, rule)
    base = mean_inference(x, lags)
    out: dict[str, Any] = {
        "mean": base["mean"], "sd": base["sd"], "se": float("nan"), "t": float("nan"),
        "method": "hansen_hodrick" if horizon > 1 else "newey_west", "lags": int(lags),
        "ci_low": float("nan"), "ci_high": float("nan"),
        "se_bartlett": base["se_hac"], "t_bartlett": base["t_hac"],
        "se_naive": base["se_naive"], "t_naive": base["t_naive"], "n_dates": t,
    }
    if t < 2:
        return out
    se = base["se_hac"]
    if horizon > 1:
        se = hansen_hodrick_se(x, lags)
        if not (np.isfinite(se) and se > 0):
            fb = max(min(2 * lags, t - 1), 0)
            se = newey_west_se(x, fb)
            out["method"], out["lags"] = "newey_west_fallback", int(fb)
    if np.isfinite(se) and se > 0:
        m = float(base["mean"])
        out["se"], out["t"] = float(se), m / float(se)
        out["ci_low"], out["ci_high"] = m - 1.959964 * se, m + 1.959964 * se
    return out
