"""Charts of one study's evaluation: ICs, quantiles, spread, scatter, Fama-MacBeth.

Every function is pure: a :class:`core.study.StudyResult` (plus a choice such
as the horizon) in, a plotly figure out.  Each title or subtitle states the
sample (dates and names) and the t-statistics, so a chart of noise is never
read as evidence.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from valuesift.app.escape import chart_text, chart_texts
from valuesift.app.figures.common import base_figure, finite_dates, fmt_num, fmt_pct, fmt_t, message_figure, month, span
from valuesift.app.figures.theme import CHEAP, MUTED, SERIES, diverging
from valuesift.app.words import SIGNAL_WORDS, t_name
from valuesift.core.result import StudyResult
from valuesift.core.study.derived import POOLED_BINS

__all__ = [
    "signal_label",
    "return_label",
    "ic_by_horizon_figure",
    "ic_over_time_figure",
    "quantile_returns_figure",
    "spread_over_time_figure",
    "scatter_figure",
    "fm_slopes_figure",
]



def signal_label(result: StudyResult) -> str:
    """The evaluated signal in words (with 'within sector' when sector-neutral)."""
    name = SIGNAL_WORDS.get(result.signal_name, result.signal_name)
    return f"{name}, within sector" if result.config.sector_neutral else name


def return_label(result: StudyResult, horizon: int) -> str:
    """How the forward return is measured (total return, excess or not)."""
    kind = {"none": "total return", "universe": "return over the universe mean",
            "benchmark": "return over the benchmark"}[result.config.excess_over]
    return f"{horizon}-month forward {kind}"


def _ic_row(result: StudyResult, horizon: int) -> pd.Series:
    return result.ic_summary.loc[horizon]


def ic_by_horizon_figure(result: StudyResult) -> go.Figure:
    """Mean rank IC per horizon with its 95 % headline interval; t and sample on each bar."""
    s = result.ic_summary
    title = f"Rank IC by horizon: {chart_text(signal_label(result))}"
    if s.empty or not np.isfinite(s["mean_ic"].to_numpy(dtype=float)).any():
        return message_figure(title, "No horizon has enough dates for an information coefficient.")
    hs = [int(h) for h in s.index]
    labels = [f"{h} m" for h in hs]
    mean = s["mean_ic"].to_numpy(dtype=float)
    lo = s["ci_low"].to_numpy(dtype=float)
    hi = s["ci_high"].to_numpy(dtype=float)
    used = [finite_dates(result.rank_ic[h]) for h in hs]
    all_dates = pd.DatetimeIndex(sorted(set().union(*[set(u) for u in used])))
    names = fmt_num(result.coverage.get("mean_ic_breadth"), 0)
    subtitle = (f"Sample {span(all_dates)}, about {names} names a date; bars: mean of monthly rank ICs, "
                f"whiskers: 95% interval (Hansen-Hodrick above 1 month, Newey-West at 1)")
    fig = base_figure(title, subtitle)
    colors = [CHEAP if m >= 0 else SERIES["dearest"] for m in mean]
    fig.add_trace(go.Bar(
        x=labels, y=mean, marker_color=colors, name="mean rank IC",
        error_y=dict(type="data", symmetric=False, array=np.nan_to_num(hi - mean),
                     arrayminus=np.nan_to_num(mean - lo), color=MUTED, thickness=1.6, width=8),
        hovertemplate="%{x}: mean IC %{y:.3f}<extra></extra>",
    ))
    top = np.nanmax(np.concatenate([hi, mean, [0.0]]))
    bottom = np.nanmin(np.concatenate([lo, mean, [0.0]]))
    pad = 0.08 * max(top - bottom, 1e-3)
    ticks = []
    for lab, h in zip(labels, hs):
        row = _ic_row(result, h)
        ticks.append(f"<b>{lab}</b><br>t={fmt_num(row['t_hac'], 1)}<br>n={int(row['n_dates'])}")
    fig.update_xaxes(tickmode="array", tickvals=labels, ticktext=ticks, title_text="horizon; t; dates")
    fig.update_yaxes(title_text="rank IC", range=[bottom - pad, top + pad], zeroline=True)
    fig.update_layout(showlegend=False)
    return fig


def ic_over_time_figure(result: StudyResult, horizon: int) -> go.Figure:
    """Monthly rank IC for one horizon with 12- and 36-date rolling means."""
    title = f"Rank IC over time, {horizon}-month horizon"
    ic = result.rank_ic[horizon]
    dates = finite_dates(ic)
    if len(dates) == 0:
        return message_figure(title, f"No date has an IC at the {horizon}-month horizon.")
    row = _ic_row(result, horizon)
    subtitle = (f"Sample {span(dates)}, {len(dates)} dates, mean {fmt_num(row['mean_breadth'], 0)} names; "
                f"mean IC {fmt_num(row['mean_ic'])}, {t_name(row['se_method'])} = {fmt_t(row['t_hac'])} "
                f"({int(row['hac_lags'])} lags); share above 0: {fmt_pct(row['hit_share'], 0)}")
    fig = base_figure(title, subtitle)
    fig.add_trace(go.Bar(x=ic.index, y=ic.to_numpy(dtype=float), name="monthly rank IC",
                         marker_color="#9fb9d6", hovertemplate="%{x|%b %Y}: %{y:.3f}<extra></extra>"))
    for (h, w), col in result.rolling_ic.items():
        if int(h) != int(horizon):
            continue
        colour = SERIES["rolling_short"] if int(w) <= 12 else SERIES["rolling_long"]
        fig.add_trace(go.Scatter(x=col.index, y=col.to_numpy(dtype=float), mode="lines",
                                 name=f"rolling mean, {int(w)} dates", line=dict(color=colour, width=2.6)))
    fig.add_hline(y=float(row["mean_ic"]), line=dict(color=MUTED, dash="dot", width=1.5))
    fig.update_yaxes(title_text="rank IC")
    return fig


def quantile_returns_figure(result: StudyResult, horizon: int, *, annualised: bool = False) -> go.Figure:
    """Mean forward return by quantile, dearest (1) to cheapest (n), with the spread's t."""
    table = result.quantile_mean_annualised if annualised else result.quantile_mean
    title = f"Mean {horizon}-month forward return by quantile"
    if horizon not in table.index or not np.isfinite(table.loc[horizon].to_numpy(dtype=float)).any():
        return message_figure(title, "No date has returns for every quantile at this horizon.")
    vals = table.loc[horizon].to_numpy(dtype=float)
    qs = [int(q) for q in table.columns]
    n = len(qs)
    names = [f"{q}<br>{'dearest' if q == 1 else 'cheapest' if q == n else ''}" for q in qs]
    ss = result.spread_summary.loc[horizon]
    per_q = fmt_num(result.spread_facts.loc[horizon, "names_per_quantile"], 0)
    dates = finite_dates(result.spread[horizon])
    subtitle = (f"Sample {span(dates)}, {int(ss['n_dates'])} dates, about {per_q} names per quantile; "
                f"cheapest minus dearest {fmt_pct(ss['mean'])} per {horizon} m, {t_name(ss['se_method'])} = {fmt_t(ss['t_hac'])}; "
                f"monotonicity {fmt_num(ss['monotonicity'], 2)}")
    fig = base_figure(title + (" (annualised)" if annualised else ""), subtitle)
    fig.add_trace(go.Bar(x=names, y=vals, marker_color=diverging(n), name="mean return",
                         # whole percents above six bars: a label then fits its bar's width without touching
                         # the next one's
                         text=[fmt_pct(v, 1 if n <= 6 else 0) for v in vals], textposition="outside",
                         hovertemplate="quantile %{x}: %{y:.2%}<extra></extra>"))
    fig.update_yaxes(title_text=return_label(result, horizon), tickformat=".1%")
    fig.update_xaxes(title_text="quantile of the signal (1 = dearest)")
    fig.update_layout(showlegend=False, uniformtext=dict(minsize=13, mode="show"))
    return fig


