"""The notebook way: forward total returns and per-date IC without vectorised kernels.

This is the straightforward code an analyst would write in a notebook, kept
only as the yardstick for the engine's speed-up (it is never used by
ValueSift itself):

* a Python function applied per security walks that security's month-end
  prices, looks each date's dividend up in a dict of per-security Series,
  builds a total-return index and reads the h-month forward returns off it;
* a loop over dates correlates the signal with the forward return
  (``scipy.stats.spearmanr`` and ``scipy.stats.pearsonr``, the reference
  implementations).

It follows the engine's documented rules (``core.returns.price_track`` and
``forward_returns``: dividends reinvested at the ex-date month-end, returns
to the last valid price over a gap, delisting assumption compounded on) so the
two must agree; :func:`compare` asserts that to 1e-9.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from valuesift.core.study.steps import per_horizon
from valuesift.core.correlation.ic import ic_by_date
from valuesift.core.panel import Panel
from valuesift.core.returns import forward_returns, price_track
from valuesift.core.correlation.ranks import row_sort

__all__ = ["dividend_dict", "notebook_forward_ic", "engine_forward_ic", "compare", "AGREEMENT_TOL"]

#: Largest allowed absolute difference between the notebook and the engine.
AGREEMENT_TOL = 1e-9


def dividend_dict(panel: Panel) -> dict[str, pd.Series]:
    """Dividends per security as a dict of Series keyed by ex-date month-end (summed per month)."""
    out: dict[str, pd.Series] = {}
    if panel.dividends is None:
        return out
    d = panel.dividends
    me = d["ex_date"].dt.to_period("M").dt.to_timestamp(how="end").dt.normalize()
    for sec, grp in d.assign(month=me).groupby("security"):
        out[str(sec)] = grp.groupby("month")["amount"].sum()
    return out


def _security_forward_returns(prices: pd.Series, divs: pd.Series | None, horizons: tuple[int, ...],
                              delisting_return: float) -> dict[int, list[float]]:
    """One security: total-return index by a loop over dates, then forward returns per horizon."""
    vals = prices.tolist()
    valid = [(p == p) and p > 0 for p in vals]  # p == p is False for NaN
    if not any(valid):
        return {h: [math.nan] * len(vals) for h in horizons}
    first = valid.index(True)
    last = len(valid) - 1 - valid[::-1].index(True)
    tri: list[float] = []
    level, carried = 1.0, math.nan
    for i, (date, p) in enumerate(prices.items()):
        new = p if valid[i] else carried
        if i > first and carried == carried:
            d = 0.0
            if divs is not None and i <= last:
                d = float(divs.get(date, 0.0))  # the dividend looked up for this date
            level *= (new + d) / carried
        carried = new
        tri.append(level)
    t = len(vals)
    out: dict[int, list[float]] = {}
    for h in horizons:
        col = []
        for i in range(t):
            if not valid[i] or i + h >= t:
                col.append(math.nan)
                continue
            r = tri[i + h] / tri[i] - 1.0
            if last < i + h and last < t - 1:  # delisted inside the horizon
                r = (1.0 + r) * (1.0 + delisting_return) - 1.0
            col.append(r)
        out[h] = col
    return out


def notebook_forward_ic(prices: pd.DataFrame, dividends: dict[str, pd.Series], signal: pd.DataFrame,
                        universe: pd.DataFrame, horizons: tuple[int, ...], min_breadth: int,
                        delisting_return: float = 0.0) -> dict[str, Any]:
    """Forward returns (per security) and rank / Pearson IC (per date), the notebook way."""
    per_sec = {sec: _security_forward_returns(prices[sec], dividends.get(sec), horizons, delisting_return)
               for sec in prices.columns}
    fwd = {h: pd.DataFrame({sec: per_sec[sec][h] for sec in prices.columns}, index=prices.index).where(universe)
           for h in horizons}
    rank_ic: dict[int, list[float]] = {}
    pearson_ic: dict[int, list[float]] = {}
    breadth: dict[int, list[int]] = {}
    for h in horizons:
        rank_ic[h], pearson_ic[h], breadth[h] = [], [], []
        for date in signal.index:
            x = signal.loc[date]
            y = fwd[h].loc[date]
            ok = x.notna() & y.notna()
            n = int(ok.sum())
            breadth[h].append(n)
            if n < max(min_breadth, 3):
                rank_ic[h].append(math.nan)
                pearson_ic[h].append(math.nan)
                continue
            rank_ic[h].append(float(stats.spearmanr(x[ok], y[ok]).statistic))
            pearson_ic[h].append(float(stats.pearsonr(x[ok], y[ok]).statistic))
    return {"fwd": fwd, "rank_ic": rank_ic, "pearson_ic": pearson_ic, "breadth": breadth}


def engine_forward_ic(price: np.ndarray, valid: np.ndarray, div: np.ndarray, universe: np.ndarray,
                      z: np.ndarray, horizons: tuple[int, ...], min_breadth: int,
                      delisting_return: float = 0.0, threads: bool = True) -> dict[str, Any]:
    """The same outputs from the engine's kernels, called as ``core._study_steps`` calls them."""
    track = price_track(price, valid, div)
    cells = price.size if threads else 0  # 0 cells: the per-horizon helper stays in this thread

    def fwd_one(h: int) -> np.ndarray:
        return np.where(universe, forward_returns(track, valid, h, "reinvest", delisting_return)[0], np.nan)

    fwd = dict(zip(horizons, per_horizon(fwd_one, horizons, cells)))
    zr = row_sort(z)  # as the study does
    ics = per_horizon(lambda h: ic_by_date(z, fwd[h], min_breadth, zr), horizons, cells)
    return {"fwd": fwd, "rank_ic": {h: ics[j][0] for j, h in enumerate(horizons)},
            "pearson_ic": {h: ics[j][1] for j, h in enumerate(horizons)},
            "breadth": {h: ics[j][2] for j, h in enumerate(horizons)}}


