"""Average ranks per row (the ranking behind every Spearman correlation).

References
----------
scipy.stats.rankdata(method="average") for the tie convention.
"""

from __future__ import annotations

import numpy as np

from valuesift.core.arrays import sorted_rows

__all__ = ["average_ranks"]


def average_ranks(x: np.ndarray) -> np.ndarray:
    """Per-row ranks 1..n with ties given their average rank; NaN stays NaN.

    Notes
    -----
    Same convention as ``scipy.stats.rankdata(method="average")`` (ties share
    the mean of the ranks they occupy).  Built from one ``argsort`` per call:
    in the sorted row, each run of equal values spanning positions ``a..b``
    (0-based) gets rank ``(a + b)/2 + 1``.
    """
    x = np.asarray(x, dtype=float)
    if x.ndim != 2:
        raise ValueError("average_ranks expects a 2-D array")
    t, m = x.shape
    if m == 0:
        return x.copy()
    s, order, n = sorted_rows(x)
    pos = np.broadcast_to(np.arange(m), (t, m))
    r_sorted = pos + 1.0
    same = s[:, 1:] == s[:, :-1]  # NaN never equals NaN, so the NaN tail has no runs
    k = np.flatnonzero(same)  # tied neighbours, as flat positions in the (t, m - 1) comparison grid
    if k.size:  # average ranks only at the tied positions (ties are few in continuous data)
        row, col = np.divmod(k, m - 1)
        g = row * m + col  # flat position (in the sorted t x m grid) of each tied pair's left element
        new_run = np.ones(g.size, dtype=bool)
        new_run[1:] = g[1:] != g[:-1] + 1  # pairs of one run are adjacent; rows never join (gap of 2)
        run = np.cumsum(new_run) - 1
        first = g[new_run]
        last = g[np.append(new_run[1:], True)] + 1  # right element of each run's last pair
        avg = (first % m + last % m) / 2.0 + 1.0  # run over 0-based a..b: rank (a + b)/2 + 1
        flat = r_sorted.reshape(-1)
        flat[g] = avg[run]
        flat[last] = avg
    r_sorted[pos >= n[:, None]] = np.nan
    ranks = np.empty_like(r_sorted)
    np.put_along_axis(ranks, order, r_sorted, axis=1)
    return ranks
