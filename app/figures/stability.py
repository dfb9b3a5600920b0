"""Charts of where a study's reward comes from: small multiples by period and by sector, regimes, the decay curve,
equal against cap weight.

Pure functions: a :class:`valuesift.core.result.StudyResult` and a horizon in, a figure out; every number
drawn is a field of the result (``ic_by_period``, ``ic_by_sector``, ``ic_by_regime``, ``ic_decay``,
``cap_weighted``).
"""

from __future__ import annotations

import math

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from valuesift.app.escape import chart_text, chart_texts
from valuesift.app.figures.common import base_figure, fmt_num, message_figure
from valuesift.app.figures.theme import CHEAP, DEAR, MUTED, NEUTRAL, SERIES, TEMPLATE_NAME
from valuesift.core.result import StudyResult

__all__ = ["periods_figure", "sectors_figure", "regimes_figure", "decay_figure", "cap_weight_figure", "relative_figure"]


def _colors(v: np.ndarray, short: np.ndarray) -> list[str]:
    return [NEUTRAL if s else (CHEAP if x >= 0 else DEAR) for x, s in zip(np.nan_to_num(v), short)]


def _multiples(title: str, subtitle: str, names: list[str], ics: list[float], sps: list[float], shorts: list[bool],
               ts: list[float], spread_ts: list[float]) -> go.Figure:
    fig = make_subplots(rows=1, cols=2, subplot_titles=("mean rank IC", "cheapest minus dearest (per period)"),
                        horizontal_spacing=0.12)
    base = base_figure(title, subtitle, height=max(380, 26 * len(names) + 180), wide=True)
    fig.update_layout(base.layout)
    y = chart_texts(names)
    short = np.array(shorts, dtype=bool)
    ic = np.array(ics, dtype=float)
    sp = np.array(sps, dtype=float)
    lab_ic = ["too short to judge" if s else f"t = {fmt_num(t, 1)}" for t, s in zip(ts, shorts)]
    lab_sp = ["too short to judge" if s else f"t = {fmt_num(t, 1)}" for t, s in zip(spread_ts, shorts)]
    fig.add_trace(go.Bar(y=y, x=ic, orientation="h", marker_color=_colors(ic, short), text=lab_ic,
                         textposition="outside", cliponaxis=False, name="mean rank IC",
                         hovertemplate="%{y}: mean IC %{x:.3f}<extra></extra>"), row=1, col=1)
    fig.add_trace(go.Bar(y=y, x=sp, orientation="h", marker_color=_colors(sp, short), text=lab_sp,
                         textposition="outside", cliponaxis=False, name="spread",
                         hovertemplate="%{y}: spread %{x:.2%}<extra></extra>"), row=1, col=2)
    for col, vals in ((1, ic), (2, sp)):
        fin = vals[np.isfinite(vals)]
        lo, hi = (float(min(fin.min(), 0.0)), float(max(fin.max(), 0.0))) if fin.size else (0.0, 1.0)
        pad = 0.45 * max(hi - lo, 1e-4)
        fig.update_xaxes(range=[lo - (pad if lo < 0 else 0.05 * pad), hi + pad], row=1, col=col,
                         zeroline=True, zerolinecolor=MUTED)
    fig.update_xaxes(tickformat=".0%", row=1, col=2)
    # category axes: names such as "2014" are labels, not numbers (a number axis would drop "before 2017-07"
    # and label only every other year)
    fig.update_yaxes(type="category", autorange="reversed", dtick=1, row=1, col=1)
    fig.update_yaxes(type="category", autorange="reversed", showticklabels=False, row=1, col=2)
    fig.update_layout(showlegend=False, template=TEMPLATE_NAME, bargap=0.25)
    return fig


