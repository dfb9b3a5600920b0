"""Valuation signals from the panel, point in time.

A value dated ``t`` uses only panel rows dated ``<= t`` (EPS rows dated ``<= t - lag``).
Arrays are (dates x securities) ``float64`` with ``NaN`` for "not available".
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from valuesift.core.errors import ConfigError
from valuesift.core.panel import Panel

__all__ = [
    "RawSignal", "lagged_eps", "months_since_valid", "earnings_yield", "pe_ratio", "trailing_dividends",
    "dividend_yield", "raw_signal", "orient_lower_is_cheaper",
]


@dataclass(frozen=True)
class RawSignal:
    """A signal on the panel grid: ``values`` (dates x securities) and its orientation.

    ``sign`` is +1 when a higher value means cheaper, -1 otherwise; the
    oriented signal is ``sign * values``.
    """

    name: str
    values: np.ndarray
    sign: float


def lagged_eps(panel: Panel, lag_months: int, max_age_months: int) -> np.ndarray:
    """EPS usable at each month-end after the reporting lag.

    Notes
    -----
    ``EPS*_t = EPS_{s}`` for the latest stamp ``s <= t - lag`` with a finite
    value, used for at most ``max_age_months`` months after ``s + lag``.
    Only past rows are read, so the value dated ``t`` cannot see data after ``t``.
    """
    if panel.eps is None:
        raise ConfigError(
            "The study needs earnings (EPS) but the panel has none.",
            hint="Load an earnings file, or choose the dividend yield or your own signal under 'Signal' (--signal).",
        )
    eps = panel.eps.reindex(index=panel.prices.index, columns=panel.prices.columns).astype(float)
    shifted = eps.shift(lag_months)
    return shifted.ffill(limit=max_age_months).to_numpy(dtype=float, copy=True)


def months_since_valid(valid: np.ndarray) -> np.ndarray:
    """Months since the last ``True`` at or before each date (NaN if never)."""
    t = valid.shape[0]
    idx = np.where(valid, np.arange(t)[:, None], -1)
    last = np.maximum.accumulate(idx, axis=0)
    return np.where(last >= 0, np.arange(t)[:, None] - last, np.nan).astype(float)


def earnings_yield(price: np.ndarray, eps: np.ndarray) -> np.ndarray:
    """Earnings yield ``EPS / P`` (defined through zero and negative EPS).

    Notes
    -----
    ``EY = EPS / P`` for a finite, positive price.  A loss-maker gets a negative
    yield and ranks dearest; nothing is dropped (common practice; avoids the
    P/E ranking trap where a negative P/E sorts as "cheapest").

    Examples
    --------
    >>> import numpy as np
    >>> earnings_yield(np.array([[50.0, 50.0]]), np.array([[2.5, -1.0]]))
    array([[ 0.05, -0.02]])
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        ok = np.isfinite(price) & (price > 0) & np.isfinite(eps)
        return np.where(ok, eps / np.where(ok, price, 1.0), np.nan)


