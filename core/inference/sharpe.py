"""Standard error and t-statistic of a Sharpe ratio.

References
----------
Lo, A. W. (2002). The statistics of Sharpe ratios. Financial Analysts Journal 58(4), 36-52.
"""

from __future__ import annotations

import numpy as np

__all__ = ["sharpe_ratio_se", "sharpe_ratio_t"]


def sharpe_ratio_se(sr_monthly: float | np.ndarray, T: float | np.ndarray) -> np.ndarray | float:
    """Standard error of a per-period Sharpe ratio under iid returns (Lo 2002).

    Parameters
    ----------
    sr_monthly : float or array
        The per-period (here monthly) Sharpe ratio, mean excess return over its sd.
    T : float or array
        Number of periods (months) it was estimated from.

    Returns
    -------
    float or array
        ``sqrt((1 + SR^2 / 2) / T)``; NaN where ``T < 2`` or SR is not finite.

    Notes
    -----
    .. math:: \\mathrm{SE}(\\widehat{SR}) = \\sqrt{(1 + \\widehat{SR}^2 / 2) / T}

    The annual ratio ``sqrt(12) SR`` has ``sqrt(12)`` times this error, so the t-statistic
    is the same on either scale.  The shortcut ``SR sqrt(T)`` leaves out the ``SR^2/2`` term.

    References
    ----------
    Lo (2002), FAJ 58(4), the iid case.

    Examples
    --------
    >>> round(float(sharpe_ratio_se(0.15275252, 12)), 6)
    0.290354
    """
    sr = np.asarray(sr_monthly, dtype=float)
    t = np.asarray(T, dtype=float)
    ok = np.isfinite(sr) & np.isfinite(t) & (t >= 2)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.where(ok, np.sqrt((1.0 + 0.5 * sr * sr) / np.where(ok, t, 1.0)), np.nan)
    return float(out) if out.ndim == 0 else out


def sharpe_ratio_t(sr_monthly: float | np.ndarray, T: float | np.ndarray) -> np.ndarray | float:
    """t-statistic of a Sharpe ratio against zero: ``SR / SE(SR)`` with :func:`sharpe_ratio_se`.

    Examples
    --------
    >>> round(float(sharpe_ratio_t(0.15275252, 12)), 5)
    0.52609
    """
    sr = np.asarray(sr_monthly, dtype=float)
    se = np.asarray(sharpe_ratio_se(sr, T), dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.where(np.isfinite(se) & (se > 0), sr / se, np.nan)
    return float(out) if out.ndim == 0 else out
