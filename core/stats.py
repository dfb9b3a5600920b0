"""Row-wise (per date) statistics on 2-D arrays and time-series inference.

All cross-sectional functions take a ``float64`` array shaped
(dates x securities) where ``NaN`` marks "not available" and work along
``axis=1`` without Python loops over securities or dates.
"""

from __future__ import annotations

import math

import numpy as np

from valuesift.core._typing import HacLagRule, ZScoreMethod

__all__ = [
    "MAD_SCALE",
    "average_ranks",
    "row_count",
    "row_mean",
    "row_std",
    "row_median",
    "winsorise_rows",
    "clip_robust_rows",
    "zscore_rows",
    "row_pearson",
    "row_spearman",
    "newey_west_se",
    "auto_lags",
    "hac_lags",
    "mean_inference",
    "annualise",
    "max_drawdown",
    "sharpe_ratio",
    "hit_rate",
]

#: Scale turning the median absolute deviation into a consistent estimate of the
#: standard deviation under normality, 1 / Phi^{-1}(3/4) (Rousseeuw & Croux 1993, JASA 88).
MAD_SCALE = 1.4826


def _sorted_rows(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
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
    s, order, n = _sorted_rows(x)
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


def _row_quantile_from_sorted(s: np.ndarray, n: np.ndarray, q: float) -> np.ndarray:
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
    s, _, n = _sorted_rows(np.asarray(x, dtype=float))
    return _row_quantile_from_sorted(s, n, 0.5)


def _row_mad(x: np.ndarray, med: np.ndarray) -> np.ndarray:
    return row_median(np.abs(x - med[:, None]))


def winsorise_rows(x: np.ndarray, lower: float, upper: float) -> np.ndarray:
    """Order-statistic winsorising per row, as ``scipy.stats.mstats.winsorize``.

    Parameters
    ----------
    x : ndarray (dates x securities), NaN = missing
    lower, upper : float
        Fractions cut in each tail (0.01 and 0.01 for the 1st/99th percentiles).

    Notes
    -----
    With ``n`` valid values sorted as ``x_(1) <= ... <= x_(n)``, let
    ``k_lo = floor(lower * n)`` and ``k_hi = floor(upper * n)``; values below
    ``x_(k_lo + 1)`` are set to it and values above ``x_(n - k_hi)`` are set to
    it.  This replaces a *count* of values by the next order statistic; it is
    not percentile clipping (``np.clip`` to interpolated percentiles).

    References
    ----------
    scipy.stats.mstats.winsorize (``limits=(lower, upper)``, ``inclusive=(True, True)``).
    """
    x = np.asarray(x, dtype=float)
    s, _, n = _sorted_rows(x)
    if x.shape[1] == 0:
        return x.copy()
    k_lo = np.floor(lower * n).astype(int)
    k_hi = np.floor(upper * n).astype(int)
    lo_idx = np.clip(k_lo, 0, np.maximum(n - 1, 0))
    hi_idx = np.clip(n - 1 - k_hi, 0, np.maximum(n - 1, 0))
    lo_v = np.take_along_axis(s, lo_idx[:, None], axis=1)
    hi_v = np.take_along_axis(s, hi_idx[:, None], axis=1)
    with np.errstate(invalid="ignore"):
        return np.where(np.isnan(x), np.nan, np.minimum(np.maximum(x, lo_v), hi_v))


def clip_robust_rows(x: np.ndarray, limit: float) -> np.ndarray:
    """Clip each row to ``median +/- limit * 1.4826 * MAD`` (robust z beyond +/- limit).

    Notes
    -----
    Robust z-score ``(x - median) / (1.4826 MAD)``; a row with MAD = 0 is left
    unchanged (no spread to measure).
    """
    x = np.asarray(x, dtype=float)
    med = row_median(x)
    scale = MAD_SCALE * _row_mad(x, med)
    lo = (med - limit * scale)[:, None]
    hi = (med + limit * scale)[:, None]
    ok = (scale > 0)[:, None]
    with np.errstate(invalid="ignore"):
        clipped = np.minimum(np.maximum(x, lo), hi)
    return np.where(ok & ~np.isnan(x), clipped, x)


def zscore_rows(x: np.ndarray, method: ZScoreMethod = "mean_std", ddof: int = 1) -> np.ndarray:
    """Cross-sectional z-score per row.

    Notes
    -----
    ``mean_std``: ``z = (x - mean) / sd`` with sample sd, ``ddof = 1`` by
    default (``scipy.stats.zscore`` uses ddof 0; ValueSift uses 1).
    ``median_mad``: ``z = (x - median) / (1.4826 * MAD)``.
    A row whose scale is zero or undefined (all values equal, fewer than two
    values) gives NaN for the whole row, never 0 and never a warning.
    """
    x = np.asarray(x, dtype=float)
    fin = np.isfinite(x)
    n = fin.sum(axis=1)
    if method == "mean_std":
        # row_mean and row_std inlined with one finiteness mask (same operations, same numbers)
        with np.errstate(invalid="ignore", divide="ignore"):
            tot = np.where(fin, x, 0.0).sum(axis=1)
            centre = np.where(n > 0, tot / np.maximum(n, 1), np.nan)
            d = np.where(fin, x - centre[:, None], 0.0)
            ss = (d * d).sum(axis=1)
            scale = np.where(n > ddof, np.sqrt(ss / np.maximum(n - ddof, 1)), np.nan)
        del d
    else:
        centre = row_median(x)
        scale = MAD_SCALE * _row_mad(x, centre)
    # A constant row can leave a rounding-sized scale: treat a spread below 1e-10 of the
    # values' magnitude as no spread at all.
    big = np.where(fin, x, -np.inf).max(axis=1, initial=-np.inf)
    small = np.where(fin, x, np.inf).min(axis=1, initial=np.inf)
    const = ~(big > small)
    # the largest |value| of a row is the larger of |max| and |min| (0 for an empty row)
    size = np.where(n > 0, np.maximum(np.abs(big), np.abs(small)), 0.0)
    ok = np.isfinite(scale) & (scale > 1e-10 * size) & ~const
    with np.errstate(invalid="ignore", divide="ignore"):
        # a row that is not ok is divided by NaN, so the whole row is NaN
        return (x - centre[:, None]) / np.where(ok, scale, np.nan)[:, None]


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
    return _masked_pearson(x, y, both, n), n


def _masked_pearson(x: np.ndarray, y: np.ndarray, both: np.ndarray, n: np.ndarray) -> np.ndarray:
    """:func:`row_pearson` given the common-finite mask ``both`` and its row counts ``n``."""
    return _pearson_parts(x, y, both, n)[0]


def _pearson_parts(
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
    x: np.ndarray, y: np.ndarray, x_ranks: np.ndarray | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """Spearman rank correlation per row: Pearson on average ranks of the common positions.

    ``x_ranks`` (optional) are the average ranks of all finite ``x``; rows where
    ``y`` is finite wherever ``x`` is reuse them instead of ranking again.
    """
    both = np.isfinite(x) & np.isfinite(y)
    n = both.sum(axis=1)
    return _masked_spearman(x, y, both, n, x_ranks), n


def _masked_spearman(
    x: np.ndarray, y: np.ndarray, both: np.ndarray, n: np.ndarray, x_ranks: np.ndarray | None
) -> np.ndarray:
    """:func:`row_spearman` given the common-finite mask ``both`` and its row counts ``n``."""
    if x_ranks is None:
        rx = average_ranks(np.where(both, x, np.nan))
    else:
        same = (both == np.isfinite(x)).all(axis=1)
        rx = np.where(same[:, None] & both, x_ranks, np.nan)
        redo = ~same
        if redo.any():
            rx[redo] = average_ranks(np.where(both[redo], x[redo], np.nan))
    ry = average_ranks(np.where(both, y, np.nan))
    # the ranks are finite exactly where ``both`` holds
    return _masked_pearson(rx, ry, both, n)


def auto_lags(t: int) -> int:
    """Newey & West (1994) automatic lag ``floor(4 (T/100)^(2/9))``."""
    return int(math.floor(4.0 * (t / 100.0) ** (2.0 / 9.0))) if t > 0 else 0


def hac_lags(h: int, t: int, rule: HacLagRule = "overlap_or_auto") -> int:
    """Lags for an h-month overlapping series of length T.

    Notes
    -----
    ``overlap``: ``L = h - 1`` (Hansen & Hodrick 1980: overlapping h-period
    returns are MA(h-1)).  ``overlap_or_auto``: ``L = max(h - 1, floor(4 (T/100)^(2/9)))``,
    so a 1-month series still gets the Newey-West (1994) automatic lags.
    The lag never exceeds ``T - 1``.
    """
    base = max(int(h) - 1, 0)
    if rule == "overlap_or_auto":
        base = max(base, auto_lags(t))
    return max(min(base, t - 1), 0)


def newey_west_se(x: np.ndarray, lags: int) -> float:
    """Newey-West standard error of the mean of ``x`` (Bartlett kernel).

    Notes
    -----
    ``u = x - mean``; ``gamma_j = (1/T) sum_{t>j} u_t u_{t-j}``;
    ``Omega = gamma_0 + 2 sum_{j=1..L} (1 - j/(L+1)) gamma_j``;
    ``SE = sqrt(Omega / T)``.  No small-sample correction (as statsmodels'
    ``cov_type="HAC"`` with ``use_correction=False``).

    References
    ----------
    Newey, W. & West, K. (1987). Econometrica 55(3), 703-708.
    """
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    t = x.size
    if t < 2:
        return float("nan")
    u = x - x.mean()
    omega = float(u @ u) / t
    for j in range(1, min(lags, t - 1) + 1):
        omega += 2.0 * (1.0 - j / (lags + 1.0)) * float(u[j:] @ u[:-j]) / t
    return math.sqrt(omega / t) if omega > 0 else float("nan")


def mean_inference(x: np.ndarray, lags: int) -> dict[str, float]:
    """Mean, HAC SE and t, naive SE and t, 95 % interval and count of a series (NaN dropped).

    Notes
    -----
    95 % interval ``mean +/- 1.959964 * SE_HAC`` (normal approximation).
    The naive SE is ``sd(ddof=1)/sqrt(T)``, shown for comparison only.
    """
    x = np.asarray(x, dtype=float)
    x = x[np.isfinite(x)]
    t = int(x.size)
    out = {"mean": float("nan"), "sd": float("nan"), "se_hac": float("nan"), "t_hac": float("nan"),
           "ci_low": float("nan"), "ci_high": float("nan"), "se_naive": float("nan"),
           "t_naive": float("nan"), "n_dates": float(t), "hac_lags": float(lags)}
    if t == 0:
        return out
    m = float(x.mean())
    out["mean"] = m
    if t >= 2:
        sd = float(x.std(ddof=1))
        out["sd"] = sd
        se = newey_west_se(x, lags)
        out["se_hac"] = se
        if np.isfinite(se) and se > 0:
            out["t_hac"] = m / se
            out["ci_low"], out["ci_high"] = m - 1.959964 * se, m + 1.959964 * se
        if sd > 0:
            out["se_naive"] = sd / math.sqrt(t)
            out["t_naive"] = m / out["se_naive"]
    return out


def annualise(r: np.ndarray | float, months: int) -> np.ndarray:
    """Effective annual rate of an h-month holding-period return: ``(1 + r)^(12/h) - 1``.

    Returns below -100 % give NaN.
    """
    r = np.asarray(r, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.where(r > -1.0, np.power(np.maximum(1.0 + r, 0.0), 12.0 / months) - 1.0, np.nan)


def max_drawdown(r: np.ndarray) -> float:
    """Largest fall of wealth from a running peak; the starting wealth 1.0 counts as a peak.

    Notes
    -----
    ``W_t = prod_{s<=t} (1 + r_s)``, ``W_0 = 1``; ``MDD = max_t (1 - W_t / max_{s<=t} W_s)``.
    """
    r = np.asarray(r, dtype=float)
    r = r[np.isfinite(r)]
    if r.size == 0:
        return float("nan")
    w = np.concatenate([[1.0], np.cumprod(1.0 + r)])
    peak = np.maximum.accumulate(w)
    return float(np.max(1.0 - w / peak))


def sharpe_ratio(r: np.ndarray, rf_monthly: float = 0.0) -> float:
    """Annualised Sharpe ratio of monthly returns: ``sqrt(12) * mean(r - rf) / sd(r - rf)`` (ddof 1)."""
    r = np.asarray(r, dtype=float)
    ex = r[np.isfinite(r)] - rf_monthly
    if ex.size < 2:
        return float("nan")
    sd = float(ex.std(ddof=1))
    return float(math.sqrt(12.0) * ex.mean() / sd) if sd > 0 else float("nan")


def hit_rate(a: np.ndarray, b: np.ndarray) -> float:
    """Share of months where ``a`` is strictly above ``b`` (ties count as misses).

    Months where either side is missing are left out.
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    ok = np.isfinite(a) & np.isfinite(b)
    if not ok.any():
        return float("nan")
    return float(np.mean(a[ok] > b[ok]))