def pe_ratio(price: np.ndarray, eps: np.ndarray) -> np.ndarray:
    """P/E for display: ``P / EPS`` where EPS > 0, NaN ("not meaningful") where EPS <= 0.

    Examples
    --------
    >>> import numpy as np
    >>> pe_ratio(np.array([[50.0, 50.0]]), np.array([[2.5, -1.0]]))
    array([[20., nan]])
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        ok = np.isfinite(price) & (price > 0) & np.isfinite(eps) & (eps > 0)
        return np.where(ok, price / np.where(ok, eps, 1.0), np.nan)


def trailing_dividends(div: np.ndarray) -> np.ndarray:
    """Trailing-twelve-month dividends per share at each month-end.

    Notes
    -----
    ``TTM_t = sum of dividends with ex-date month in (t-11, ..., t)`` — the 12
    months up to and including the month of ``t``.  The first 11 dates of the
    panel have an incomplete window and are NaN.
    """
    c = np.cumsum(np.nan_to_num(div, nan=0.0), axis=0)
    out = np.full_like(c, np.nan)
    if c.shape[0] >= 12:
        out[11:] = c[11:]
        out[12:] -= c[:-12]
    return out


def dividend_yield(price: np.ndarray, div: np.ndarray) -> np.ndarray:
    """Trailing-twelve-month dividend yield ``TTM dividends / P_t``.

    Examples
    --------
    >>> import numpy as np
    >>> d = np.zeros((12, 1)); d[[2, 5, 8, 11], 0] = [0.25, 0.25, 0.30, 0.30]
    >>> round(float(dividend_yield(np.full((12, 1), 50.0), d)[11, 0]), 12)
    0.022
    """
    ttm = trailing_dividends(div)
    with np.errstate(invalid="ignore", divide="ignore"):
        ok = np.isfinite(price) & (price > 0) & np.isfinite(ttm)
        return np.where(ok, ttm / np.where(ok, price, 1.0), np.nan)


def raw_signal(panel: Panel, name: str, lag_months: int, max_age_months: int) -> RawSignal:
    """The named signal on the panel grid (built-in or a user signal)."""
    price = panel.prices.to_numpy(dtype=float, copy=True)
    if name == "earnings_yield":
        return RawSignal(name, earnings_yield(price, lagged_eps(panel, lag_months, max_age_months)), 1.0)
    if name == "dividend_yield":
        if panel.dividends is None:
            raise ConfigError(
                "The signal 'dividend_yield' needs dividend events but the panel has none.",
                hint="Load a dividends file or choose another signal.",
            )
        div = panel.dividend_matrix().to_numpy(dtype=float, copy=True)
        return RawSignal(name, dividend_yield(price, div), 1.0)
    for us in panel.signals:
        if us.name == name:
            vals = us.values.reindex(index=panel.prices.index, columns=panel.prices.columns)
            arr = vals.to_numpy(dtype=float, copy=True)
            with np.errstate(invalid="ignore"):
                arr = np.where(np.isfinite(arr), arr, np.nan)
            return RawSignal(name, arr, 1.0 if us.higher_is_cheaper else -1.0)
    known = ["earnings_yield", "dividend_yield", "composite"] + [s.name for s in panel.signals]
    raise ConfigError(
        f"Study setting 'signal' (or 'composite_of') names {name!r}, which this panel does not have.",
        hint="Allowed: " + ", ".join(repr(k) for k in known) + ".",
    )


def orient_lower_is_cheaper(
    rs: RawSignal, rule: str, universe: np.ndarray, *, require_positive: bool = True
) -> tuple[RawSignal, int]:
    """Make a lower-is-cheaper signal safe to rank: values of 0 or below are set aside or the reciprocal is used.

    Parameters
    ----------
    rs : RawSignal
        ``sign == -1`` marks a lower-is-cheaper signal (a ratio such as P/E); others pass unchanged.
    rule : {"set_aside", "reciprocal"}
        ``set_aside``: values <= 0 become NaN (not meaningful: a negative P/E is not "very cheap").
        ``reciprocal``: study ``1 / x`` with higher = cheaper (P/E becomes E/P; loss-makers keep
        their order and rank dearest; a value of exactly 0 has no reciprocal and is set aside).
    universe : ndarray (D x S, bool)
        Values outside the universe are not counted.
    require_positive : bool, default True
        Raise when no value is above 0 (a block of a partitioned study passes False:
        the whole-panel check is the engine's).

    Returns
    -------
    (RawSignal, int)
        The signal to study and the number of universe values set aside.

    Raises
    ------
    ConfigError
        When the signal has no value above 0 in the universe (nothing meaningful to rank).

    Notes
    -----
    Reference case 14 of the project's check list: P/E [10, 20, -5] sorted ascending puts the
    loss-maker first, the classic ranking trap; its reciprocal [0.1, 0.05, -0.2] does not.

    Examples
    --------
    >>> pe = RawSignal("pe", np.array([[10.0, 20.0, -5.0]]), -1.0)
    >>> u = np.ones((1, 3), dtype=bool)
    >>> rs, n = orient_lower_is_cheaper(pe, "set_aside", u)
    >>> rs.values.tolist(), rs.sign, n
    ([[10.0, 20.0, nan]], -1.0, 1)
    >>> rs, n = orient_lower_is_cheaper(pe, "reciprocal", u)
    >>> rs.values.tolist(), rs.sign, n
    ([[0.1, 0.05, -0.2]], 1.0, 0)
    """
    if rs.sign > 0:
        return rs, 0
    x = rs.values
    fin = np.isfinite(x) & universe
    if require_positive and not (fin & (x > 0)).any():
        raise ConfigError(
            f"The signal {rs.name!r} is lower-is-cheaper but has no value above 0 in the universe: nothing on it "
            "can be ranked as cheap.",
            hint="Check the file (a sign error?), or mark the signal higher-is-cheaper if that is what it is.",
            setting="signal")
    if rule == "reciprocal":
        with np.errstate(divide="ignore", invalid="ignore"):
            inv = np.where(np.isfinite(x) & (x != 0), 1.0 / np.where(x != 0, x, 1.0), np.nan)
        return RawSignal(rs.name, inv, 1.0), int((fin & (x == 0)).sum())
    aside = fin & (x <= 0)
    return RawSignal(rs.name, np.where(np.isfinite(x) & (x > 0), x, np.nan), rs.sign), int(aside.sum())