def periods_figure(result: StudyResult, horizon: int) -> go.Figure:
    """Small multiples by calendar year (and the two halves): mean IC and spread with their headline t."""
    p = result.ic_by_period
    title = f"Did it hold in every period? {int(horizon)} months"
    if p is None or p.empty:
        return message_figure(title, "No period table for this study.")
    p = p[p["horizon"] == int(horizon)]
    p = p[p["n_dates"] > 0]
    if p.empty:
        return message_figure(title, "No period has an information coefficient at this horizon.")
    sub = ("Grey bars: too short to judge (fewer than 10 independent periods); headline t beside each bar. "
           "In-sample and equal-weighted, gross of costs")
    return _multiples(title, sub, list(p["period"]), list(p["mean_ic"]), list(p["spread"]), list(p["too_short"]),
                      list(p["ic_t"]), list(p["spread_t"]))


def sectors_figure(result: StudyResult, horizon: int) -> go.Figure:
    """Small multiples by sector: the ranking inside each sector (mean IC and spread) with the headline t."""
    s = result.ic_by_sector
    title = f"Did it hold inside every sector? {int(horizon)} months"
    if s is None or s.empty:
        return message_figure(title, "No sectors file was given, so there is nothing to split by sector.")
    s = s[s["horizon"] == int(horizon)]
    if not s["judged"].astype(bool).any():    # nothing to draw: every bar would be empty
        return message_figure(title, f"None of the {len(s)} sectors had enough names on a date to rank the signal "
                                     "inside it, so no sector can be judged on its own.")
    names = [f"{n} ({fmt_num(b, 0)} names)" if j else f"{n} (too small to judge)"
             for n, b, j in zip(s["sector"], s["mean_breadth"], s["judged"])]
    sub = ("Within each sector: the rank IC and quantile spread among its own names only (the sector bet left out); "
           "grey bars: too short or too small to judge")
    return _multiples(title, sub, names, list(s["mean_ic"]), list(s["spread"]),
                      [bool(a) or not bool(b) for a, b in zip(s["too_short"], s["judged"])], list(s["ic_t"]),
                      list(s["spread_t"]))


def regimes_figure(result: StudyResult, horizon: int) -> go.Figure:
    """Mean IC when the comparison rose or fell, and in high or low trailing volatility."""
    r = result.ic_by_regime
    title = f"In rising and falling markets, {int(horizon)} months"
    if r is None or r.empty:
        return message_figure(title, "No regime table for this study.")
    r = r[r["horizon"] == int(horizon)]
    names = [f"{'market ' + s if g == 'market' else s + ' volatility'} ({int(n)} dates)"
             for g, s, n in zip(r["regime"], r["state"], r["n_dates"])]
    sub = ("Market: the comparison's return over the same window rose or fell; volatility: its trailing 12-month "
           "volatility above or below the median of the history (a description of the past, not a trading rule)")
    return _multiples(title, sub, names, list(r["mean_ic"]), list(r["spread"]), list(r["too_short"]),
                      list(r["ic_t"]), list(r["spread_t"]))


def decay_figure(result: StudyResult) -> go.Figure:
    """The marginal IC of each single month ahead (bars) and its running sum (line), with the half-life."""
    d = result.ic_decay
    title = "How fast does the information fade?"
    if d is None or d.empty or not np.isfinite(d["marginal_ic"].to_numpy(dtype=float)).any():
        return message_figure(title, "Not enough dates for the decay table.")
    hl = float(result.decay_facts.get("half_life_months", math.nan))
    ac = float(result.decay_facts.get("rank_autocorrelation_1m", math.nan))
    hl_txt = (f"half-life about {hl:.1f} months" if math.isfinite(hl)
              else f"does not halve within {len(d)} months")
    sub = (f"Bars: rank IC of the signal against the one-month return k months later; line: their running sum; "
           f"{hl_txt}; month-to-month rank autocorrelation of the signal {fmt_num(ac, 2)}")
    fig = make_subplots(specs=[[{"secondary_y": True}]])
    fig.update_layout(base_figure(title, sub, wide=True).layout)
    k = d["month_ahead"].to_numpy(dtype=int)
    m = d["marginal_ic"].to_numpy(dtype=float)
    short = d["too_short"].to_numpy(dtype=bool)
    fig.add_trace(go.Bar(x=k, y=m, marker_color=_colors(m, short), name="marginal IC",
                         customdata=d["t"].to_numpy(dtype=float),
                         hovertemplate="month %{x}: IC %{y:.3f}, t %{customdata:.1f}<extra></extra>"),
                  secondary_y=False)
    fig.add_trace(go.Scatter(x=k, y=d["cumulative_ic"].to_numpy(dtype=float), mode="lines+markers",
                             line=dict(color=SERIES["long_short"], width=2.5), name="running sum",
                             hovertemplate="months 1-%{x}: %{y:.3f}<extra></extra>"), secondary_y=True)
    fig.update_xaxes(title="month ahead", dtick=2)
    fig.update_yaxes(title="marginal rank IC", secondary_y=False, zeroline=True, zerolinecolor=MUTED)
    fig.update_yaxes(title="running sum", secondary_y=True, showgrid=False, tickformat=".2f")
    fig.update_layout(template=TEMPLATE_NAME, legend=dict(orientation="h", y=-0.2))
    return fig


