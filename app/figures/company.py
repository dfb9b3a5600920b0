"""Charts of one company: its signal against the universe, and its own later returns (pure functions)."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from app.figures._common import base_figure, finite_dates, fmt_num, fmt_t, message_figure, month, span
from app.figures.study import return_label, signal_label
from app.figures.theme import CHEAP, DEAR, MUTED, NEUTRAL
from core.evaluate.screen import security_history
from core.study import StudyResult

__all__ = ["signal_history_figure", "later_returns_figure"]


def _bands(result: StudyResult) -> tuple[pd.Series, pd.Series, pd.Series, pd.Series]:
    """Per date: universe median of the raw signal, the outer quantile breakpoints and the name count."""
    raw = result.signal_raw.to_numpy(dtype=float)
    uni = result.universe.reindex_like(result.signal_raw).fillna(False).to_numpy(dtype=bool)
    x = np.where(uni & np.isfinite(raw), raw, np.nan)
    n = np.isfinite(x).sum(axis=1)
    q = result.config.n_quantiles
    med = np.full(x.shape[0], np.nan)
    lo = np.full(x.shape[0], np.nan)
    hi = np.full(x.shape[0], np.nan)
    ok = n >= max(3, q)
    if ok.any():
        with np.errstate(invalid="ignore"):
            qs = np.nanquantile(x[ok], [1.0 / q, 0.5, 1.0 - 1.0 / q], axis=1)
        lo[ok], med[ok], hi[ok] = qs[0], qs[1], qs[2]
    idx = result.signal_raw.index
    return pd.Series(med, idx), pd.Series(lo, idx), pd.Series(hi, idx), pd.Series(n, idx)


def signal_history_figure(result: StudyResult, security: str) -> go.Figure:
    """The company's signal over time against the universe median and the outer quantile breakpoints."""
    title = f"{security}: {signal_label(result)} against the universe"
    if security not in result.signal_raw.columns:
        return message_figure(title, "This security is not part of the study.")
    own = result.signal_raw[security]
    dates = finite_dates(own)
    if len(dates) == 0:
        return message_figure(title, "This security never has a signal value in the study.")
    med, lo, hi, n = _bands(result)
    q = result.config.n_quantiles
    last = dates.max()
    qnow = result.quantile.loc[last, security] if security in result.quantile.columns else np.nan
    label = "" if not np.isfinite(qnow) else f"; quantile {int(q - qnow + 1)} of {q} (1 = cheapest) on {month(last)}"
    subtitle = (f"{len(dates)} month-ends with a value ({span(dates)}); universe of {fmt_num(n[n > 0].mean(), 0)} names "
                f"on average; shaded: between the 1/{q} and {q - 1}/{q} points of the universe{label}")
    fig = base_figure(title, subtitle, wide=True)
    fig.add_trace(go.Scatter(x=hi.index, y=hi.to_numpy(dtype=float), mode="lines", line=dict(width=0, color=NEUTRAL),
                             name=f"cheapest {100 / q:.0f}% above this", showlegend=False, hoverinfo="skip"))
    fig.add_trace(go.Scatter(x=lo.index, y=lo.to_numpy(dtype=float), mode="lines", line=dict(width=0, color=NEUTRAL),
                             fill="tonexty", fillcolor="rgba(173,164,150,0.25)", name="middle of the universe",
                             hoverinfo="skip"))
    fig.add_trace(go.Scatter(x=med.index, y=med.to_numpy(dtype=float), mode="lines", name="universe median",
                             line=dict(color=MUTED, width=2, dash="dash")))
    fig.add_trace(go.Scatter(x=own.index, y=own.to_numpy(dtype=float), mode="lines", name=str(security),
                             line=dict(color=CHEAP, width=3)))
    fmt = ".1%" if result.signal_name in ("earnings_yield", "dividend_yield") else ".2f"
    fig.update_yaxes(title_text=signal_label(result) + " (higher = cheaper)", tickformat=fmt)
    return fig


def later_returns_figure(result: StudyResult, security: str, horizon: int) -> go.Figure:
    """The company's own h-month forward return from each date, next to the universe median."""
    title = f"{security}: its own {horizon}-month forward returns"
    try:
        hist = security_history(result, security, horizon)
    except Exception as err:  # ConfigError: unknown security or horizon
        return message_figure(title, str(err))
    fwd = hist["forward_return"]
    dates = finite_dates(fwd)
    if len(dates) == 0:
        return message_figure(title, "No forward return can be measured for this security.")
    uni = result.universe.reindex_like(result.forward_returns[horizon]).fillna(False).to_numpy(dtype=bool)
    allf = np.where(uni, result.forward_returns[horizon].to_numpy(dtype=float), np.nan)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)   # all-NaN dates give NaN, as intended
        med = np.nanmedian(allf, axis=1)
    both = np.isfinite(hist["signal_z"].to_numpy(dtype=float)) & np.isfinite(hist["return_z"].to_numpy(dtype=float))
    n = int(both.sum())
    r = float(np.corrcoef(hist["signal_z"].to_numpy()[both], hist["return_z"].to_numpy()[both])[0, 1]) if n > 2 else np.nan
    t = r * np.sqrt((n - 2) / (1 - r * r)) if n > 2 and np.isfinite(r) and abs(r) < 1 else np.nan
    subtitle = (f"{len(dates)} dates ({span(dates)}); its signal z against its return z: r = {fmt_num(r, 2)}, "
                f"t = {fmt_t(t)} over {n} overlapping dates (one name: weak evidence)")
    fig = base_figure(title, subtitle, height=400, wide=True)
    v = fwd.to_numpy(dtype=float)
    fig.add_trace(go.Bar(x=fwd.index, y=v, name=str(security),
                         marker_color=[CHEAP if x >= 0 else DEAR for x in np.nan_to_num(v)],
                         hovertemplate="%{x|%b %Y}: %{y:.1%}<extra></extra>"))
    fig.add_trace(go.Scatter(x=fwd.index, y=med, mode="lines", name="universe median", line=dict(color=MUTED, width=2.2)))
    fig.update_yaxes(title_text=return_label(result, horizon), tickformat=".0%")
    return fig
