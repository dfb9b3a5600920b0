"""Small layout helpers: labelled controls, chart cards, plain text tables."""

from __future__ import annotations

from typing import Any, Iterable, Sequence

import pandas as pd
from dash import dcc, html

__all__ = ["field", "chart", "text_table", "GRAPH_CONFIG", "panel_choices"]

#: Plotly's own "responsive" is left off: with it, a resize after a redraw sets the drawing's container to
#: 100 % of a card that has no set height (0 px), and the chart spills over the cards below.  Charts fit their
#: card's width when drawn (autosize) and keep the figure's height.
GRAPH_CONFIG = {"displaylogo": False, "modeBarButtonsToRemove": ["lasso2d", "select2d"]}


def field(label: str, control: Any, hint: str | None = None, *, label_for: str | None = None) -> html.Div:
    """A control with its label above and an optional hint below."""
    parts: list[Any] = [html.Label(label, className="vs-label", htmlFor=label_for), control]
    if hint:
        parts.append(html.Div(hint, className="vs-hint"))
    return html.Div(parts, className="vs-field")


def chart(graph_id: str, *, tall: bool = False) -> html.Div:
    """A chart card that sizes to its chart.

    No loading wrapper: while it shows its spinner it takes the chart out of the card's flow, and the
    card then collapses under the next one (the page's progress bar says that work is running).
    """
    return html.Div(className="vs-card vs-chart" + (" vs-chart-tall" if tall else ""), children=[
        dcc.Graph(id=graph_id, config=GRAPH_CONFIG),
    ])


def _cell(v: Any) -> str:
    if v is None:
        return ""
    try:
        if pd.isna(v):
            return ""
    except (TypeError, ValueError):
        pass
    if isinstance(v, pd.Timestamp):
        return v.strftime("%Y-%m-%d")
    if isinstance(v, float):
        return f"{v:,.4g}"
    return str(v)


def text_table(rows: Iterable[Sequence[Any]], header: Sequence[str] | None = None, *,
               class_name: str = "vs-table") -> html.Table:
    """A small static table; every cell is rendered as text (never HTML or Markdown)."""
    body = [html.Tr([html.Td(_cell(v)) for v in row]) for row in rows]
    parts: list[Any] = []
    if header:
        parts.append(html.Thead(html.Tr([html.Th(h) for h in header])))
    parts.append(html.Tbody(body))
    return html.Table(parts, className=class_name)


def panel_choices(panel: Any) -> dict[str, Any]:
    """What a panel offers to the Study controls: sectors, user signals, holdings, benchmark."""
    sectors = sorted({str(s) for s in panel.sectors.dropna().unique()}) if panel.sectors is not None else []
    return {
        "sectors": sectors,
        "signals": [s.name for s in panel.signals],
        "holdings": panel.holdings is not None and len(panel.holdings) > 0,
        "benchmark": panel.benchmark is not None,
        "earnings": panel.eps is not None,
        "dividends": panel.dividends is not None and len(panel.dividends) > 0,
    }
