"""Quantile membership of the signal per date (1 = lowest signal = dearest, n = cheapest)."""

from __future__ import annotations

import numpy as np

__all__ = ["assign_quantiles"]


def _ordinal_ranks(x: np.ndarray, tiebreak: np.ndarray) -> np.ndarray:
    """Ranks 1..n per row ordered by value, ties by ``tiebreak``; NaN stays NaN."""
    t, m = x.shape
    missing = np.isnan(x)
    if m == 0 or np.isinf(x).any():
        key2 = np.broadcast_to(tiebreak, (t, m))
        order = np.lexsort((key2, x), axis=1)  # last key (value) is primary; NaN sorts last
    else:
        # The same order from two vectorised sorts (several times faster than lexsort): the
        # dense rank of the value per row, then one integer key dense * m + rank of tiebreak.
        by_value = np.argsort(np.where(missing, np.inf, x), axis=1)
        s = np.take_along_axis(x, by_value, axis=1)
        step = np.zeros((t, m), dtype=np.int64)
        step[:, 1:] = s[:, 1:] != s[:, :-1]  # equal values share a dense rank (NaN rows are masked below)
        dense = np.empty((t, m), dtype=np.int64)
        np.put_along_axis(dense, by_value, np.cumsum(step, axis=1), axis=1)
        tb = np.argsort(np.argsort(np.asarray(tiebreak), kind="stable"), kind="stable").astype(np.int64)
        order = np.argsort(dense * m + tb[None, :], axis=1)
    ranks = np.empty((t, m))
    np.put_along_axis(ranks, order, np.broadcast_to(np.arange(1.0, m + 1.0), (t, m)), axis=1)
    return np.where(missing, np.nan, ranks)


def assign_quantiles(
    z: np.ndarray, n_q: int, groups: np.ndarray | None = None, tiebreak: np.ndarray | None = None
) -> np.ndarray:
    """Quantile number (1 = lowest signal .. n_q = highest) per date; NaN if not assigned.

    Parameters
    ----------
    z : ndarray (D x S)
        Signal; NaN = not in the universe.
    n_q : int
        Number of quantiles.
    groups : ndarray (S,) of int, optional
        Assign within each group (e.g. sector) separately.
    tiebreak : ndarray (S,) of int, optional
        Order among names with equal signal (the study passes the rank of the
        security identifier, so the result does not depend on column order);
        default: column order.

    Notes
    -----
    With ``n`` names on a date and ordinal rank ``r`` (1 = lowest signal; ties
    ordered by ``tiebreak``, so quantiles stay equal-sized even when many names
    tie, e.g. the zero dividend yield of non-payers), the name's position is
    ``u = (r - 1/2) / n`` and its quantile ``q = floor(u n_q) + 1``, computed in
    integers as ``floor((2r - 1) n_q / (2n)) + 1``.  The rule mirrors: for
    ``-z`` (without ties) every name's ``u`` becomes ``1 - u``, so quantile
    ``k`` becomes ``n_q + 1 - k`` and the spread changes sign only; remainders
    fall symmetrically (119 names in 5 quantiles: 24, 24, 23, 24, 24).  The one
    name whose ``u n_q`` can be a whole number (the median name, with an even
    number of quantiles and an odd number of names) sits exactly on the middle
    boundary and is left out, because neither side is the right one.  A date (or
    group) with fewer names than quantiles gets none.  Membership uses only the
    signal, never the forward return.

    Examples
    --------
    >>> import numpy as np
    >>> ey = np.array([[.10, .02, .07, .04, .12, .01, .09, .05, .08, .03]])
    >>> assign_quantiles(ey, 5).astype(int).tolist()
    [[5, 1, 3, 2, 5, 1, 4, 3, 4, 2]]
    """
    z = np.asarray(z, dtype=float)
    out = np.full(z.shape, np.nan)
    tb = np.arange(z.shape[1]) if tiebreak is None else np.asarray(tiebreak)
    codes = np.zeros(z.shape[1], dtype=int) if groups is None else np.asarray(groups)
    for c in np.unique(codes):
        cols = codes == c
        sub = np.where(cols[None, :] & np.isfinite(z), z, np.nan)
        fin = np.isfinite(sub)
        n = fin.sum(axis=1).astype(np.int64)
        r = np.where(fin, _ordinal_ranks(sub, tb), 0.0).astype(np.int64)
        num = (2 * r - 1) * int(n_q)
        den = np.maximum(2 * n, 1)[:, None]
        q = (num // den + 1).astype(float)
        on_boundary = (num % den) == 0
        ok = (n >= n_q)[:, None] & fin & ~on_boundary
        out = np.where(ok, np.clip(q, 1, n_q), out)
    return out
