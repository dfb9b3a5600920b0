"""Charts of the data itself: coverage of securities over time (pure functions)."""

from __future__ import annotations

import numpy as np
import plotly.graph_objects as go

from valuesift.app.escape import chart_texts
from valuesift.core.reporting.coverage import price_coverage
from valuesift.app.figures.common import base_figure, message_figure, span
from valuesift.app.figures.theme import CHEAP, GRID
from valuesift.core.panel import Panel

__all__ = ["coverage_figure"]


def coverage_figure(panel: Panel, *, max_rows: int = 400) -> go.Figure:
    """Securities (rows, ordered by first valid price) by month-end: valid price or not.

    With more than ``max_rows`` securities, every k-th row is drawn (stated in the subtitle).
    """
    title = "Coverage: a valid price at each month-end"
    mask = panel.valid_price_mask()
    if mask.size == 0:
        return message_figure(title, "The panel has no securities.")
    dates = panel.dates
    secs = np.asarray(panel.securities.astype(str))
    any_valid = mask.any(axis=0)
    first = np.where(any_valid, mask.argmax(axis=0), mask.shape[0])
    order = np.lexsort((secs, first))
    step = max(1, int(np.ceil(len(order) / max_rows)))
    shown = order[::step]
    z = mask[:, shown].T.astype(float)
    cov = price_coverage(panel)
    subtitle = (f"{len(secs)} securities x {len(dates)} month-ends ({span(dates)}); "
                f"{cov['share_valid']:.0%} of cells valid; names with a price per date: "
                f"{int(cov['min_names'])} to {int(cov['max_names'])}"
                + (f"; every {step}th security drawn" if step > 1 else ""))
    height = int(min(900, max(420, 160 + 5 * len(shown))))
    fig = base_figure(title, subtitle, height=height, wide=True)
    fig.add_trace(go.Heatmap(
        z=z, x=dates, y=chart_texts(secs[shown]), zmin=0, zmax=1, showscale=False,
        colorscale=[[0.0, "#f4f1ec"], [0.5, "#f4f1ec"], [0.5, CHEAP], [1.0, CHEAP]],
        hovertemplate="%{y} %{x|%b %Y}: %{customdata}<extra></extra>",
        customdata=np.where(z > 0.5, "valid price", "no valid price"),
        xgap=0, ygap=0,
    ))
    fig.update_yaxes(showticklabels=len(shown) <= 60, title_text="securities (by first price)", autorange="reversed",
                     gridcolor=GRID, showgrid=False)
    fig.update_xaxes(showgrid=False)
    fig.add_annotation(text="blue: valid price; light: missing, not listed, delisted or dropped", x=0, y=1.0,
                       xref="paper", yref="paper", yanchor="bottom", showarrow=False, font=dict(size=13))
    return fig


