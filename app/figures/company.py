"""Charts of one company: its signal against the universe, and its own later returns (pure functions)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from valuesift.app.escape import chart_text
from valuesift.app.figures.common import base_figure, finite_dates, fmt_num, fmt_t, message_figure, month, span
from valuesift.app.figures.study import return_label, signal_label
from valuesift.app.figures.theme import CHEAP, DEAR, MUTED, diverging
from valuesift.app.words import quantile_words, t_name
from valuesift.core.reporting.screen import security_history
from valuesift.core.result import StudyResult

__all__ = ["signal_history_figure", "later_returns_figure"]


def _bands(result: StudyResult) -> tuple[pd.Series, pd.DataFrame, pd.Series]:
    """Per date: universe median of the raw signal, the quantile breakpoints and the name count (result fields)."""
    b = result.signal_bands
    cols = [c for c in b.columns if str(c).startswith("b")]
    return b["median"], b[cols], b["n_names"]


def _rgba(hex_colour: str, alpha: float) -> str:
    h = hex_colour.lstrip("#")
    return f"rgba({int(h[0:2], 16)},{int(h[2:4], 16)},{int(h[4:6], 16)},{alpha})"


def signal_history_figure(result: StudyResult, security: str) -> go.Figure:
    """The company's signal over time against the universe median and the quantile bands."""
    title = f"{chart_text(security)}: {chart_text(signal_label(result))} against the universe"
    if security not in result.signal_raw.columns:
        return message_figure(title, "This security is not part of the study.")
    own = result.signal_raw[security]
    dates = finite_dates(own)
    if len(dates) == 0:
        return message_figure(title, "This security never has a signal value in the study.")
    med, bps, n = _bands(result)
    q = result.config.n_quantiles
    last = dates.max()
    qnow = result.quantile.loc[last, security] if security in result.quantile.columns else np.nan
    # the study's one numbering (1 = dearest .. n = cheapest), as on the page's header and the Screen
    label = "" if not np.isfinite(qnow) else f"; quantile {quantile_words(qnow, q)} on {month(last)}"
    subtitle = (f"{len(dates)} month-ends with a value ({span(dates)}); universe of "
                f"{fmt_num(result.coverage.get('mean_universe_names'), 0)} names "
                f"on average; bands: the universe's {q} quantiles (blue = cheaper, brown = dearer){label}")
    fig = base_figure(title, subtitle, wide=True)
    colours = diverging(q)
    # The inner quantiles as filled bands between successive breakpoints (the outer two are open-ended).
    for k in range(bps.shape[1]):
        y = bps.iloc[:, k].to_numpy(dtype=float)
        fill = None if k == 0 else "tonexty"
        fig.add_trace(go.Scatter(x=bps.index, y=y, mode="lines", line=dict(width=0.6, color="rgba(120,112,100,0.5)"),
                                 fill=fill, fillcolor=_rgba(colours[k], 0.16), hoverinfo="skip",
                                 name=f"quantile bands ({q})", showlegend=k == 1, legendgroup="bands"))
    fig.add_trace(go.Scatter(x=med.index, y=med.to_numpy(dtype=float), mode="lines", name="universe median",
                             line=dict(color=MUTED, width=2, dash="dash")))
    fig.add_trace(go.Scatter(x=own.index, y=own.to_numpy(dtype=float), mode="lines", name=chart_text(security),
                             line=dict(color=CHEAP, width=3)))
    fmt = ".1%" if result.signal_name in ("earnings_yield", "dividend_yield") else ".2f"
    fig.update_yaxes(title_text=chart_text(signal_label(result)) + " (higher = cheaper)", tickformat=fmt)
    return fig


def later_returns_figure(result: StudyResult, security: str, horizon: int) -> go.Figure:
    """The company's own h-month forward return from each date, next to the universe median."""
    title = f"{chart_text(security)}: its own {horizon}-month forward returns"
    try:
        hist = security_history(result, security, horizon)
    except Exception as err:  # ConfigError: unknown security or horizon
        return message_figure(title, chart_text(err))
    fwd = hist["forward_return"]
    dates = finite_dates(fwd)
    if len(dates) == 0:
        return message_figure(title, "No forward return can be measured for this security.")
    med = result.forward_return_median[horizon].to_numpy(dtype=float)
    r, t, n = hist.attrs["correlation"], hist.attrs["correlation_t"], hist.attrs["n_pairs"]
    periods = hist.attrs["independent_periods"]
    if hist.attrs["too_short"]:
        judged = f"too short to judge ({fmt_num(periods, 1)} independent periods)"
    else:
        judged = (f"{t_name(hist.attrs['correlation_t_method'])} = {fmt_t(t)}, about {fmt_num(periods, 0)} "
                  "independent periods; one name: weak evidence at best")
    subtitle = (f"{len(dates)} dates ({span(dates)}); its signal z against its return z: r = {fmt_num(r, 2)}, "
                f"{judged}")
    fig = base_figure(title, subtitle, height=400, wide=True)
    v = fwd.to_numpy(dtype=float)
    fig.add_trace(go.Bar(x=fwd.index, y=v, name=chart_text(security),
                         marker_color=[CHEAP if x >= 0 else DEAR for x in np.nan_to_num(v)],
                         hovertemplate="%{x|%b %Y}: %{y:.1%}<extra></extra>"))
    fig.add_trace(go.Scatter(x=fwd.index, y=med, mode="lines", name="universe median", line=dict(color=MUTED, width=2.2)))
    fig.update_yaxes(title_text=return_label(result, horizon), tickformat=".0%")
    return fig
