"""Pearson and Spearman correlation per row of two (dates x securities) arrays.

The masked forms take the common-finite mask once so that several statistics of the
same pair of arrays (rank IC, Pearson IC, Fama-MacBeth slope) share it.

References
----------
Spearman, C. (1904). Am. J. Psychol. 15(1); scipy.stats.spearmanr / pearsonr.
"""

from __future__ import annotations

import numpy as np

from valuesift.core.correlation.ranks import RowSort, average_ranks, ranks_within

__all__ = ["row_pearson", "masked_pearson", "pearson_parts", "row_spearman", "masked_spearman"]


def row_pearson(x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Pearson correlation per row over the positions where both are finite.

    Returns ``(r, n)``; ``r`` is NaN when either side has no spread (its sum
    of squared deviations is below ``1e-20`` of its sum of squares, i.e. the
    values agree to about 10 significant digits) or n < 3.

    Notes
    -----
    ``r = sum(dx dy) / sqrt(sum dx^2 sum dy^2)`` with ``dx = x - mean(x)``
    over the common positions.
    """
    both = np.isfinite(x) & np.isfinite(y)
    n = both.sum(axis=1)
    return masked_pearson(x, y, both, n), n


def masked_pearson(x: np.ndarray, y: np.ndarray, both: np.ndarray, n: np.ndarray) -> np.ndarray:
    """:func:`row_pearson` given the common-finite mask ``both`` and its row counts ``n``."""
    return pearson_parts(x, y, both, n)[0]


def pearson_parts(
    x: np.ndarray, y: np.ndarray, both: np.ndarray, n: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Pearson r per row and its pieces: centred ``dx``, ``dy`` and ``xm`` (x with zeros off the mask)."""
    xm = np.where(both, x, 0.0)
    ym = np.where(both, y, 0.0)
    nn = np.maximum(n, 1)[:, None]
    dx = np.where(both, xm - xm.sum(axis=1, keepdims=True) / nn, 0.0)
    dy = np.where(both, ym - ym.sum(axis=1, keepdims=True) / nn, 0.0)
    sxy = np.einsum("ij,ij->i", dx, dy)
    sxx = np.einsum("ij,ij->i", dx, dx)
    syy = np.einsum("ij,ij->i", dy, dy)
    qx = np.einsum("ij,ij->i", xm, xm)
    qy = np.einsum("ij,ij->i", ym, ym)
    ok = (n >= 3) & (sxx > 1e-20 * qx) & (syy > 1e-20 * qy) & (sxx > 0) & (syy > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        r = sxy / np.sqrt(np.where(ok, sxx * syy, 1.0))
    return np.where(ok, np.clip(r, -1.0, 1.0), np.nan), dx, dy, xm


def row_spearman(
    x: np.ndarray, y: np.ndarray, x_ranks: np.ndarray | RowSort | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """Spearman rank correlation per row: Pearson on average ranks of the common positions.

    ``x_ranks`` (optional) are the average ranks of all finite ``x`` (rows where
    ``y`` is finite wherever ``x`` is reuse them instead of ranking again), or a
    :func:`~valuesift.core.correlation.ranks.row_sort` of ``x`` (every row's ranks
    over the common names from that one sort; the same numbers).
    """
    both = np.isfinite(x) & np.isfinite(y)
    n = both.sum(axis=1)
    return masked_spearman(x, y, both, n, x_ranks), n


def masked_spearman(
    x: np.ndarray, y: np.ndarray, both: np.ndarray, n: np.ndarray, x_ranks: np.ndarray | RowSort | None,
    y_sort: RowSort | None = None,
) -> np.ndarray:
    """:func:`row_spearman` given the common-finite mask ``both`` and its row counts ``n``; ``y_sort``:
    ``row_sort(y)`` when the caller has it (``y``'s ranks over ``both`` then come from it, the same numbers)."""
    if isinstance(x_ranks, RowSort):  # one sort of x shared by every y: its ranks over any subset in linear time
        rx = ranks_within(x_ranks, both)
    elif x_ranks is None:
        rx = average_ranks(np.where(both, x, np.nan))
    else:
        same = (both == np.isfinite(x)).all(axis=1)
        rx = np.where(same[:, None] & both, x_ranks, np.nan)
        redo = ~same
        if redo.any():
            rx[redo] = average_ranks(np.where(both[redo], x[redo], np.nan))
    ry = ranks_within(y_sort, both) if y_sort is not None else average_ranks(np.where(both, y, np.nan))
    # the ranks are finite exactly where ``both`` holds
    return masked_pearson(rx, ry, both, n)