def cap_weight_figure(result: StudyResult) -> go.Figure:
    """The quantile spread equal-weighted beside cap-weighted, per horizon."""
    c = result.cap_weighted
    title = "Equal weight against cap weight"
    if c is None or c.empty:
        return message_figure(title, "Give a market-cap file to see the cap-weighted view beside equal weight.")
    hs = [f"{int(h)} m" for h in c["horizon"]]
    fig = base_figure(title, "Cheapest minus dearest quantile, mean per period; a reward that lives only in the smallest "
                             "names shrinks when cap-weighted. Gross of costs, in-sample", wide=True)
    for col, name, color, tcol in (("spread_equal", "equal-weighted", CHEAP, "spread_equal_t"),
                                   ("spread_cap", "cap-weighted", SERIES["benchmark"], "spread_cap_t")):
        lab = ["too short" if s else f"t = {fmt_num(t, 1)}" for t, s in zip(c[tcol], c["too_short"])]
        fig.add_trace(go.Bar(x=hs, y=c[col].to_numpy(dtype=float), name=name, marker_color=color, text=lab,
                             textposition="outside", cliponaxis=False,
                             hovertemplate="%{x}: %{y:.2%}<extra>" + chart_text(name) + "</extra>"))
    fig.update_layout(barmode="group")
    fig.update_yaxes(tickformat=".0%", title="spread per period")
    return fig


def relative_figure(result: StudyResult) -> go.Figure:
    """Annualised active return and Jensen alpha of the cheapest quantile and the long-short, with IR and alpha t."""
    rel = result.relative
    title = "Against the comparison"
    if rel is None or rel.empty:
        return message_figure(title, "No backtest months to compare.")
    comp = "the benchmark" if str(rel["comparison"].iloc[0]) == "benchmark" else "the equal-weight universe"
    fig = base_figure(title, f"Measured against {comp}; a year, equal-weighted, in-sample; labels: information ratio "
                             f"and the Newey-West t of alpha", wide=True)
    names = {"cheapest": "cheapest quantile", "long_short": "long-short"}
    x = [names.get(str(p), str(p)) for p in rel.index]
    ir = [f"IR {fmt_num(v, 2)}" for v in rel["information_ratio"]]
    at = ["too short to judge" if bool(s) else f"t = {fmt_num(v, 1)}" for v, s in zip(rel["alpha_t"], rel["too_short"])]
    fig.add_trace(go.Bar(x=x, y=rel["active_return_ann"].to_numpy(dtype=float), name="active return", text=ir,
                         marker_color=CHEAP, textposition="outside", cliponaxis=False,
                         hovertemplate="%{x}: active return %{y:.1%}<extra></extra>"))
    fig.add_trace(go.Bar(x=x, y=rel["alpha_ann"].to_numpy(dtype=float), name="Jensen alpha", text=at,
                         marker_color=SERIES["benchmark"], textposition="outside", cliponaxis=False,
                         hovertemplate="%{x}: alpha %{y:.1%}<extra></extra>"))
    fig.update_layout(barmode="group")
    fig.update_yaxes(tickformat=".0%", title="a year", zeroline=True, zerolinecolor=MUTED)
    return fig
