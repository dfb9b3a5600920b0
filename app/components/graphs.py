"""A chart card whose graph is as tall as its figure asks (the height is set together with the figure)."""

from __future__ import annotations

from typing import Any

from dash import dcc, html

from valuesift.app.components.common import GRAPH_CONFIG

__all__ = ["graph_card", "height_style"]


def graph_card(graph_id: str) -> html.Div:
    """A chart card holding one graph; pair its ``style`` output with :func:`height_style` so nothing spills."""
    return html.Div(className="vs-card vs-chart", children=[
        dcc.Loading(dcc.Graph(id=graph_id, config=GRAPH_CONFIG), type="dot", delay_show=300)])


def height_style(fig: Any) -> dict[str, str]:
    """The graph's CSS height from its figure's layout height (empty when the figure sets none)."""
    h = getattr(fig.layout, "height", None)
    return {"height": f"{int(h)}px"} if h else {}
