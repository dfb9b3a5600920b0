"""The control characteristics of the Fama-MacBeth regressions with controls: size, momentum, market beta.

Each is known at its date (computed from data dated at or before it).

References
----------
Fama, E. & French, K. (1993). J. Financial Economics 33(1) (size).
Carhart, M. (1997). J. Finance 52(1); Jegadeesh, N. & Titman, S. (1993). J. Finance 48(1) (momentum 12-1).
Fama, E. & MacBeth, J. (1973). JPE 81(3) (market beta from 60 months, at least 24).
"""

from __future__ import annotations

import numpy as np

__all__ = ["log_market_cap", "momentum_12_1", "rolling_beta", "BETA_WINDOW", "BETA_MIN_MONTHS"]

#: Months of the rolling market-beta window, and the fewest it needs.
BETA_WINDOW = 60
BETA_MIN_MONTHS = 24


def log_market_cap(market_cap: np.ndarray) -> np.ndarray:
    """``ln(market cap)`` where it is positive and finite, NaN elsewhere."""
    mc = np.asarray(market_cap, dtype=float)
    ok = np.isfinite(mc) & (mc > 0)
    return np.where(ok, np.log(np.where(ok, mc, 1.0)), np.nan)


def momentum_12_1(level: np.ndarray) -> np.ndarray:
    """Return from month ``t - 12`` to ``t - 1`` of a total-return level (the last month skipped).

    Notes
    -----
    ``mom_t = L_{t-1} / L_{t-12} - 1`` (eleven months of return, ending one month before the date;
    the short-term reversal month is left out as in Jegadeesh & Titman 1993 and Carhart 1997).
    NaN for the first twelve dates or where either level is missing.

    Examples
    --------
    >>> lv = np.arange(1.0, 15.0)[:, None]
    >>> float(momentum_12_1(lv)[12, 0])   # L_11 / L_0 - 1 = 12 / 1 - 1
    11.0
    """
    lv = np.asarray(level, dtype=float)
    out = np.full(lv.shape, np.nan)
    if lv.shape[0] > 12:
        with np.errstate(invalid="ignore", divide="ignore"):
            out[12:] = lv[11:-1] / lv[:-12] - 1.0
    return np.where(np.isfinite(out), out, np.nan)


def rolling_beta(stock: np.ndarray, market: np.ndarray, window: int = BETA_WINDOW,
                 min_months: int = BETA_MIN_MONTHS) -> np.ndarray:
    """OLS slope of each name's monthly return on the market's over the last ``window`` months.

    Parameters
    ----------
    stock : ndarray (D x S)
        Monthly returns dated at the end of the month earned (row ``t``: month ending at ``t``).
    market : ndarray (D,)
        The comparison's monthly return on the same rows.

    Returns
    -------
    ndarray (D x S)
        ``beta_t = cov(r_i, r_m) / var(r_m)`` over the months ``t - window + 1 .. t`` where both are
        known; NaN with fewer than ``min_months`` such months.

    Notes
    -----
    Computed with running sums (one pass, no loop over names).
    """
    r = np.asarray(stock, dtype=float)
    m = np.asarray(market, dtype=float)[:, None]
    ok = np.isfinite(r) & np.isfinite(m)
    ri = np.where(ok, r, 0.0)
    mi = np.where(ok, np.broadcast_to(m, r.shape), 0.0)

    def roll(a: np.ndarray) -> np.ndarray:
        c = np.cumsum(a, axis=0)
        out = c.copy()
        out[window:] -= c[:-window]
        return out

    n = roll(ok.astype(float))
    sx, sy = roll(mi), roll(ri)
    sxx, sxy = roll(mi * mi), roll(mi * ri)
    with np.errstate(invalid="ignore", divide="ignore"):
        vx = sxx - sx * sx / n
        cxy = sxy - sx * sy / n
        b = cxy / vx
    good = (n >= min_months) & (vx > 1e-14 * np.maximum(sxx, 1e-300))
    return np.where(good, b, np.nan)
