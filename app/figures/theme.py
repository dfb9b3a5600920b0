"""The one plotly template and colour set every ValueSift chart uses.

Colours: a diverging scale from *dear* (warm brown/orange) through a warm grey
to *cheap* (blue).  Blue against orange stays distinct for the common forms
of colour-vision deficiency (common practice: avoid red against green).
Fonts are at least 13 px so charts stay readable on a projector.
"""

from __future__ import annotations

import plotly.graph_objects as go
import plotly.io as pio

__all__ = [
    "TEMPLATE_NAME",
    "TEMPLATE",
    "CHEAP",
    "DEAR",
    "NEUTRAL",
    "INK",
    "MUTED",
    "SERIES",
    "GRID",
    "FONT_FAMILY",
    "BASE_FONT_SIZE",
    "diverging",
    "register_template",
]

TEMPLATE_NAME = "valuesift"
FONT_FAMILY = "'DejaVu Sans', 'Segoe UI', Helvetica, Arial, sans-serif"
BASE_FONT_SIZE = 15

INK = "#26313d"        # text
MUTED = "#6f7782"      # secondary text, reference lines
GRID = "#e4e1db"
CHEAP = "#1f4f85"      # deep blue: the cheap end
DEAR = "#96501a"       # brown: the dear end
NEUTRAL = "#ada496"    # warm grey: the middle

#: Anchors of the dear -> cheap scale (index 0 = dearest).
_ANCHORS: tuple[str, ...] = (DEAR, "#d38a45", NEUTRAL, "#5f95c6", CHEAP)

#: Colours for series that are not ordered (portfolios, lines).
SERIES: dict[str, str] = {
    "cheapest": CHEAP,
    "long_short": "#6a4c9c",   # violet
    "universe": "#4a4a4a",     # charcoal
    "benchmark": "#c77a2e",    # orange
    "dearest": DEAR,
    "signal": CHEAP,
    "rolling_short": "#c77a2e",
    "rolling_long": "#6a4c9c",
    "fit": "#c77a2e",
}


def _hex_to_rgb(h: str) -> tuple[int, int, int]:
    h = h.lstrip("#")
    return int(h[0:2], 16), int(h[2:4], 16), int(h[4:6], 16)


def diverging(n: int) -> list[str]:
    """``n`` colours from dearest (index 0) to cheapest (index n-1), interpolated in RGB."""
    if n <= 0:
        return []
    if n == 1:
        return [NEUTRAL]
    out = []
    k = len(_ANCHORS) - 1
    for i in range(n):
        pos = i / (n - 1) * k
        j = min(int(pos), k - 1)
        frac = pos - j
        a, b = _hex_to_rgb(_ANCHORS[j]), _hex_to_rgb(_ANCHORS[j + 1])
        rgb = tuple(round(a[c] + (b[c] - a[c]) * frac) for c in range(3))
        out.append("#{:02x}{:02x}{:02x}".format(*rgb))
    return out


def _build() -> go.layout.Template:
    axis = dict(
        gridcolor=GRID,
        zerolinecolor="#b9b4ab",
        zerolinewidth=1.2,
        linecolor="#b9b4ab",
        ticks="outside",
        tickcolor="#b9b4ab",
        tickfont=dict(size=14, color=INK),
        title=dict(font=dict(size=15, color=INK), standoff=8),
        automargin=True,
    )
    layout = go.Layout(
        font=dict(family=FONT_FAMILY, size=BASE_FONT_SIZE, color=INK),
        title=dict(
            font=dict(size=18, color=INK),
            x=0.012,
            xanchor="left",
            xref="container",
            y=0.97,
            yanchor="top",
            subtitle=dict(font=dict(size=14, color=MUTED)),
        ),
        paper_bgcolor="#ffffff",
        plot_bgcolor="#ffffff",
        colorway=[CHEAP, "#c77a2e", "#6a4c9c", "#4a4a4a", "#3f8f8f", DEAR],
        xaxis=axis,
        yaxis=axis,
        legend=dict(font=dict(size=14), orientation="h", x=0, y=-0.18, yanchor="top"),
        hoverlabel=dict(font=dict(size=14, family=FONT_FAMILY)),
        margin=dict(l=70, r=30, t=96, b=70),
        bargap=0.25,
        annotationdefaults=dict(font=dict(size=14, color=INK)),
    )
    return go.layout.Template(layout=layout)


TEMPLATE = _build()


def register_template() -> str:
    """Register the template with plotly (idempotent) and return its name."""
    pio.templates[TEMPLATE_NAME] = TEMPLATE
    return TEMPLATE_NAME


register_template()
