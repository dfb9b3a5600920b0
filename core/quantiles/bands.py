"""Per-date breakpoints of a signal across the universe, and equal-count bins of pooled pairs.

References
----------
Hyndman, R. J. & Fan, Y. (1996). Sample quantiles in statistical packages. Am. Stat. 50(4)
(definition 7, linear interpolation: numpy's and pandas' default).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from valuesift.core.arrays import row_quantile_from_sorted, sorted_rows

__all__ = ["row_breakpoints", "equal_count_bins"]


def row_breakpoints(x: np.ndarray, n_quantiles: int, min_names: int = 3) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Median and the ``k / n_quantiles`` breakpoints (k = 1..n-1) of each row, and the count per row.

    Parameters
    ----------
    x : array (dates x names)
        NaN outside the universe.
    n_quantiles : int
    min_names : int
        Rows with fewer than ``max(min_names, n_quantiles)`` values get NaN.

    Returns
    -------
    (median, breakpoints, n) : arrays (D,), (D x n_quantiles-1), (D,)

    Notes
    -----
    Linear-interpolation quantiles (Hyndman & Fan 1996, definition 7).
    """
    s, _, n = sorted_rows(np.asarray(x, dtype=float))
    ok = n >= max(int(min_names), int(n_quantiles))
    med = np.where(ok, row_quantile_from_sorted(s, n, 0.5), np.nan)
    probs = [k / n_quantiles for k in range(1, n_quantiles)]
    bps = np.column_stack([np.where(ok, row_quantile_from_sorted(s, n, p), np.nan) for p in probs]) \
        if probs else np.empty((x.shape[0], 0))
    return med, bps, n


def equal_count_bins(x: np.ndarray, y: np.ndarray, bins: int) -> pd.DataFrame:
    """Mean ``x`` and mean ``y`` within ``bins`` equal-count bins of ``x`` (finite pairs only).

    Returns
    -------
    DataFrame (one row per non-empty bin) with ``x_mean``, ``y_mean`` and ``count``.

    Notes
    -----
    Edges are the linear-interpolation quantiles ``j / bins`` of ``x`` (repeated edges merged);
    bins are closed on the left, the last one also on the right.
    """
    x = np.asarray(x, dtype=float).ravel()
    y = np.asarray(y, dtype=float).ravel()
    ok = np.isfinite(x) & np.isfinite(y)
    x, y = x[ok], y[ok]
    if x.size == 0:
        return pd.DataFrame({"x_mean": [], "y_mean": [], "count": []})
    edges = np.unique(np.quantile(x, np.linspace(0, 1, bins + 1)))
    if edges.size < 2:
        return pd.DataFrame({"x_mean": [float(x.mean())], "y_mean": [float(y.mean())], "count": [int(x.size)]})
    which = np.clip(np.searchsorted(edges, x, side="right") - 1, 0, len(edges) - 2)
    cnt = np.bincount(which, minlength=len(edges) - 1)
    keep = cnt > 0
    bx = np.bincount(which, weights=x, minlength=len(edges) - 1)[keep] / cnt[keep]
    by = np.bincount(which, weights=y, minlength=len(edges) - 1)[keep] / cnt[keep]
    return pd.DataFrame({"x_mean": bx, "y_mean": by, "count": cnt[keep].astype(int)})
