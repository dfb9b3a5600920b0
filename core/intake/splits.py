"""Suspected unadjusted splits: detection on month-end prices and optional adjustment."""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["detect_splits", "apply_split", "shows_same_jump", "SPLIT_RATIOS", "RATIO_TOLERANCE"]

#: ratios (and their inverses, reverse splits) a price move is matched against
SPLIT_RATIOS: tuple[float, ...] = (1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0, 20.0)
#: largest |log(move / ratio)| still called a match (about 10 %)
RATIO_TOLERANCE = 0.10


def _match_ratio(move: float) -> float | None:
    """Nearest split ratio to ``move`` (= price before / price after), or None."""
    cands = np.array(SPLIT_RATIOS + tuple(1.0 / r for r in SPLIT_RATIOS))
    err = np.abs(np.log(move) - np.log(cands))
    k = int(np.argmin(err))
    return float(cands[k]) if err[k] <= RATIO_TOLERANCE else None


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
    rows = []
    for sec in prices.columns:
        s = prices[sec]
        v = s.to_numpy(dtype=float)
        ok = np.isfinite(v) & (v > 0)
        if ok.sum() < 3:
            continue
        p = v[ok]
        dates = s.index[ok]
        r = np.diff(np.log(p))
        for t in np.flatnonzero(np.abs(r) >= limit) + 1:
            move = p[t - 1] / p[t]
            ratio = _match_ratio(move)
            if ratio is None:
                continue
            half = abs(np.log(move)) / 2.0
            after = p[t + 1: t + 4]
            before = p[max(0, t - 3): t]
            if after.size == 0:
                continue
            if abs(np.log(np.median(after) / p[t])) >= half or abs(np.log(np.median(before) / p[t - 1])) >= half:
                continue
            rows.append((str(sec), pd.Timestamp(dates[t]), ratio, float(move)))
    return pd.DataFrame(rows, columns=["security", "date", "ratio", "move"]).astype({"ratio": float, "move": float})


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
