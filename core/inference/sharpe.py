"""Inference on the Sharpe ratio.

References
----------
Lo, A. W. (2002). The statistics of Sharpe ratios. Financial Analysts Journal 58(4), 36-52.
"""

from __future__ import annotations

import math

__all__ = ["sharpe_ratio_se", "sharpe_ratio_t"]


def sharpe_ratio_se(sr_per_period: float, n_periods: int) -> float:
    """Standard error of a per-period Sharpe ratio for iid returns: ``sqrt((1 + SR^2 / 2) / T)``.

    Notes
    -----
    Lo (2002), the iid case.  The SE of the annualised ratio is this times
    ``sqrt(12)`` for monthly returns.  The shortcut ``t = SR sqrt(T)`` leaves out
    the ``SR^2 / 2`` term, which matters when SR is large.

    Examples
    --------
    Reference case 19 of the project's check list (monthly SR 0.15275252, T = 12):

    >>> round(sharpe_ratio_se(0.15275252, 12), 8)
    0.29035419
    """
    if n_periods < 2 or not math.isfinite(sr_per_period):
        return float("nan")
    return math.sqrt((1.0 + 0.5 * sr_per_period * sr_per_period) / n_periods)


def sharpe_ratio_t(sr_per_period: float, n_periods: int) -> float:
    """``SR / SE(SR)`` with the SE of :func:`sharpe_ratio_se` (NaN when undefined)."""
    se = sharpe_ratio_se(sr_per_period, n_periods)
    return sr_per_period / se if math.isfinite(se) and se > 0 else float("nan")
