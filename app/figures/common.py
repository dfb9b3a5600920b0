"""Small helpers shared by the figure modules (text of samples and statistics)."""

from __future__ import annotations

import textwrap
from typing import Iterable

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from valuesift.app.figures.theme import MUTED, TEMPLATE_NAME

__all__ = ["wrap", "month", "span", "fmt_t", "fmt_num", "fmt_pct", "base_figure", "message_figure", "finite_dates"]


def month(ts: object) -> str:
    """A date as 'Mar 2015'."""
    return pd.Timestamp(ts).strftime("%b %Y")  # type: ignore[arg-type]


def months(n: object) -> str:
    """'1 month', '3 months'."""
    k = int(n)  # type: ignore[call-overload]
    return f"{k} month" if k == 1 else f"{k} months"


def span(dates: Iterable[object]) -> str:
    """'Jan 2011 to Dec 2023' for a collection of dates (empty -> 'no dates')."""
    idx = pd.DatetimeIndex(list(dates))
    if len(idx) == 0:
        return "no dates"
    return f"{month(idx.min())} to {month(idx.max())}"


def fmt_num(x: object, digits: int = 3) -> str:
    try:
        v = float(x)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return "n/a"
    return "n/a" if not np.isfinite(v) else f"{v:.{digits}f}"


def fmt_t(x: object) -> str:
    return fmt_num(x, 2)


def fmt_pct(x: object, digits: int = 2) -> str:
    try:
        v = float(x)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return "n/a"
    return "n/a" if not np.isfinite(v) else f"{100 * v:.{digits}f}%"


def finite_dates(s: pd.Series) -> pd.DatetimeIndex:
    """Dates where a series holds a finite number."""
    v = pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)
    return pd.DatetimeIndex(s.index[np.isfinite(v)])


def wrap(text: str, width: int) -> tuple[str, int]:
    """Break ``text`` into lines of at most ``width`` characters (existing <br> kept); returns (text, lines)."""
    lines: list[str] = []
    # Keep "t = 2.31" and similar statements on one line (non-breaking spaces around "=").
    text = str(text).replace(" = ", "\u00a0=\u00a0")
    for para in text.split("<br>"):
        lines.extend(textwrap.wrap(para, width=width, break_long_words=False) or [""])
    return "<br>".join(lines), len(lines)


def base_figure(title: str, subtitle: str, *, height: int = 440, wide: bool = False) -> go.Figure:
    """An empty figure on the shared template with a title and a sample/statistics subtitle.

    Titles and subtitles are wrapped so that they fit a half-width card (``wide``: a full-width one);
    the top margin grows with the number of lines, so nothing is clipped.
    """
    t, nt = wrap(title, 90 if wide else 52)
    s, ns = wrap(subtitle, 150 if wide else 66) if subtitle else ("", 0)
    top = 30 + 24 * nt + 19 * ns + 18
    fig = go.Figure()
    fig.update_layout(
        template=TEMPLATE_NAME,
        title=dict(text=t, subtitle=dict(text=s)),
        height=height + max(0, top - 96),
        margin=dict(t=top),
    )
    return fig


def message_figure(title: str, message: str, *, height: int = 320) -> go.Figure:
    """A figure that states why there is nothing to draw (never a blank chart)."""
    fig = base_figure(title, "", height=height)
    fig.add_annotation(
        text=message, x=0.5, y=0.5, xref="paper", yref="paper", showarrow=False,
        font=dict(size=16, color=MUTED),
    )
    fig.update_xaxes(visible=False)
    fig.update_yaxes(visible=False)
    return fig