def spread_over_time_figure(result: StudyResult, horizon: int) -> go.Figure:
    """Cheapest-minus-dearest forward return per formation date, with a 12-date rolling mean."""
    title = f"Cheapest minus dearest, {horizon}-month forward return"
    s = result.spread[horizon]
    dates = finite_dates(s)
    if len(dates) == 0:
        return message_figure(title, "No date has both the cheapest and the dearest quantile filled.")
    ss = result.spread_summary.loc[horizon]
    subtitle = (f"Sample {span(dates)}, {len(dates)} formation dates; mean {fmt_pct(ss['mean'])}, "
                f"{t_name(ss['se_method'])} = {fmt_t(ss['t_hac'])} ({int(ss['hac_lags'])} lags), "
                f"annualised {fmt_pct(ss['mean_annualised'], 1)}")
    fig = base_figure(title, subtitle)
    v = s.to_numpy(dtype=float)
    fig.add_trace(go.Bar(x=s.index, y=v, name="spread at each date",
                         marker_color=[CHEAP if x >= 0 else SERIES["dearest"] for x in np.nan_to_num(v)],
                         hovertemplate="%{x|%b %Y}: %{y:.2%}<extra></extra>"))
    for (h, w), roll in result.rolling_spread.items():
        if int(h) != int(horizon) or int(w) != 12:
            continue
        fig.add_trace(go.Scatter(x=roll.index, y=roll.to_numpy(dtype=float), mode="lines",
                                 name="rolling mean, 12 dates", line=dict(color=SERIES["rolling_long"], width=2.6)))
    fig.update_yaxes(title_text="cheapest minus dearest", tickformat=".0%")
    return fig


