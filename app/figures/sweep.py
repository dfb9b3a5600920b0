"""The sweep heat map: adjusted IC t-statistics by signal and horizon (pure: result in, figure out)."""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import numpy as np
import plotly.graph_objects as go

from valuesift.app.escape import chart_texts
from valuesift.app.render import render_images

from valuesift.app.figures.common import base_figure, message_figure
from valuesift.app.figures.theme import CHEAP, DEAR, NEUTRAL
from valuesift.core.settings import SIGNAL_WORDS
from valuesift.core.sweep.table import heatmap_cells

__all__ = ["sweep_heatmap_figure", "write_heatmap"]

_TITLE = "Which signal and horizon survive the multiple-testing adjustment?"


def sweep_heatmap_figure(result: Any) -> go.Figure:
    """Heat map of the best BH-adjusted HAC t of the mean rank IC in each (signal, horizon) cell.

    The cells come from :func:`valuesift.core.sweep.table.heatmap_cells`.  Colour runs from brown
    (negative) through grey (zero) to blue (positive) on a scale symmetric around zero whose
    end is the largest absolute t of the data (at least 1.96, so a sweep of small t's is not painted
    as strong); cells at or beyond +/-1.96 are significant at 5 % after adjustment.  The subtitle
    states how many configurations and tests the sweep tried.
    """
    cells = heatmap_cells(result.table, result.configs)
    n_points, n_rows = len(result.configs), len(result.table)
    sub = (f"{n_points} configurations x {len(result.horizons)} horizon(s) = {n_rows} tests; "
           f"each cell shows the best of its configurations after the Benjamini-Hochberg adjustment")
    if cells.empty:
        return message_figure(_TITLE, "No configuration of the sweep produced a HAC t-statistic.")
    signals = sorted(cells["signal"].unique())
    horizons = sorted(int(h) for h in cells["horizon"].unique())
    z = np.full((len(signals), len(horizons)), np.nan)
    text = [["" for _ in horizons] for _ in signals]
    custom = np.full((len(signals), len(horizons), 2), np.nan)
    for _, r in cells.iterrows():
        i, j = signals.index(r["signal"]), horizons.index(int(r["horizon"]))
        z[i, j] = r["best_t_bh"]
        custom[i, j] = (r["raw_t"], r["n_configs"])
        text[i][j] = f"{r['best_t_bh']:.2f}"
    lim = max(1.96, float(np.nanmax(np.abs(z))))
    fig = base_figure(_TITLE, sub, height=max(300, 150 + 60 * len(signals)), wide=True)
    fig.add_trace(go.Heatmap(
        z=z, x=[f"{h} m" for h in horizons], y=chart_texts([SIGNAL_WORDS.get(s, s) for s in signals]), text=text,
        texttemplate="%{text}", customdata=custom, zmin=-lim, zmax=lim,
        colorscale=[[0.0, DEAR], [0.5, NEUTRAL], [1.0, CHEAP]],
        colorbar=dict(title=dict(text="adjusted t", side="right"), thickness=14),
        hovertemplate=("%{y}, %{x}<br>best adjusted t %{z:.2f}<br>its raw HAC t %{customdata[0]:.2f}"
                       "<br>configurations in the cell %{customdata[1]:.0f}<extra></extra>"),
    ))
    fig.update_xaxes(title_text="horizon", type="category")
    fig.update_yaxes(title_text="signal", type="category")
    return fig


def write_heatmap(fig: go.Figure, out_dir: str | os.PathLike[str], stem: str = "heatmap") -> tuple[list[Path], str | None]:
    """Write ``stem.html`` (plotly.js embedded, opens offline) and ``stem.png`` when a browser is available.

    Returns the paths written and a note when the PNG could not be made.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    html = out / f"{stem}.html"
    fig.write_html(html, include_plotlyjs=True, full_html=True, config={"displaylogo": False})
    paths = [html]
    png = out / f"{stem}.png"
    got = render_images({stem: fig}, width=1100, height=int(fig.layout.height or 500), scale=1, svg=False)
    if stem not in got.png:
        return paths, ("The PNG heat map could not be rendered, so the heat map was written as HTML only. "
                       + (got.note or ""))
    png.write_bytes(got.png[stem])
    paths.append(png)
    return paths, None
