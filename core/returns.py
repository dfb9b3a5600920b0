"""Total returns on the month-end grid: the return index, forward and monthly returns.

Arrays are (dates x securities) ``float64``; ``NaN`` = not available.
Forward returns *are* future data by definition: they are outcomes, never
inputs to a decision dated at their start.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from valuesift.core.choices import DividendTreatment
from valuesift.core.arrays import row_mean

__all__ = [
    "PriceTrack",
    "price_track",
    "forward_returns",
    "monthly_returns",
    "level_forward_returns",
    "excess_returns",
]


@dataclass(frozen=True)
class PriceTrack:
    """Carried-forward prices, dividends and the total-return index of each security.

    Attributes
    ----------
    carried : ndarray (D x S)
        Last valid price at or before each date (NaN before the first one).
    dividends : ndarray (D x S)
        Dividends per share by ex-date month, kept only between the first and
        last valid price.
    tri : ndarray (D x S)
        Total-return index with dividends reinvested at the month-end of the
        ex-date month; 1.0 up to the first valid price.
    first_valid, last_valid : ndarray (S,)
        Row of the first and last valid price (-1 if none).
    """

    carried: np.ndarray
    dividends: np.ndarray
    tri: np.ndarray
    first_valid: np.ndarray
    last_valid: np.ndarray


def price_track(price: np.ndarray, valid: np.ndarray, div: np.ndarray) -> PriceTrack:
    """Build the carried price and the total-return index.

    Notes
    -----
    With ``P*_t`` the last valid price at or before ``t`` and ``D_t`` the
    dividends going ex in the month of ``t``, the monthly gross return is
    ``g_t = (P*_t + D_t) / P*_{t-1}`` (``g_t = 1`` before and at the first valid
    price), and ``TRI_t = prod_{s<=t} g_s``.  Over a gap of missing prices
    ``P*`` is flat, so a return to a date without a price is the return to the
    last valid price.

    References
    ----------
    Bodie, Kane & Marcus, *Investments*, 10th ed., ch. 5 (holding-period return,
    ``(P1 - P0 + D) / P0``).
    """
    t, n = price.shape
    rows = np.arange(t)[:, None]
    last_idx = np.maximum.accumulate(np.where(valid, rows, -1), axis=0)
    has = last_idx >= 0
    carried = np.where(has, np.take_along_axis(price, np.maximum(last_idx, 0), axis=0), np.nan)
    any_valid = np.asarray(valid.any(axis=0), dtype=bool)
    first = np.where(any_valid, np.argmax(valid, axis=0), -1)
    last = np.where(any_valid, t - 1 - np.argmax(valid[::-1], axis=0), -1)
    live = (rows >= first[None, :]) & (rows <= last[None, :]) & any_valid[None, :]
    d = np.where(live & np.isfinite(div), div, 0.0)
    g = np.ones((t, n))
    if t > 1:
        prev = carried[:-1]
        ok = np.isfinite(prev) & (rows[1:] > first[None, :])
        with np.errstate(invalid="ignore", divide="ignore"):
            g[1:] = np.where(ok, (carried[1:] + d[1:]) / np.where(ok, prev, 1.0), 1.0)
    tri = np.cumprod(g, axis=0)
    return PriceTrack(carried, d, tri, first.astype(int), last.astype(int))


def forward_returns(
    track: PriceTrack,
    valid: np.ndarray,
    h: int,
    treatment: DividendTreatment,
    delisting_return: float,
) -> tuple[np.ndarray, np.ndarray]:
    """h-month forward total return from each date, and a mask of delistings inside it.

    Notes
    -----
    ``reinvest``: ``R_t = TRI_{t+h} / TRI_t - 1``.
    ``uninvested``: ``R_t = (P*_{t+h} + sum_{s=t+1..t+h} D_s) / P_t - 1``.
    A name whose last valid price ``L`` lies before ``t + h`` (and before the
    panel end) has delisted inside the horizon: its return runs to the last
    valid price and is then compounded with the delisting assumption,
    ``(1 + R)(1 + delisting_return) - 1``.  ``R_t`` is NaN when ``t`` has no
    valid price or ``t + h`` is past the last date.
    """
    t, n = valid.shape
    out = np.full((t, n), np.nan)
    delisted = np.zeros((t, n), dtype=bool)
    if h >= t:
        return out, delisted
    start = slice(0, t - h)
    end = slice(h, t)
    if treatment == "reinvest":
        r = track.tri[end] / track.tri[start] - 1.0
    else:
        cd = np.cumsum(track.dividends, axis=0)
        with np.errstate(invalid="ignore", divide="ignore"):
            r = (track.carried[end] + cd[end] - cd[start]) / track.carried[start] - 1.0
    rows = np.arange(t - h)[:, None]
    gone = (track.last_valid[None, :] < rows + h) & (track.last_valid[None, :] < t - 1)
    ok = valid[start]
    gone &= ok
    if gone.any():  # delistings are few: adjust only those entries (same formula, same numbers)
        r[gone] = (1.0 + r[gone]) * (1.0 + delisting_return) - 1.0
    out[start] = np.where(ok, r, np.nan)
    delisted[start] = gone
    return out, delisted


def monthly_returns(track: PriceTrack, delisting_return: float) -> np.ndarray:
    """One-month total return earned from each date to the next (row t: t -> t+1).

    Notes
    -----
    ``m_t = TRI_{t+1} / TRI_t - 1``; in the month after the last valid price
    (when that is before the panel end) the delisting assumption is added,
    ``(1 + m)(1 + delisting_return) - 1``; afterwards the position is cash (0).
    NaN before the first valid price and on the last date.
    """
    t, n = track.tri.shape
    m = np.full((t, n), np.nan)
    if t < 2:
        return m
    base = track.tri[1:] / track.tri[:-1] - 1.0
    rows = np.arange(t - 1)[:, None]
    at_exit = (rows == track.last_valid[None, :]) & (track.last_valid[None, :] < t - 1)
    base = np.where(at_exit, (1.0 + base) * (1.0 + delisting_return) - 1.0, base)
    started = rows >= track.first_valid[None, :]
    started &= track.first_valid[None, :] >= 0
    m[:-1] = np.where(started, base, np.nan)
    return m


def level_forward_returns(level: np.ndarray, h: int) -> np.ndarray:
    """Forward h-month return of a level series (e.g. a benchmark): ``L_{t+h} / L_t - 1``."""
    level = np.asarray(level, dtype=float)
    out = np.full(level.shape, np.nan)
    if h < level.size:
        with np.errstate(invalid="ignore", divide="ignore"):
            out[:-h] = level[h:] / level[:-h] - 1.0
    return out


def excess_returns(r: np.ndarray, over: str, bench_fwd: np.ndarray | None) -> np.ndarray:
    """Subtract the equal-weight universe mean (per date) or the benchmark's forward return."""
    if over == "universe":
        return r - row_mean(r)[:, None]
    if over == "benchmark" and bench_fwd is not None:
        return r - bench_fwd[:, None]
    return r
