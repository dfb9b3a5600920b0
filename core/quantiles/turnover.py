"""Turnover of the quantile portfolios between consecutive dates."""

from __future__ import annotations

import numpy as np

__all__ = ["quantile_turnover"]


def quantile_turnover(q: np.ndarray, n_q: int) -> np.ndarray:
    """One-way equal-weight turnover of each quantile between consecutive dates.

    Notes
    -----
    ``w_{t,i} = 1/n_{t,k}`` for members of quantile ``k``; one-way turnover
    ``0.5 * sum_i |w_{t,i} - w_{t-1,i}|`` (two-way is twice this).  NaN on the
    first date and when either date has no members.
    """
    t = q.shape[0]
    out = np.full((t, n_q), np.nan)
    if t < 2:
        return out
    for k in range(1, n_q + 1):
        m = q == k
        c = m.sum(axis=1)
        with np.errstate(invalid="ignore", divide="ignore"):
            w = np.where(m, 1.0 / np.maximum(c, 1)[:, None], 0.0)
        to = 0.5 * np.abs(w[1:] - w[:-1]).sum(axis=1)
        ok = (c[1:] > 0) & (c[:-1] > 0)
        out[1:, k - 1] = np.where(ok, to, np.nan)
    return out
