"""Average ranks per row (the ranking behind every Spearman correlation).

References
----------
scipy.stats.rankdata(method="average") for the tie convention.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from valuesift.core.arrays import sorted_rows

__all__ = ["average_ranks", "RowSort", "row_sort", "ranks_within"]


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



@dataclass(frozen=True)
class RowSort:
    """One row-wise sort of a (dates x securities) array, reused to rank any subset of its values.

    ``order``: the sorting permutation per row (NaN last); ``run_first``,
    ``run_last``: flat positions (in the sorted grid) where each run of equal
    values starts and ends; ``tied_pos``, ``tied_run``: every position inside
    such a run and the run it belongs to.
    """

    order: np.ndarray
    run_first: np.ndarray
    run_last: np.ndarray
    tied_pos: np.ndarray
    tied_run: np.ndarray


def row_sort(x: np.ndarray) -> RowSort:
    """Sort every row of ``x`` once and find its runs of equal values (see :func:`ranks_within`)."""
    x = np.asarray(x, dtype=float)
    if x.ndim != 2:
        raise ValueError("row_sort expects a 2-D array")
    t, m = x.shape
    s, order, _ = sorted_rows(x)
    empty = np.zeros(0, dtype=np.int64)
    if m < 2:
        return RowSort(order, empty, empty, empty, empty)
    k = np.flatnonzero(s[:, 1:] == s[:, :-1])  # NaN never equals NaN: the NaN tail has no runs
    if not k.size:
        return RowSort(order, empty, empty, empty, empty)
    row, col = np.divmod(k, m - 1)
    g = row * m + col  # left element of each tied pair
    new_run = np.ones(g.size, dtype=bool)
    new_run[1:] = g[1:] != g[:-1] + 1  # pairs of one run are adjacent; rows never join (gap of 2)
    run = np.cumsum(new_run) - 1
    first = g[new_run]
    last = g[np.append(new_run[1:], True)] + 1
    return RowSort(order, first, last, np.concatenate([g, last]), np.concatenate([run, np.arange(first.size)]))


def ranks_within(sort: RowSort, mask: np.ndarray) -> np.ndarray:
    """``average_ranks(np.where(mask, x, nan))`` from a :func:`row_sort` of ``x``, in linear time per row.

    ``mask`` must hold only where ``x`` is finite.

    Notes
    -----
    Ranking a subset needs no new sort: in the sorted row, a member's rank is
    the number of members up to it; the members of a run of equal values take
    0-based places ``a..b`` among the members and each gets ``(a + b)/2 + 1``,
    the expression :func:`average_ranks` evaluates (exact half-integers, so the
    same numbers to the bit).

    Examples
    --------
    >>> x = np.array([[3.0, 1.0, 2.0, 2.0, 5.0, 2.0]])
    >>> ranks_within(row_sort(x), np.array([[True, False, True, True, True, False]])).tolist()
    [[3.0, nan, 1.5, 1.5, 4.0, nan]]
    """
    order = sort.order
    t, m = order.shape
    ms = np.take_along_axis(np.asarray(mask, dtype=bool), order, axis=1)
    c = np.cumsum(ms, axis=1)
    r = c.astype(float)
    if sort.run_first.size:
        cf = c.reshape(-1)
        a = cf[sort.run_first] - ms.reshape(-1)[sort.run_first]  # members before the run
        b = cf[sort.run_last] - 1  # 0-based place of the run's last member
        avg = (a + b) / 2.0 + 1.0
        r.reshape(-1)[sort.tied_pos] = avg[sort.tied_run]
    r[~ms] = np.nan
    ranks = np.empty_like(r)
    np.put_along_axis(ranks, order, r, axis=1)
    return ranks