def scatter_figure(result: StudyResult, horizon: int, date: object | None = None) -> go.Figure:
    """Signal z-score against forward return on one date, or pooled over all dates in bins.

    The fitted least-squares line (``cross_section_fit`` or ``pooled_fit``) is drawn; the IC and its t
    are written on the chart.  The pooled view draws the result's ``pooled_bins``.
    """
    fwd = result.forward_returns[horizon]
    z = result.signal_z.reindex(index=fwd.index, columns=fwd.columns)
    if date is not None:
        d = pd.Timestamp(date)  # type: ignore[arg-type]
        title = f"Signal against {horizon}-month forward return on {month(d)}"
        if d not in z.index:
            return message_figure(title, f"{month(d)} is not a date of this study.")
        x, y = z.loc[d].to_numpy(dtype=float), fwd.loc[d].to_numpy(dtype=float)
        ok = np.isfinite(x) & np.isfinite(y)
        names = np.asarray(z.columns.astype(str))[ok]
        x, y = x[ok], y[ok]
        if x.size < 3:
            return message_figure(title, f"Only {x.size} names have both a signal and a forward return on {month(d)}.")
        fit = result.cross_section_fit[horizon].loc[d]
        a, b, t = float(fit["intercept"]), float(fit["slope"]), float(fit["t_slope"])
        ic = result.rank_ic.loc[d, horizon] if d in result.rank_ic.index else np.nan
        subtitle = (f"{x.size} names on one date; rank IC {fmt_num(ic)}; fitted slope "
                    f"{fmt_pct(b)} per z, OLS t = {fmt_t(t)} (one cross-section)")
        fig = base_figure(title, subtitle)
        fig.add_trace(go.Scatter(x=x, y=y, mode="markers", name="names", text=chart_texts(names),
                                 marker=dict(color=CHEAP, size=9, opacity=0.7, line=dict(width=0.5, color="white")),
                                 hovertemplate="%{text}: z %{x:.2f}, return %{y:.2%}<extra></extra>"))
        label = f"rank IC = {fmt_num(ic)}<br>slope t = {fmt_t(t)}"
    else:
        title = f"Signal against {horizon}-month forward return, all dates pooled"
        pf = result.pooled_fit.loc[horizon]
        n_pairs = int(pf["n_pairs"])
        if n_pairs < 3 * POOLED_BINS:
            return message_figure(title, f"Only {n_pairs} signal/return pairs over all dates.")
        a, b = float(pf["intercept"]), float(pf["slope"])
        binned = result.pooled_bins[horizon]
        bx = binned["x_mean"].to_numpy(dtype=float)
        by = binned["y_mean"].to_numpy(dtype=float)
        row = _ic_row(result, horizon)
        n_dates = int(finite_dates(result.rank_ic[horizon]).size)
        subtitle = (f"{n_pairs:,} pairs over {n_dates} dates in {len(binned)} equal-count bins; "
                    f"mean rank IC {fmt_num(row['mean_ic'])}, {t_name(row['se_method'])} = {fmt_t(row['t_hac'])}")
        fig = base_figure(title, subtitle)
        fig.add_trace(go.Scatter(x=bx, y=by, mode="markers", name="bin mean",
                                 marker=dict(color=CHEAP, size=12, line=dict(width=1, color="white")),
                                 customdata=binned["count"].to_numpy(),
                                 hovertemplate="z %{x:.2f}: mean return %{y:.2%} (%{customdata} pairs)<extra></extra>"))
        x = bx
        label = f"mean rank IC = {fmt_num(row['mean_ic'])}<br>{t_name(row['se_method'])} = {fmt_t(row['t_hac'])}"
    if np.isfinite(b):
        xs = np.array([np.min(x), np.max(x)])
        fig.add_trace(go.Scatter(x=xs, y=a + b * xs, mode="lines", name="least-squares line",
                                 line=dict(color=SERIES["fit"], width=3)))
    fig.add_annotation(text=label, x=0.02, y=0.98, xref="paper", yref="paper", xanchor="left", yanchor="top",
                       showarrow=False, align="left", bgcolor="rgba(255,255,255,0.85)", bordercolor="#cfc9bf",
                       borderwidth=1, font=dict(size=15))
    fig.update_xaxes(title_text=f"z-score of {chart_text(signal_label(result))} (higher = cheaper)")
    fig.update_yaxes(title_text=return_label(result, horizon), tickformat=".0%")
    return fig


