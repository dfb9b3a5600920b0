"""Charts of the backtest: growth of 1, drawdowns and per-cohort outcomes (pure functions)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from valuesift.app.figures.common import base_figure, finite_dates, fmt_num, fmt_pct, message_figure, months, span
from valuesift.app.figures.theme import CHEAP, SERIES
from valuesift.core.result import StudyResult

__all__ = ["PORTFOLIO_LABELS", "growth_figure", "drawdown_figure", "cohort_figure", "stats_text"]

PORTFOLIO_LABELS = {
    "cheapest": "cheapest quantile",
    "long_short": "cheapest minus dearest",
    "universe": "universe, equal weight",
    "benchmark": "benchmark",
}


def _label(col: str) -> str:
    return PORTFOLIO_LABELS.get(col, col)


def _drawing_order(columns: pd.Index) -> list[str]:
    """Portfolios in the order they are drawn: the benchmark before the equal-weight universe.

    The two often run almost on top of each other (a broad benchmark is close to the universe's
    average), so the universe is drawn last and dashed: the line beneath shows through its gaps and
    every legend entry has a line one can see.
    """
    cols = [str(c) for c in columns]
    if "universe" in cols and "benchmark" in cols:
        cols.remove("universe")
        cols.insert(cols.index("benchmark") + 1, "universe")
    return cols


def _line(col: str, width: float) -> dict:
    return dict(color=SERIES.get(col), width=width, dash="dash" if col == "universe" else "solid")


def stats_text(result: StudyResult, col: str) -> str:
    """One portfolio's statistics in a short line (annual return, Sharpe with its t, worst drawdown).

    The Sharpe ratio's t is ``result.sharpe_inference`` (Lo 2002 standard error, iid months).
    """
    st = result.backtest.stats
    if col not in st.index:
        return ""
    r = st.loc[col]
    si = result.sharpe_inference
    t = si.loc[col, "t"] if col in si.index else np.nan
    return (f"{_label(col)}: {fmt_pct(r.get('ann_return'), 1)} a year, Sharpe {fmt_num(r.get('sharpe'), 2)} "
            f"(t = {fmt_num(t, 2)}), worst drawdown {fmt_pct(r.get('max_drawdown'), 0)}")


def _months(result: StudyResult) -> pd.DatetimeIndex:
    g = result.backtest.returns
    col = "cheapest" if "cheapest" in g.columns else g.columns[0]
    return finite_dates(g[col])


def growth_figure(result: StudyResult) -> go.Figure:
    """Growth of 1 for each backtest portfolio (log scale), costs deducted."""
    bt = result.backtest
    title = f"Growth of 1, quantile portfolios held {months(bt.holding_months)}"
    dates = _months(result)
    if bt.growth.empty or len(dates) == 0:
        return message_figure(title, "The backtest has no month with returns.")
    cost = result.config.transaction_cost_bps
    subtitle = (f"Sample {span(dates)}, {len(dates)} months; costs {fmt_num(cost, 0)} bp per unit traded<br>"
                + stats_text(result, "cheapest") + "; " + stats_text(result, "long_short"))
    fig = base_figure(title, subtitle, height=480, wide=True)
    for col in _drawing_order(bt.growth.columns):
        s = bt.growth[col]
        if not np.isfinite(s.to_numpy(dtype=float)).any():
            continue
        fig.add_trace(go.Scatter(x=s.index, y=s.to_numpy(dtype=float), mode="lines", name=_label(col),
                                 line=_line(col, 3 if col == "cheapest" else 2.2)))
    vals = bt.growth.to_numpy(dtype=float)
    vals = vals[np.isfinite(vals) & (vals > 0)]
    fig.update_yaxes(type="log", title_text="growth of 1 (log scale)", tickmode="array",
                     tickvals=_log_ticks(float(vals.min()), float(vals.max())) if vals.size else None)
    return fig


def _log_ticks(lo: float, hi: float) -> list[float]:
    """1-2-5 ticks covering [lo, hi] for a log axis."""
    out = []
    for e in range(int(np.floor(np.log10(lo))) - 1, int(np.ceil(np.log10(hi))) + 1):
        for m in (1, 2, 5):
            v = m * 10.0 ** e
            if lo / 1.6 <= v <= hi * 1.6:
                out.append(v)
    return out


def drawdown_figure(result: StudyResult) -> go.Figure:
    """Fall from the running peak of each portfolio."""
    bt = result.backtest
    title = "Drawdown from the running peak"
    dates = _months(result)
    if bt.drawdown.empty or len(dates) == 0:
        return message_figure(title, "The backtest has no month with returns.")
    st = bt.stats
    worst = ", ".join(f"{_label(str(c))} {fmt_pct(st.loc[c, 'max_drawdown'], 0)}" for c in st.index
                      if "max_drawdown" in st.columns)
    fig = base_figure(title, f"Sample {span(dates)}, {len(dates)} months; worst: {worst}", height=380)
    for col in _drawing_order(bt.drawdown.columns):
        s = bt.drawdown[col]
        if not np.isfinite(s.to_numpy(dtype=float)).any():
            continue
        fig.add_trace(go.Scatter(x=s.index, y=s.to_numpy(dtype=float), mode="lines", name=_label(col),
                                 line=_line(col, 2)))
    fig.update_yaxes(title_text="below peak", tickformat=".0%")
    return fig


def cohort_figure(result: StudyResult) -> go.Figure:
    """Each cohort's return over its holding period relative to the comparison."""
    bt = result.backtest
    c = bt.cohorts
    title = f"Each cohort of the cheapest quantile against the {bt.comparison}"
    if c is None or c.empty or "excess" not in c.columns:
        return message_figure(title, "No cohort completed its holding period.")
    ex = pd.to_numeric(c["excess"], errors="coerce")
    ex = ex[np.isfinite(ex.to_numpy(dtype=float))]
    if ex.empty:
        return message_figure(title, "No cohort completed its holding period.")
    cs = result.cohort_summary
    n = int(cs["n_cohorts"])
    lags = int(cs["hac_lags"])
    subtitle = (f"{n} cohorts formed {span(ex.index)}, each held {months(bt.holding_months)}; "
                f"{int(cs['n_beat'])} of {n} ({fmt_pct(cs['share_beat'], 0)}) beat it; mean excess "
                f"{fmt_pct(cs['mean_excess'])}, "
                + (f"Hansen-Hodrick t = {fmt_num(cs['t_hac'], 2)} ({lags} lags for the overlap; naive t "
                   f"{fmt_num(cs['t_naive'], 2)})" if lags > 0 else f"t = {fmt_num(cs['t_naive'], 2)} (cohorts do not overlap)"))
    fig = base_figure(title, subtitle, height=380)
    v = ex.to_numpy(dtype=float)
    fig.add_trace(go.Bar(x=ex.index, y=v, marker_color=[CHEAP if x > 0 else SERIES["dearest"] for x in v],
                         name="excess over the holding period",
                         hovertemplate="formed %{x|%b %Y}: %{y:.2%}<extra></extra>"))
    fig.update_yaxes(title_text=f"excess over the {bt.comparison}", tickformat=".0%")
    fig.update_layout(showlegend=False)
    return fig
