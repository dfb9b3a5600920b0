"""Row-wise (per date) primitives on (dates x securities) float arrays with NaN for missing.

Every function works along ``axis=1`` without Python loops over securities or dates.
"""

from __future__ import annotations

import numpy as np

__all__ = ["sorted_rows", "row_count", "row_mean", "row_std", "row_quantile_from_sorted", "row_median"]


def sorted_rows(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Row-sorted values (NaN last), the sorting permutation and the valid count per row."""
    missing = np.isnan(x)
    if missing.any() and not np.isinf(x).any():
        # numpy's vectorised sort is not used for rows holding NaN (several times slower):
        # sort with NaN as +inf instead, which is the same order (NaN last, no real inf present)
        order = np.argsort(np.where(missing, np.inf, x), axis=1, kind="quicksort")
    else:
        order = np.argsort(x, axis=1, kind="quicksort")  # NaN sorts last
    # ties may come out in any order: callers use only the sorted values and value runs
    s = np.take_along_axis(x, order, axis=1)
    n = np.sum(~missing, axis=1)
    return s, order, n


def row_count(x: np.ndarray) -> np.ndarray:
    """Number of finite values per row."""
    return np.sum(np.isfinite(x), axis=1)


def row_mean(x: np.ndarray) -> np.ndarray:
    """Mean of the non-NaN values per row (NaN for an empty row)."""
    n = row_count(x)
    tot = np.where(np.isfinite(x), x, 0.0).sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n > 0, tot / np.maximum(n, 1), np.nan)


def row_std(x: np.ndarray, ddof: int = 1) -> np.ndarray:
    """Standard deviation per row with ``ddof`` (NaN when fewer than ddof + 1 values)."""
    n = row_count(x)
    mu = row_mean(x)
    d = np.where(np.isfinite(x), x - mu[:, None], 0.0)
    ss = (d * d).sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n > ddof, np.sqrt(ss / np.maximum(n - ddof, 1)), np.nan)


def row_quantile_from_sorted(s: np.ndarray, n: np.ndarray, q: float) -> np.ndarray:
    """Linear-interpolation quantile (numpy default) of the first n entries of each sorted row."""
    pos = q * np.maximum(n - 1, 0)
    lo = np.floor(pos).astype(int)
    hi = np.minimum(lo + 1, np.maximum(n - 1, 0))
    m = s.shape[1]
    lo_c, hi_c = np.clip(lo, 0, max(m - 1, 0)), np.clip(hi, 0, max(m - 1, 0))
    if m == 0:
        return np.full(s.shape[0], np.nan)
    vlo = np.take_along_axis(s, lo_c[:, None], axis=1)[:, 0]
    vhi = np.take_along_axis(s, hi_c[:, None], axis=1)[:, 0]
    out = vlo + (pos - lo) * (vhi - vlo)
    return np.where(n > 0, out, np.nan)


def row_median(x: np.ndarray) -> np.ndarray:
    """Median of the non-NaN values per row (NaN for an empty row, no warning)."""
    s, _, n = sorted_rows(np.asarray(x, dtype=float))
    return row_quantile_from_sorted(s, n, 0.5)
