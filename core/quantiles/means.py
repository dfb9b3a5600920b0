"""Equal-weight mean return of each quantile per date, and the member count of each quantile.

One weighted ``bincount`` over the assigned names per return array: the index of
(date, quantile) cells is built once per study (:func:`quantile_index`) and shared
by every horizon and by the monthly returns.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["QuantileIndex", "quantile_index", "quantile_means", "means_by_index", "quantile_member_counts"]


@dataclass(frozen=True)
class QuantileIndex:
    """Flat positions of the assigned names and their (date, quantile) cell.

    Attributes
    ----------
    pos : ndarray of int
        Flat index into the (D x S) array of each name with a quantile.
    cell : ndarray of int64
        ``date * n_q + (quantile - 1)`` of that name.
    t, n_q : int
        Number of dates and of quantiles.
    """

    pos: np.ndarray
    cell: np.ndarray
    t: int
    n_q: int


def quantile_index(q: np.ndarray, n_q: int) -> QuantileIndex:
    """The (date, quantile) cell of every name with a quantile number in ``q`` (D x S, NaN = none)."""
    flat = q.ravel()
    pos = np.flatnonzero(np.isfinite(flat))
    cell = (pos // q.shape[1]) * n_q + (flat[pos].astype(np.int64) - 1)
    return QuantileIndex(pos, cell, q.shape[0], n_q)


def means_by_index(qi: QuantileIndex, fwd: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Equal-weight mean of ``fwd`` and the count with a finite value, per date and quantile.

    Returns ``(means (D x n_q), counts (D x n_q))``; a quantile without a value is NaN.

    Notes
    -----
    ``mean_{t,k} = (1 / n_{t,k}) sum_{i in Q_k(t), r finite} r_{t,i}``, summed by one
    weighted ``bincount`` over the cells of :func:`quantile_index`.
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


def quantile_means(q: np.ndarray, fwd: np.ndarray, n_q: int) -> tuple[np.ndarray, np.ndarray]:
    """Equal-weight mean forward return and count with a return, per date and quantile.

    Returns ``(means (D x n_q), counts (D x n_q))``; a quantile without returns is NaN.

    Examples
    --------
    Reference case 15 of the project's check list (common practice):

    >>> q = np.array([[5, 1, 3, 2, 5, 1, 4, 3, 4, 2]], dtype=float)
    >>> r = np.array([[.030, -.010, .015, .000, .040, -.020, .020, .005, .010, -.005]])
    >>> np.round(quantile_means(q, r, 5)[0], 6).tolist()
    [[-0.015, -0.0025, 0.01, 0.015, 0.035]]
    """
    return means_by_index(quantile_index(q, n_q), fwd)


def quantile_member_counts(qi: QuantileIndex) -> np.ndarray:
    """Members of each quantile per date (D x n_q, int), whether or not they have a return."""
    return np.bincount(qi.cell, minlength=qi.t * qi.n_q).reshape(qi.t, qi.n_q).astype(int)