def fm_slopes_figure(result: StudyResult) -> go.Figure:
    """Mean Fama-MacBeth slope on the signal z-score per horizon, with its headline t."""
    s = result.fm_summary
    title = "Fama-MacBeth slope on the signal z-score"
    if s.empty or not np.isfinite(s["mean_slope"].to_numpy(dtype=float)).any():
        return message_figure(title, "No date has enough names for a cross-sectional regression.")
    hs = [int(h) for h in s.index]
    labels = [f"{h} m" for h in hs]
    m = s["mean_slope"].to_numpy(dtype=float)
    se = s["se_hac"].to_numpy(dtype=float)
    dates = pd.DatetimeIndex(sorted(set().union(*[set(finite_dates(result.fm_slopes[h])) for h in hs])))
    controls = [c for c, on in (("sector dummies", result.config.fm_sector_dummies),
                                ("log market cap", result.config.fm_log_market_cap)) if on]
    subtitle = (f"Sample {span(dates)}; return per unit of z per horizon, whiskers 95% (Hansen-Hodrick above 1 month); "
                f"controls: {', '.join(controls) if controls else 'none'}")
    fig = base_figure(title, subtitle)
    fig.add_trace(go.Bar(x=labels, y=m, marker_color=[CHEAP if v >= 0 else SERIES["dearest"] for v in np.nan_to_num(m)],
                         error_y=dict(type="data", array=np.nan_to_num(1.96 * se), color=MUTED, thickness=1.6, width=8),
                         hovertemplate="%{x}: %{y:.3%}<extra></extra>", name="mean slope"))
    hi = np.nan_to_num(m + 1.96 * se)
    lo = np.nan_to_num(m - 1.96 * se)
    pad = 0.08 * max(float(np.max(np.r_[hi, 0.0]) - np.min(np.r_[lo, 0.0])), 1e-4)
    ticks = [f"<b>{lab}</b><br>t={fmt_num(s.loc[h, 't_hac'], 1)}<br>n={int(s.loc[h, 'n_dates'])}"
             for lab, h in zip(labels, hs)]
    fig.update_xaxes(tickmode="array", tickvals=labels, ticktext=ticks, title_text="horizon; t; dates")
    fig.update_yaxes(title_text="slope (return per z)", tickformat=".1%",
                     range=[float(np.min(np.r_[lo, 0.0])) - pad, float(np.max(np.r_[hi, 0.0])) + pad])
    fig.update_layout(showlegend=False)
    return fig
