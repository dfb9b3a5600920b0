"""Valuation signals, the universe per date, and cross-sectional cleaning.

Everything here is point-in-time: a value dated ``t`` uses only panel rows
dated ``<= t`` (EPS rows dated ``<= t - lag``).  Arrays are (dates x securities)
``float64`` with ``NaN`` for "not available".
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from valuesift.core._typing import OutlierRule, SmallSectorRule, ZScoreMethod
from valuesift.core.errors import ConfigError
from valuesift.core.panel import Panel
from valuesift.core.stats import clip_robust_rows, winsorise_rows, zscore_rows

__all__ = [
    "NO_SECTOR",
    "RawSignal",
    "lagged_eps",
    "months_since_valid",
    "earnings_yield",
    "pe_ratio",
    "trailing_dividends",
    "dividend_yield",
    "raw_signal",
    "base_universe",
    "clean_values",
    "standardise",
    "sector_codes",
    "sector_zscore",
    "composite_zmean",
]

#: Sector label given to securities the sector file does not mention.
NO_SECTOR = "(no sector)"


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
            hint="Load an earnings file, or choose dividend_yield or a user signal as 'signal'.",
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


def base_universe(
    valid_price: np.ndarray,
    securities: pd.Index,
    *,
    sectors: pd.Series | None,
    holdings: pd.Series | None,
    rule: str,
    keep_sectors: tuple[str, ...],
    min_history: int,
) -> np.ndarray:
    """Universe membership per date from data valid at that date.

    Notes
    -----
    A name is in on date ``t`` when it has a valid price at ``t``, passes the
    static filter (sector list or holdings), and has at least ``min_history``
    valid month-end prices strictly before ``t``.  Late listers enter when they
    qualify and delisted names leave after their last valid price: nobody is
    dropped for the whole study (no survivorship bias).
    """
    keep = np.ones(len(securities), dtype=bool)
    if rule == "sectors":
        if sectors is None:
            raise ConfigError(
                "Study setting 'universe' is 'sectors' but the panel has no sector data.",
                hint="Load a sectors file or use universe='all'.",
            )
        sec = sectors.reindex(securities)
        keep &= sec.isin(list(keep_sectors)).to_numpy()
    elif rule == "holdings":
        if holdings is None:
            raise ConfigError(
                "Study setting 'universe' is 'holdings' but the panel has no holdings.",
                hint="Load a holdings file or use universe='all'.",
            )
        keep &= np.asarray(securities.isin(list(holdings.index)))
    u = valid_price & keep[None, :]
    if min_history > 0:
        before = np.cumsum(valid_price, axis=0) - valid_price
        u &= before >= min_history
    return np.asarray(u, dtype=bool)


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

