"""How fast a signal's information fades: the marginal IC of each future month, its half-life, and
the month-to-month rank autocorrelation of the signal.

References
----------
Grinold, R. & Kahn, R. (2000). Active Portfolio Management, 2nd ed., ch. 10 and 16 (information
horizon: the IC of a signal against returns further ahead, and the signal's own persistence).
"""

from __future__ import annotations

import math
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pandas as pd

from valuesift.core.choices import HacLagRule
from valuesift.core.correlation.ranks import RowSort, ranks_within, row_sort
from valuesift.core.correlation.rowwise import masked_pearson, masked_spearman
from valuesift.core.inference.nonoverlap import headline_block

__all__ = ["DECAY_MONTHS", "ic_decay", "half_life", "rank_autocorrelation"]

#: Months ahead of the decay table.
DECAY_MONTHS = 24


def ic_decay(z: np.ndarray, r1: np.ndarray, min_breadth: int, rule: HacLagRule = "overlap_or_auto",
             months: int = DECAY_MONTHS, z_ranks: np.ndarray | RowSort | None = None, workers: int = 1) -> pd.DataFrame:
    """The marginal rank IC of the signal at ``t`` against the one-month return of month ``t + k``.

    Parameters
    ----------
    z : ndarray (D x S)
        The evaluated signal (NaN outside the universe).
    r1 : ndarray (D x S)
        One-month forward return dated at the start of its month (row ``t``: ``t -> t+1``).
    min_breadth : int
        Dates with fewer names with both values get no IC.
    rule : {"overlap", "overlap_or_auto"}
    months : int
        ``k = 1..months``.
    z_ranks : RowSort or ndarray, optional
        ``row_sort(z)`` when the caller has it (else made here); ranks of ``z`` (the older form) rank
        each month's returns afresh instead of from one sort.
    workers : int
        Threads for the months on large panels (same numbers, any order of work).

    Returns
    -------
    DataFrame
        ``month_ahead, marginal_ic, t, cumulative_ic, n_dates, se_method, too_short, evidence``.

    Notes
    -----
    Month ``k``'s return is ``r1`` at row ``t + k - 1`` (the month that starts ``k - 1`` months
    after the signal date; ``k = 1`` is the study's one-month IC).  ``marginal_ic`` is the time-mean
    of the per-date Spearman correlation; ``t`` is the headline t for a one-month statistic
    (Newey-West, the too-short guard applies); ``cumulative_ic`` is the running sum of the marginal
    ICs over ``1..k``.
    """
    d = z.shape[0]
    if isinstance(z_ranks, np.ndarray):   # ranks of z given (the older form): the per-month ranking below
        ranks = z_ranks

        def one(k: int) -> np.ndarray:
            y = np.full_like(r1, np.nan)
            if k - 1 < d:
                y[: d - (k - 1)] = r1[k - 1:]
            both = np.isfinite(z) & np.isfinite(y)
            n = both.sum(axis=1)
            return np.where(n < min_breadth, np.nan, masked_spearman(z, y, both, n, ranks))
    else:
        # z and r1 each sorted once: month k's return is r1 shifted k - 1 rows, so its ranks over the names
        # that have both are r1's ranks within the shifted mask, shifted back (ranks_within: the same ranks
        # as ranking each month's returns afresh, to the bit)
        z_sort = z_ranks if isinstance(z_ranks, RowSort) else row_sort(z)
        r_sort = row_sort(r1)
        z_fin, r_fin = np.isfinite(z), np.isfinite(r1)

        def one(k: int) -> np.ndarray:
            s = k - 1
            both = np.zeros(z.shape, dtype=bool)
            ry = np.full(z.shape, np.nan)
            if s < d:
                both[: d - s] = z_fin[: d - s] & r_fin[s:]
                ry[: d - s] = _ranks_of_rows(r_sort, both[: d - s], s)
            n = both.sum(axis=1)
            rho = masked_pearson(ranks_within(z_sort, both), ry, both, n)
            return np.where(n < min_breadth, np.nan, rho)

    ks = list(range(1, int(months) + 1))
    if workers > 1 and z.size >= 200_000:  # numpy's sorts release the GIL: the months run side by side
        with ThreadPoolExecutor(max_workers=workers, thread_name_prefix="valuesift-decay") as pool:
            per_k = list(pool.map(one, ks))
    else:
        per_k = [one(k) for k in ks]
    rows = []
    cum = 0.0
    for k, rho in zip(ks, per_k):
        inf = headline_block(rho, 1, rule)
        m = float(inf["mean"])
        cum = cum + m if math.isfinite(m) else math.nan
        rows.append({"month_ahead": k, "marginal_ic": m, "t": inf["t"], "cumulative_ic": cum,
                     "n_dates": int(inf["n_dates"]), "se_method": inf["method"], "too_short": inf["too_short"],
                     "evidence": inf["evidence"]})
    return pd.DataFrame(rows)


