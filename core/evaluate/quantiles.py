"""Quantile portfolios of the signal: membership, mean returns, spread, turnover."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import stats as _st


__all__ = ["assign_quantiles", "quantile_means", "quantile_turnover", "monotonicity"]


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
    ordered by ``tiebreak``), ``q = floor((r - 1) n_q / n) + 1``: quantiles
    differ in size by at most one name, even when many names tie (e.g. the
    zero dividend yield of non-payers).  A date (or group) with fewer names
    than quantiles gets no quantiles.  Membership uses only the signal, never
    the forward return.

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
        r = _ordinal_ranks(sub, tb)
        n = np.isfinite(sub).sum(axis=1)
        with np.errstate(invalid="ignore", divide="ignore"):
            q = np.floor((r - 1.0) * n_q / np.maximum(n, 1)[:, None]) + 1.0
        q = np.clip(q, 1, n_q)
        ok = (n >= n_q)[:, None] & np.isfinite(sub)
        out = np.where(ok, q, out)
    return out


def quantile_means(q: np.ndarray, fwd: np.ndarray, n_q: int) -> tuple[np.ndarray, np.ndarray]:
    """Equal-weight mean forward return and count with a return, per date and quantile.

    Returns ``(means (D x n_q), counts (D x n_q))``; a quantile without returns is NaN.
    """
    return _means_from_masks(_quantile_masks(q, n_q), fwd)


def _quantile_masks(q: np.ndarray, n_q: int) -> list[np.ndarray]:
    """``[q == 1, ..., q == n_q]``: computed once per study and shared by every horizon."""
    return [q == k for k in range(1, n_q + 1)]


def _means_from_masks(masks: list[np.ndarray], fwd: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """:func:`quantile_means` from the quantile masks of :func:`_quantile_masks`."""
    t, n_q = fwd.shape[0], len(masks)
    means = np.full((t, n_q), np.nan)
    counts = np.zeros((t, n_q), dtype=int)
    fin = np.isfinite(fwd)
    for k, qk in enumerate(masks):
        m = qk & fin
        c = m.sum(axis=1)
        s = np.where(m, fwd, 0.0).sum(axis=1)
        counts[:, k] = c
        with np.errstate(invalid="ignore", divide="ignore"):
            means[:, k] = np.where(c > 0, s / np.maximum(c, 1), np.nan)
    return means, counts


@dataclass(frozen=True)
class _QuantileIndex:
    """Flat positions of the assigned names and their (date, quantile) cell, shared by every horizon."""

    pos: np.ndarray   # flat index into the (D x S) array of each name with a quantile
    cell: np.ndarray  # date * n_q + (quantile - 1) of that name
    t: int
    n_q: int


def _quantile_index(q: np.ndarray, n_q: int) -> _QuantileIndex:
    flat = q.ravel()
    pos = np.flatnonzero(np.isfinite(flat))
    cell = (pos // q.shape[1]) * n_q + (flat[pos].astype(np.int64) - 1)
    return _QuantileIndex(pos, cell, q.shape[0], n_q)


def _fast_means(qi: _QuantileIndex, fwd: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """:func:`quantile_means` by one weighted ``bincount`` over the assigned names.

    Same sums as the masked row sums up to the order of addition (a few units
    in the last place).
    """
    f = fwd.ravel()[qi.pos]
    fin = np.isfinite(f)
    cells = qi.cell[fin]
    size = qi.t * qi.n_q
    c = np.bincount(cells, minlength=size).reshape(qi.t, qi.n_q)
    s = np.bincount(cells, weights=f[fin], minlength=size).reshape(qi.t, qi.n_q)
    with np.errstate(invalid="ignore", divide="ignore"):
        means = np.where(c > 0, s / np.maximum(c, 1), np.nan)
    return means, c.astype(int)


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


def monotonicity(mean_by_quantile: np.ndarray) -> float:
    """Spearman correlation of quantile order (1..n) with mean return (NaN if undefined)."""
    y = np.asarray(mean_by_quantile, dtype=float)
    ok = np.isfinite(y)
    if ok.sum() < 3 or np.all(y[ok] == y[ok][0]):
        return float("nan")
    return float(_st.spearmanr(np.arange(1, y.size + 1)[ok], y[ok]).statistic)
