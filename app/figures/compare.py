"""Charts of a comparison of signals: the rank-correlation matrix, the mean IC per signal, the joint regression.

Pure functions: a :class:`valuesift.core.compare.CompareResult` (and a horizon) in, a figure out;
every number drawn is a field of the result.
"""

from __future__ import annotations

import numpy as np
import plotly.graph_objects as go

from valuesift.app.escape import chart_text, chart_texts
from valuesift.app.figures.common import base_figure, fmt_num, message_figure
from valuesift.app.figures.theme import CHEAP, DEAR, MUTED, NEUTRAL
from valuesift.core.compare import CompareResult
from valuesift.core.settings import SIGNAL_WORDS

__all__ = ["signal_words", "correlation_heatmap_figure", "compare_ic_figure", "joint_fm_figure"]


def signal_words(name: str) -> str:
    """A signal's name as a person reads it."""
    return SIGNAL_WORDS.get(name, name)


def correlation_heatmap_figure(cmp: CompareResult) -> go.Figure:
    """Heat map of the time-mean rank correlation between every pair of signals (value in each cell)."""
    c = cmp.correlation
    names = [chart_text(signal_words(s)) for s in c.index]
    z = c.to_numpy(dtype=float)
    n = cmp.correlation_dates.to_numpy(dtype=float)
    fig = base_figure("How alike are the signals?",
                      "Mean monthly rank correlation of their z-scores; near 1: the same bet", height=460)
    text = [[f"{v:.2f}" if np.isfinite(v) else "n/a" for v in row] for row in z]
    fig.add_trace(go.Heatmap(
        z=z, x=names, y=names, zmin=-1, zmax=1, text=text, texttemplate="%{text}", textfont=dict(size=15),
        colorscale=[[0.0, DEAR], [0.5, "#f1eee8"], [1.0, CHEAP]], colorbar=dict(title="rank corr."),
        customdata=n, hovertemplate="%{y} with %{x}: %{z:.3f} over %{customdata:.0f} dates<extra></extra>",
    ))
    fig.update_yaxes(autorange="reversed")
    return fig


def compare_ic_figure(cmp: CompareResult, horizon: int) -> go.Figure:
    """Mean rank IC per signal at one horizon, its headline t and the dates on each bar."""
    t = cmp.table[cmp.table["horizon"] == int(horizon)]
    title = f"Mean rank IC by signal, {int(horizon)} months"
    if t.empty:
        return message_figure(title, "No signal was studied at this horizon.")
    fig = base_figure(title, "Each signal on its own dates; labels: headline t and dates")
    ic = t["mean_ic"].to_numpy(dtype=float)
    labels = chart_texts([signal_words(s) for s in t["signal"]])
    # two short lines, so a label is no wider than its bar and never runs into the axis or its neighbour
    notes = [("too short to judge" if bool(s) else f"t = {fmt_num(v, 1)}") + f"<br>{int(n)} dates"
             for v, s, n in zip(t["ic_t"], t["too_short"], t["n_dates"])]
    fig.add_trace(go.Bar(x=labels, y=ic, marker_color=[CHEAP if v >= 0 else DEAR for v in np.nan_to_num(ic)],
                         text=notes, textposition="outside", cliponaxis=False, name="mean rank IC",
                         textfont=dict(size=13), constraintext="none",
                         hovertemplate="%{x}: mean IC %{y:.3f}<extra></extra>"))
    fig.add_hline(y=0, line_color=MUTED, line_width=1)
    top = float(np.nanmax(np.r_[ic, 0.0]))
    bottom = float(np.nanmin(np.r_[ic, 0.0]))
    fig.update_yaxes(title="mean rank IC", range=[bottom - 0.15 * max(top - bottom, 1e-3),
                                                  top + 0.35 * max(top - bottom, 1e-3)])
    return fig


def joint_fm_figure(cmp: CompareResult, horizon: int) -> go.Figure:
    """The slope on each signal in one regression with the others: which carries information of its own."""
    j = cmp.joint_fm[cmp.joint_fm["horizon"] == int(horizon)]
    title = f"Each signal's own information, {int(horizon)} months"
    if j.empty:
        return message_figure(title, " ".join(n for n in cmp.notes if "joint" in n) or
                              "The joint regression needs two signals that are not composites.")
    if not np.isfinite(j["mean_slope"].to_numpy(dtype=float)).any():
        return message_figure(title, "The joint regression could not be estimated: the signals move together too "
                                     "closely on every date.")
    fig = base_figure(title, "Fama-MacBeth slope on each z-score with the other signals in the same regressions; "
                             "association, not cause", wide=True)
    sl = j["mean_slope"].to_numpy(dtype=float)
    labels = chart_texts([signal_words(s) for s in j["signal"]])
    txt = ["too short to judge" if bool(s) else f"t = {fmt_num(v, 1)}" for v, s in zip(j["t"], j["too_short"])]
    fig.add_trace(go.Bar(x=labels, y=sl, marker_color=[CHEAP if v >= 0 else DEAR for v in np.nan_to_num(sl)],
                         text=txt, textposition="outside", cliponaxis=False, name="joint slope",
                         hovertemplate="%{x}: slope %{y:.4f}<extra></extra>"))
    fig.add_hline(y=0, line_color=NEUTRAL, line_width=1)
    top, bottom = float(np.nanmax(np.r_[sl, 0.0])), float(np.nanmin(np.r_[sl, 0.0]))
    fig.update_yaxes(title="slope (return per unit of z)", range=[bottom - 0.15 * max(top - bottom, 1e-4),
                                                                  top + 0.25 * max(top - bottom, 1e-4)])
    return fig