def compare(notebook: dict[str, Any], engine: dict[str, Any], tol: float = AGREEMENT_TOL) -> dict[str, float]:
    """Largest absolute differences; raises AssertionError beyond ``tol`` or on a NaN-pattern mismatch."""
    worst = {"forward_returns": 0.0, "rank_ic": 0.0, "pearson_ic": 0.0}
    for h, frame in notebook["fwd"].items():
        a, b = frame.to_numpy(dtype=float), engine["fwd"][h]
        assert np.array_equal(np.isnan(a), np.isnan(b)), f"forward returns at {h} m: missing values differ"
        worst["forward_returns"] = max(worst["forward_returns"], float(np.nanmax(np.abs(a - b), initial=0.0)))
        for key in ("rank_ic", "pearson_ic"):
            x, y = np.asarray(notebook[key][h], dtype=float), engine[key][h]
            assert np.array_equal(np.isnan(x), np.isnan(y)), f"{key} at {h} m: missing values differ"
            worst[key] = max(worst[key], float(np.nanmax(np.abs(x - y), initial=0.0)))
        assert np.array_equal(np.asarray(notebook["breadth"][h]), engine["breadth"][h]), f"breadth at {h} m differs"
    for key, v in worst.items():
        assert v <= tol, f"{key}: notebook and engine differ by {v:.3g} > {tol:g}"
    return worst


def tight_forward_ic(price: np.ndarray, universe: np.ndarray, z: np.ndarray, horizons: tuple[int, ...],
                     min_breadth: int) -> dict[int, np.ndarray]:
    """A tight numpy kernel for the gap the issue asks about: price-only forward returns and rank IC.

    One ``scipy.stats.rankdata`` per array pair (average ranks over the common
    names) and one vectorised Pearson per horizon.  It does less than the engine
    (no dividends, no delisting rule, no Pearson IC, no Fama-MacBeth slope), so
    the gap it shows is an upper bound on what the engine could still gain.
    """
    from scipy.stats import rankdata

    out: dict[int, np.ndarray] = {}
    for h in horizons:
        f = np.full_like(price, np.nan)
        with np.errstate(invalid="ignore", divide="ignore"):
            f[:-h] = price[h:] / price[:-h] - 1.0
        f = np.where(universe, f, np.nan)
        both = np.isfinite(z) & np.isfinite(f)
        rx = rankdata(np.where(both, z, np.nan), axis=1, nan_policy="omit")
        ry = rankdata(np.where(both, f, np.nan), axis=1, nan_policy="omit")
        n = both.sum(axis=1)
        mx = np.nanmean(np.where(both, rx, np.nan), axis=1, keepdims=True) if both.any() else 0.0
        my = np.nanmean(np.where(both, ry, np.nan), axis=1, keepdims=True) if both.any() else 0.0
        dx = np.where(both, rx - mx, 0.0)
        dy = np.where(both, ry - my, 0.0)
        with np.errstate(invalid="ignore", divide="ignore"):
            r = (dx * dy).sum(axis=1) / np.sqrt((dx * dx).sum(axis=1) * (dy * dy).sum(axis=1))
        out[h] = np.where(n < min_breadth, np.nan, r)
    return out