def half_life(marginal_ic: np.ndarray) -> float:
    """Months after the first until the marginal IC first falls to half of the first month's (interpolated).

    Notes
    -----
    With ``m_1 > 0`` the first month ``k`` with ``m_k <= m_1 / 2`` gives
    ``k - 2 + (m_{k-1} - m_1/2) / (m_{k-1} - m_k)`` months (0 would mean it halves at once).  NaN when the first month's IC is
    not positive (nothing to decay) or when it never halves within the table (longer than the
    table: said in words by the report).  A model-free rule (common practice, no single source);
    an exponential fit gives a similar figure only when the decay is smooth.

    Examples
    --------
    >>> half_life(np.array([0.04, 0.03, 0.02, 0.01]))
    2.0
    >>> round(half_life(np.array([0.04, 0.035, 0.01])), 6)
    1.6
    """
    m = np.asarray(marginal_ic, dtype=float)
    if m.size == 0 or not math.isfinite(m[0]) or m[0] <= 0:
        return math.nan
    half = m[0] / 2.0
    for k in range(1, m.size):
        if math.isfinite(m[k]) and m[k] <= half:
            prev = m[k - 1]
            frac = (prev - half) / (prev - m[k]) if prev != m[k] else 1.0
            return float(k - 1 + frac)  # months after month 1 (month k sits at index k - 1)
    return math.nan


def _ranks_of_rows(sort: RowSort, mask: np.ndarray, start: int) -> np.ndarray:
    """Average ranks of rows ``start .. start + len(mask) - 1`` of ``x`` over ``mask`` (one row of the mask per
    row), from ``row_sort(x)``: a shifted array's ranks need no sort of their own (the same numbers)."""
    at = np.zeros(sort.order.shape, dtype=bool)
    at[start:start + len(mask)] = mask
    return ranks_within(sort, at)[start:start + len(mask)]


def rank_autocorrelation(z: np.ndarray, lag: int = 1, min_breadth: int = 3,
                         z_sort: RowSort | None = None) -> tuple[float, int]:
    """Time-mean of the Spearman correlation between the signal at ``t`` and at ``t - lag``.

    Over the names with a value on both dates; dates with fewer than ``min_breadth`` such names
    are left out.  Returns ``(mean, dates used)``.  Near 1: the screen barely changes from month
    to month (low turnover); near 0: a new list every month (common practice as a turnover proxy).
    ``z_sort``: ``row_sort(z)`` when the caller has it (both dates' ranks come from it, the same numbers).
    """
    if z.shape[0] <= lag:
        return math.nan, 0
    a, b = z[lag:], z[:-lag]
    both = np.isfinite(a) & np.isfinite(b)
    n = both.sum(axis=1)
    if z_sort is not None:
        rho = masked_pearson(_ranks_of_rows(z_sort, both, lag), _ranks_of_rows(z_sort, both, 0), both, n)
    else:
        rho = masked_spearman(a, b, both, n, None)
    rho = np.where(n < min_breadth, np.nan, rho)
    ok = np.isfinite(rho)
    return (float(rho[ok].mean()) if ok.any() else math.nan), int(ok.sum())
