"""Cross-sectional cleaning of a signal: outliers, z-scores, sectors, composites.

Arrays are (dates x securities) ``float64`` with ``NaN`` for "not available".
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from valuesift.core.arrays import row_median, sorted_rows
from valuesift.core.choices import OutlierRule, SmallSectorRule, ZScoreMethod

__all__ = [
    "MAD_SCALE", "NO_SECTOR", "winsorise_rows", "clip_robust_rows", "zscore_rows", "clean_values", "standardise",
    "sector_codes", "sector_zscore", "composite_zmean", "sector_relative",
]


#: Scale turning the median absolute deviation into a consistent estimate of the
#: standard deviation under normality, 1 / Phi^{-1}(3/4) (Rousseeuw & Croux 1993, JASA 88).
MAD_SCALE = 1.4826


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
    s, _, n = sorted_rows(x)
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


#: Sector label given to securities the sector file does not mention.
NO_SECTOR = "(no sector)"


def clean_values(
    x: np.ndarray, universe: np.ndarray, rule: OutlierRule, percentiles: tuple[float, float], z_limit: float
) -> np.ndarray:
    """Restrict to the universe and treat outliers per date.

    Notes
    -----
    ``winsorise``: order-statistic winsorising per date with tail fractions
    ``lower/100`` and ``(100 - upper)/100`` (see :func:`core.stats.winsorise_rows`).
    ``clip_robust_z``: clip to ``median +/- limit * 1.4826 * MAD``.
    """
    v = np.where(universe & np.isfinite(x), x, np.nan)
    if rule == "winsorise":
        lo, hi = percentiles
        return winsorise_rows(v, lo / 100.0, (100.0 - hi) / 100.0)
    if rule == "clip_robust_z":
        return clip_robust_rows(v, z_limit)
    return v


def standardise(x: np.ndarray, sign: float, method: ZScoreMethod) -> np.ndarray:
    """Oriented cross-sectional z-score (higher = cheaper), ddof 1 for mean/sd."""
    return zscore_rows(sign * x, method=method, ddof=1)


def sector_codes(securities: pd.Index, sectors: pd.Series | None) -> tuple[np.ndarray, list[str]]:
    """Integer sector code per security and the sector names (missing -> :data:`NO_SECTOR`)."""
    if sectors is None:
        return np.zeros(len(securities), dtype=int), [NO_SECTOR]
    sec = sectors.reindex(securities)
    labels = [str(s) if isinstance(s, str) and s else NO_SECTOR for s in sec.tolist()]
    names = sorted(set(labels))
    lookup = {n: i for i, n in enumerate(names)}
    return np.array([lookup[s] for s in labels], dtype=int), names


def sector_zscore(
    x: np.ndarray,
    sign: float,
    codes: np.ndarray,
    method: ZScoreMethod,
    min_size: int,
    small_rule: SmallSectorRule,
) -> np.ndarray:
    """Within-sector oriented z-score per date.

    Notes
    -----
    For each date and sector with at least ``min_size`` names, z-score within
    the sector.  Smaller sectors: ``pool`` — all small sectors of that date
    form one group, z-scored together if the group has ``min_size`` names,
    otherwise they get the universe-wide z-score; ``drop`` — NaN;
    ``raw`` — the universe-wide z-score.
    """
    fin = np.isfinite(x)
    out = np.full(x.shape, np.nan)
    small = np.zeros(x.shape, dtype=bool)
    for c in np.unique(codes):
        cols = np.flatnonzero(codes == c)  # work on the sector's own columns only
        in_c = fin[:, cols]
        n = in_c.sum(axis=1)
        z = standardise(np.where(in_c, x[:, cols], np.nan), sign, method)
        big = (n >= min_size)[:, None]
        out[:, cols] = np.where(in_c & big, z, np.nan)
        small[:, cols] = in_c & ~big
    if small.any() and small_rule != "drop":
        universe_z = standardise(x, sign, method)
        if small_rule == "pool":
            npool = small.sum(axis=1)
            zp = standardise(np.where(small, x, np.nan), sign, method)
            pooled_ok = (npool >= min_size)[:, None]
            out = np.where(small & pooled_ok, zp, out)
            out = np.where(small & ~pooled_ok, universe_z, out)
        else:
            out = np.where(small, universe_z, out)
    return out


def composite_zmean(parts: list[np.ndarray]) -> np.ndarray:
    """Composite signal: mean of oriented component z-scores available for a name.

    Notes
    -----
    ``C_{t,i} = mean_k z^{(k)}_{t,i}`` over components ``k`` with a value;
    each ``z^{(k)}`` is oriented so higher = cheaper.
    """
    stack = np.stack(parts, axis=0)
    fin = np.isfinite(stack)
    n = fin.sum(axis=0)
    tot = np.where(fin, stack, 0.0).sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n > 0, tot / np.maximum(n, 1), np.nan)


def sector_relative(r: np.ndarray, codes: np.ndarray) -> np.ndarray:
    """Return minus the equal-weight mean return of the name's sector on the same date.

    Notes
    -----
    ``r*_{t,i} = r_{t,i} - mean_{j in sector(i), r_{t,j} finite} r_{t,j}``; NaN stays NaN.
    A sector-neutral study is judged against these, so a sector's common move is not
    credited to the signal.
    """
    out = np.full(r.shape, np.nan)
    fin = np.isfinite(r)
    for c in np.unique(codes):
        cols = np.flatnonzero(codes == c)
        sub = r[:, cols]
        f = fin[:, cols]
        n = f.sum(axis=1)
        with np.errstate(invalid="ignore", divide="ignore"):
            m = np.where(n > 0, np.where(f, sub, 0.0).sum(axis=1) / np.maximum(n, 1), np.nan)
        out[:, cols] = np.where(f, sub - m[:, None], np.nan)
    return out
