"""The headline statistics of a per-date series on a subset of its dates, and the difference between two subsets.

Every subset keeps the full date axis (dates outside it are NaN), so the non-overlapping check and the
independent-period count of :func:`valuesift.core.inference.nonoverlap.headline_block` still see calendar
positions.

References
----------
Hansen, L. P. & Hodrick, R. J. (1980). JPE 88(5); Newey, W. & West, K. (1987). Econometrica 55(3).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pandas as pd

from valuesift.core.choices import HacLagRule
from valuesift.core.inference.nonoverlap import headline_block
from valuesift.core.inference.evidence import evidence_category

__all__ = ["subset_block", "difference_of_means", "year_masks", "split_masks", "default_split",
           "regime_masks", "trailing_volatility", "VOL_WINDOW"]

#: Months of the trailing volatility that defines the high- and low-volatility regimes.
VOL_WINDOW = 12


def subset_block(x: np.ndarray, mask: np.ndarray, horizon: int, rule: HacLagRule) -> dict[str, Any]:
    """:func:`headline_block` of ``x`` restricted to the dates where ``mask`` holds (NaN elsewhere)."""
    x = np.asarray(x, dtype=float)
    return headline_block(np.where(np.asarray(mask, dtype=bool), x, np.nan), horizon, rule)


def difference_of_means(x: np.ndarray, mask_a: np.ndarray, mask_b: np.ndarray, horizon: int,
                        rule: HacLagRule) -> dict[str, Any]:
    """Mean of ``x`` on subset B minus its mean on subset A, with a standard error from both headlines.

    Notes
    -----
    ``d = mean_B - mean_A``; ``SE(d) = sqrt(SE_A^2 + SE_B^2)`` with each ``SE`` the headline HAC
    standard error of its subset (Hansen-Hodrick for h > 1); ``t = d / SE(d)``.  The two subsets are
    treated as independent (true for two halves of a history up to the ``h - 1`` dates at the seam).
    The verdict is ``"too_short"`` when either subset is too short to judge.

    Examples
    --------
    >>> x = np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6])
    >>> first = np.arange(6) < 3
    >>> round(difference_of_means(x, first, ~first, 1, "overlap")["difference"], 12)
    0.3
    """
    a = subset_block(x, mask_a, horizon, rule)
    b = subset_block(x, mask_b, horizon, rule)
    d = float(b["mean"]) - float(a["mean"])
    se = math.sqrt(float(a["se"]) ** 2 + float(b["se"]) ** 2)
    t = d / se if math.isfinite(se) and se > 0 else math.nan
    short = bool(a["too_short"] or b["too_short"])
    return {"difference": d, "se": se, "t": t, "too_short": short, "evidence": evidence_category(t, short)}


def year_masks(dates: pd.DatetimeIndex) -> dict[str, np.ndarray]:
    """One mask per calendar year of the signal dates, labelled ``YYYY``."""
    years = np.asarray(dates.year)
    return {str(int(y)): years == y for y in np.unique(years)}


def default_split(dates: pd.DatetimeIndex, valid: np.ndarray) -> pd.Timestamp:
    """The middle of the dates where ``valid`` holds (the month-end that starts the second half)."""
    idx = np.flatnonzero(np.asarray(valid, dtype=bool))
    if idx.size == 0:
        return pd.Timestamp(dates[len(dates) // 2])
    return pd.Timestamp(dates[int(idx[idx.size // 2])])


def split_masks(dates: pd.DatetimeIndex, split: pd.Timestamp) -> dict[str, np.ndarray]:
    """``before YYYY-MM`` (dates before the split month) and ``from YYYY-MM`` (the split month onwards)."""
    split = pd.Timestamp(split)
    start = pd.Timestamp(year=split.year, month=split.month, day=1)
    lab = f"{split.year:04d}-{split.month:02d}"
    after = np.asarray(dates >= start)
    return {f"before {lab}": ~after, f"from {lab}": after}


def trailing_volatility(monthly: np.ndarray, window: int = VOL_WINDOW) -> np.ndarray:
    """Standard deviation (ddof 1) of the last ``window`` monthly returns ending at each row (NaN until full).

    Row ``t`` uses the returns of rows ``t - window + 1 .. t`` only (known at ``t``).
    """
    s = pd.Series(np.asarray(monthly, dtype=float))
    return s.rolling(window, min_periods=window).std(ddof=1).to_numpy(dtype=float)


def regime_masks(comp_forward: np.ndarray, comp_trailing_vol: np.ndarray) -> dict[tuple[str, str], np.ndarray]:
    """Masks of the market regimes of each formation date.

    Parameters
    ----------
    comp_forward : ndarray (D,)
        The comparison's return over the same window as the statistic (from the date, h months).
    comp_trailing_vol : ndarray (D,)
        The comparison's trailing volatility known at the date (:func:`trailing_volatility`).

    Returns
    -------
    dict
        ``("market", "rose")``: comparison return > 0 over the window; ``("market", "fell")``: <= 0;
        ``("volatility", "high")`` / ``("volatility", "low")``: trailing volatility above / at or below
        its median over the dates where it is defined (the median uses the whole history: a
        description of the past, not a rule one could have traded).
    """
    f = np.asarray(comp_forward, dtype=float)
    v = np.asarray(comp_trailing_vol, dtype=float)
    fin = np.isfinite(v)
    med = float(np.median(v[fin])) if fin.any() else math.nan
    return {
        ("market", "rose"): np.isfinite(f) & (f > 0),
        ("market", "fell"): np.isfinite(f) & (f <= 0),
        ("volatility", "high"): fin & (v > med),
        ("volatility", "low"): fin & (v <= med),
    }
