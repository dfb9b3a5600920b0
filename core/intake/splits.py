"""Suspected unadjusted splits: detection on month-end prices and optional adjustment."""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["detect_splits", "apply_split", "shows_same_jump", "SPLIT_RATIOS", "RATIO_TOLERANCE"]

#: ratios (and their inverses, reverse splits) a price move is matched against
SPLIT_RATIOS: tuple[float, ...] = (1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 20.0)
#: largest |log(move / ratio)| still called a match (about 10 %)
RATIO_TOLERANCE = 0.10


def detect_splits(prices: pd.DataFrame, threshold: float) -> pd.DataFrame:
    """Find one-period moves that look like an unadjusted split.

    Parameters
    ----------
    prices : pandas.DataFrame
        Month-end prices (dates x securities).
    threshold : float
        Moves with ``|log(p_t / p_{t-1})| >= log(1 / (1 - threshold))`` are examined.

    Returns
    -------
    pandas.DataFrame
        ``security, date, ratio, move`` (``ratio`` = old shares per new
        price level: 2 for a 2-for-1 split, 0.5 for a 1-for-2 reverse split).

    Notes
    -----
    A move qualifies when (i) ``R = p_{t-1} / p_t`` is within 10 % (in logs) of
    a ratio in :data:`SPLIT_RATIOS` or its inverse, and (ii) it does not
    revert: the median of the next three valid prices stays within half the
    jump (in logs) of ``p_t``, and the median of the three before stays within
    half the jump of ``p_{t-1}``.  At least one later price is needed.
    Consecutive valid prices are compared (gaps are skipped).

    References
    ----------
    Common practice in data cleaning of equity price histories (no single source).

    Examples
    --------
    >>> p = pd.DataFrame({"TOR14": [100.0, 102, 51, 52, 50]}, index=pd.date_range("2019-01-31", periods=5, freq="ME"))
    >>> detect_splits(p, 0.4)[["security", "ratio"]].values.tolist()
    [['TOR14', 2.0]]
    """
    limit = float(np.log(1.0 / (1.0 - threshold)))
    v = prices.to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(v) & (v > 0)
    okT = ok.T
    vals = v.T[okT]                       # valid prices, security by security
    col, when = np.nonzero(okT)           # security position and date position of each
    empty = pd.DataFrame({"security": pd.Series([], dtype="str"), "date": pd.Series([], dtype="datetime64[ns]"),
                          "ratio": pd.Series([], dtype=float), "move": pd.Series([], dtype=float)})
    if vals.size < 3:
        return empty
    lv = np.log(vals)
    same = col[1:] == col[:-1]
    t = np.flatnonzero(same & (np.abs(np.diff(lv)) >= limit)) + 1
    if t.size == 0:
        return empty
    move = vals[t - 1] / vals[t]
    cands = np.array(SPLIT_RATIOS + tuple(1.0 / r for r in SPLIT_RATIOS))
    err = np.abs(np.log(move)[:, None] - np.log(cands)[None, :])
    best = err.argmin(axis=1)
    matched = err[np.arange(t.size), best] <= RATIO_TOLERANCE
    half = np.abs(np.log(move)) / 2.0
    after = _neighbours(vals, col, t, (1, 2, 3))
    before = _neighbours(vals, col, t, (-1, -2, -3))
    med_a, has_a = _median3(after)
    med_b, _ = _median3(before)
    with np.errstate(divide="ignore", invalid="ignore"):
        stays = has_a & (np.abs(np.log(med_a / vals[t])) < half) & (np.abs(np.log(med_b / vals[t - 1])) < half)
    keep = matched & stays
    tk = t[keep]
    return pd.DataFrame({
        "security": pd.Series(np.asarray(prices.columns, dtype=object)[col[tk]], dtype="str"),
        "date": pd.DatetimeIndex(prices.index[when[tk]]).as_unit("ns"),
        "ratio": cands[best[keep]].astype(float),
        "move": move[keep].astype(float),
    }).reset_index(drop=True)


def _neighbours(vals: np.ndarray, col: np.ndarray, t: np.ndarray, offsets: tuple[int, ...]) -> np.ndarray:
    """Values at ``t + offset`` within the same security (NaN beyond it), one column per offset."""
    out = np.full((t.size, len(offsets)), np.nan)
    for k, off in enumerate(offsets):
        idx = t + off
        inside = (idx >= 0) & (idx < vals.size)
        idx_c = np.clip(idx, 0, vals.size - 1)
        good = inside & (col[idx_c] == col[t])
        out[good, k] = vals[idx_c[good]]
    return out


def _median3(a: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Row medians of up to three values with NaN holes (NaN-free rows first), and whether any value exists."""
    srt = np.sort(a, axis=1)  # NaN sorts last
    k = np.isfinite(a).sum(axis=1)
    med = np.full(a.shape[0], np.nan)
    med[k == 1] = srt[k == 1, 0]
    med[k == 2] = (srt[k == 2, 0] + srt[k == 2, 1]) / 2.0
    med[k == 3] = srt[k == 3, 1]
    return med, k > 0


def apply_split(frame: pd.DataFrame, security: str, date: pd.Timestamp, ratio: float) -> pd.DataFrame:
    """Return a copy with ``frame[security]`` divided by ``ratio`` strictly before ``date``."""
    out = frame.copy()
    before = out.index < date
    out.loc[before, security] = out.loc[before, security] / ratio
    return out


def shows_same_jump(series: pd.Series, date: pd.Timestamp, ratio: float, *, window_months: int = 6) -> pd.Timestamp | None:
    """Where a per-share series (EPS, dividends) shows the split's jump, or None.

    Compares the last valid value before ``date`` with the first valid value at or
    after it (within ``window_months``); a match is the same sign and
    ``|log(before / after) - log(ratio)| <= 0.15``.  Returns the date of the
    first post-jump value (values before it are to be divided by ``ratio``).
    """
    s = series.dropna()
    s = s[s != 0]
    pre = s[s.index < date]
    post = s[(s.index >= date) & (s.index <= date + pd.DateOffset(months=window_months))]
    if pre.empty or post.empty:
        return None
    a, b = float(pre.iloc[-1]), float(post.iloc[0])
    if np.sign(a) != np.sign(b):
        return None
    if abs(np.log(a / b) - np.log(ratio)) <= 0.15:
        return pd.Timestamp(post.index[0])
    return None
