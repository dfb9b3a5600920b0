"""Cap-weighted quantile portfolios beside the equal-weighted ones.

References
----------
Fama, E. & French, K. (1993). J. Financial Economics 33(1) (value-weighted portfolios, so that the
smallest names do not dominate); Hou, K., Xue, C. & Zhang, L. (2020). Replicating anomalies.
Rev. Financ. Stud. 33(5) (many equal-weighted anomalies shrink when value-weighted).
"""

from __future__ import annotations

import numpy as np

__all__ = ["cap_weighted_quantile_means", "cap_weighted_monthly"]


def cap_weighted_quantile_means(q: np.ndarray, fwd: np.ndarray, cap: np.ndarray, n_q: int) -> np.ndarray:
    """Per date and quantile: the forward return weighted by each name's market cap at the date.

    Notes
    -----
    ``R_{t,k} = sum_i w_{t,i} r_{t,i} / sum_i w_{t,i}`` over the names of quantile ``k`` with a
    return and a positive cap ``w``; NaN where a quantile has none.  Returns (D x n_q).

    Examples
    --------
    >>> q = np.array([[1.0, 1.0, 2.0, 2.0]]); r = np.array([[0.1, 0.2, 0.0, 0.3]])
    >>> cap = np.array([[1.0, 3.0, 2.0, 2.0]])
    >>> cap_weighted_quantile_means(q, r, cap, 2).round(6).tolist()
    [[0.175, 0.15]]
    """
    w = np.where(np.isfinite(cap) & (cap > 0) & np.isfinite(fwd), cap, 0.0)
    out = np.full((q.shape[0], n_q), np.nan)
    for k in range(1, n_q + 1):
        m = (q == k) & (w > 0)
        sw = np.where(m, w, 0.0).sum(axis=1)
        swr = np.where(m, w * np.where(m, fwd, 0.0), 0.0).sum(axis=1)
        with np.errstate(invalid="ignore", divide="ignore"):
            out[:, k - 1] = np.where(sw > 0, swr / np.where(sw > 0, sw, 1.0), np.nan)
    return out


def cap_weighted_monthly(q: np.ndarray, monthly: np.ndarray, cap: np.ndarray, n_q: int,
                         holding_months: int) -> dict[str, np.ndarray]:
    """Monthly returns of the cheapest quantile and the long-short, cap-weighted, with overlapping cohorts.

    Notes
    -----
    A cohort formed at ``t`` weights its names by their cap at ``t`` (``w_i = cap_i / sum cap``);
    the portfolio holds the last ``h`` cohorts, ``1/h`` of capital each (the same rule as the
    equal-weight backtest, Jegadeesh & Titman 1993).  Row ``t`` holds the return earned from
    ``t`` to ``t + 1`` (NaN where nothing is held).  Gross of costs.
    """
    def weights(k: int) -> np.ndarray:
        m = (q == k) & np.isfinite(cap) & (cap > 0)
        w = np.where(m, cap, 0.0)
        s = w.sum(axis=1, keepdims=True)
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(s > 0, w / np.where(s > 0, s, 1.0), 0.0)

    def overlap(w: np.ndarray) -> np.ndarray:
        h = int(holding_months)
        cs = np.cumsum(w, axis=0)
        cn = np.cumsum((w.sum(axis=1) > 0).astype(float))
        tot, cnt = cs.copy(), cn.copy()
        if h < w.shape[0]:
            tot[h:] -= cs[:-h]
            cnt[h:] -= cn[:-h]
        return np.where(cnt[:, None] > 0, tot / np.maximum(cnt, 1)[:, None], 0.0)

    def earn(w: np.ndarray) -> np.ndarray:
        held = w != 0
        r = np.where(held, w * np.where(np.isfinite(monthly), monthly, 0.0), 0.0).sum(axis=1)
        broken = (held & ~np.isfinite(monthly)).any(axis=1)
        return np.where(held.any(axis=1) & ~broken, r, np.nan)

    top = earn(overlap(weights(n_q)))
    bottom = earn(overlap(weights(1)))
    return {"cheapest": top, "long_short": top - bottom}
