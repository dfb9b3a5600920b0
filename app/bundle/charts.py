"""The bundle's charts: the dashboard's own figure functions, sized for a slide, rendered once per bundle.

Static images are drawn by :mod:`valuesift.app.render`: one local Chrome/Chromium page per bundle draws
every chart with plotly.js, writes the bundle's source line along each PNG and encodes the print copy.
When no browser can be found, :func:`render_static` returns no images and a plain hint
(:data:`NO_BROWSER_HINT`); the rest of the bundle is built all the same.
"""

from __future__ import annotations

import io
import re
import threading
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

import plotly.graph_objects as go
from PIL import Image

from valuesift.app.browser import find_browser
from valuesift.app.render import NO_BROWSER_HINT, FigureFeed, RenderOutcome, plotly_js_path, render_images

from valuesift.app.figures import backtest as fb
from valuesift.app.figures.common import wrap
from valuesift.app.figures.compare import compare_ic_figure, correlation_heatmap_figure
from valuesift.app.figures.sweep import sweep_heatmap_figure
from valuesift.app.figures import data as fd
from valuesift.app.figures import study as fs
from valuesift.app.figures import stability as fst
from valuesift.core.result import StudyResult

__all__ = ["ChartSpec", "CHARTS", "CHART_KEYS", "SLIDE", "figure_for", "render_static", "write_html",
           "plotly_js_path", "find_browser", "NO_BROWSER_HINT", "RenderOutcome", "RenderJob", "start_render", "print_jpeg"]

#: A 16:9 slide at 2x: 1280 x 720 layout pixels, rendered at scale 2 (2560 x 1440 PNG).
SLIDE = {"width": 1280, "height": 720, "scale": 2}

@dataclass(frozen=True)
class ChartSpec:
    """One chart of the bundle: file stem, heading and how it is drawn."""

    key: str
    title: str
    draw: Callable[[StudyResult, int, Any], go.Figure]
    per_horizon: bool


CHARTS: tuple[ChartSpec, ...] = (
    ChartSpec("ic_by_horizon", "Information coefficient by horizon", lambda r, h, p: fs.ic_by_horizon_figure(r), False),
    ChartSpec("ic_over_time", "Information coefficient over time", lambda r, h, p: fs.ic_over_time_figure(r, h), True),
    ChartSpec("quantile_returns", "Returns by quantile (annualised)",
              lambda r, h, p: fs.quantile_returns_figure(r, h, annualised=True), True),
    ChartSpec("spread_over_time", "Cheapest minus dearest over time", lambda r, h, p: fs.spread_over_time_figure(r, h),
              True),
    ChartSpec("scatter", "Signal against later return", lambda r, h, p: fs.scatter_figure(r, h), True),
    ChartSpec("fm_slopes", "Fama-MacBeth slopes", lambda r, h, p: fs.fm_slopes_figure(r), False),
    ChartSpec("growth", "Backtest: growth of 1", lambda r, h, p: fb.growth_figure(r), False),
    ChartSpec("drawdown", "Backtest: drawdowns", lambda r, h, p: fb.drawdown_figure(r), False),
    ChartSpec("cohorts", "Backtest: each cohort against the comparison", lambda r, h, p: fb.cohort_figure(r), False),
    ChartSpec("coverage", "Data coverage", lambda r, h, p: fd.coverage_figure(p), False),
    # where the reward comes from (issue 12): periods, sectors, decay, relative and cap-weighted
    ChartSpec("stability_periods", "Stability: by calendar year and half", lambda r, h, p: fst.periods_figure(r, h),
              True),
    ChartSpec("stability_sectors", "Stability: inside each sector", lambda r, h, p: fst.sectors_figure(r, h), True),
    ChartSpec("ic_decay", "Decay: information coefficient by month ahead", lambda r, h, p: fst.decay_figure(r), False),
    ChartSpec("relative", "Against the comparison: active return and alpha", lambda r, h, p: fst.relative_figure(r),
              False),
)
CHART_KEYS: tuple[str, ...] = tuple(c.key for c in CHARTS)

#: The optional sweep heat map (only when a finished sweep is given to the bundle).
SWEEP_KEY = "sweep_heatmap"
SWEEP_TITLE = "Sweep: best adjusted t-statistic by signal and horizon"
SWEEP_SPEC = ChartSpec(SWEEP_KEY, SWEEP_TITLE, lambda r, h, p: go.Figure(), False)


#: The optional comparison of signals (only when a comparison is given to the bundle).
COMPARE_SPECS: tuple[ChartSpec, ...] = (
    ChartSpec("compare_ic", "Comparison: mean rank IC of each signal", lambda r, h, p: go.Figure(), True),
    ChartSpec("compare_correlation", "Comparison: how alike the signals rank the names", lambda r, h, p: go.Figure(),
              False),
)


def compare_figures(cmp: Any, horizon: int) -> dict[str, go.Figure]:
    """The Compare page's bar chart (at ``horizon``) and correlation heat map with the slide layout."""
    from_page = {"compare_ic": compare_ic_figure(cmp, horizon), "compare_correlation": correlation_heatmap_figure(cmp)}
    out = {}
    for key, fig in from_page.items():
        fig.update_layout(width=SLIDE["width"], height=SLIDE["height"], autosize=False)
        _rewrap_for_slide(fig)
        for i, trace in enumerate(fig.data):
            trace.uid = f"{key}-{i}"
        out[key] = fig
    return out


def sweep_figure(sweep: Any) -> go.Figure:
    """The dashboard's sweep heat map with the same slide layout as every other chart."""
    fig = sweep_heatmap_figure(sweep)
    fig.update_layout(width=SLIDE["width"], height=SLIDE["height"], autosize=False)
    _rewrap_for_slide(fig)
    for i, trace in enumerate(fig.data):
        trace.uid = f"{SWEEP_KEY}-{i}"
    return fig


def figure_for(spec: ChartSpec, result: StudyResult, horizon: int, panel: Any) -> go.Figure:
    """The dashboard's figure, with layout updates for a 16:9 slide (the figure function is not changed)."""
    fig = spec.draw(result, horizon, panel)
    fig.update_layout(width=SLIDE["width"], height=SLIDE["height"], autosize=False)
    _rewrap_for_slide(fig)
    for i, trace in enumerate(fig.data):     # fixed trace ids (plotly.js draws random ones): reproducible SVG
        trace.uid = f"{spec.key}-{i}"
    if spec.key == "coverage":
        # Security labels do not fit a slide; the rows stay drawn (the subtitle states the sample).
        fig.update_yaxes(showticklabels=False)
    return fig


def _rewrap_for_slide(fig: go.Figure) -> None:
    """Titles are wrapped for a dashboard card; on a full-width slide they get fewer, longer lines."""
    title = fig.layout.title
    if title is None or title.text is None:
        return
    def join(text: str, card: int) -> str:
        # Lines no longer than a half-width card's were broken for the card: join them. A figure drawn
        # full width already has long lines, and its line breaks are meant: keep them.
        parts = text.split("<br>")
        return text if max(len(p) for p in parts) > card + 4 else " ".join(parts)

    t, nt = wrap(join(str(title.text), 52), 95)
    sub = title.subtitle.text if title.subtitle is not None and title.subtitle.text else ""
    s, ns = wrap(join(str(sub), 66), 150) if sub else ("", 0)
    fig.update_layout(title=dict(text=t, subtitle=dict(text=s)), margin=dict(t=30 + 24 * nt + 19 * ns + 18))


_DIV_ID = re.compile(r"[^A-Za-z0-9_-]")


def write_html(fig: go.Figure, path: Path, *, title: str, script: str = "plotly.min.js") -> None:
    """An interactive chart page that loads the shared plotly.min.js by relative path (no network).

    The div id is derived from the file name so the page is the same for the same figure.
    """
    g = go.Figure(fig)
    g.update_layout(width=None, autosize=True)
    html = g.to_html(include_plotlyjs=script, full_html=True, div_id=_DIV_ID.sub("-", path.stem),
                     include_mathjax=False, config={"displaylogo": False, "responsive": True})
    html = html.replace("<head>", f"<head><title>{_escape(title)}</title>", 1)
    path.write_text(html, encoding="utf-8", newline="\n")


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


class RenderJob:
    """Static rendering running in its own thread (started by :func:`start_render`); :meth:`wait` gives the outcome.

    Started with ``figs=None`` and a ``total``, the browser starts at once and the figures follow through
    :meth:`add` (then :meth:`close`), so drawing them in Python and starting the browser overlap.
    """

    def __init__(self, figs: dict[str, go.Figure] | None, progress: Callable[[str, float], None] | None,
                 stamp: str | None = None, total: int | None = None) -> None:
        self._feed = FigureFeed(len(figs) if figs is not None else int(total or 0))
        if figs is not None:
            for k, f in figs.items():
                self._feed.put(k, f)
            self._feed.close()
        self._progress = progress
        self._stamp = stamp
        self._outcome: RenderOutcome | None = None
        self._thread = threading.Thread(target=self._main, name="bundle-render", daemon=True)
        self._thread.start()

    def add(self, key: str, fig: go.Figure) -> None:
        self._feed.put(key, fig)

    def close(self) -> None:
        self._feed.close()

    def _main(self) -> None:
        self._outcome = render_images(self._feed, width=SLIDE["width"], height=SLIDE["height"], scale=SLIDE["scale"],
                                      svg=True, jpeg=True, stamp=self._stamp, progress=self._progress)

    def wait(self) -> RenderOutcome:
        self._thread.join()
        assert self._outcome is not None
        return self._outcome


def start_render(figs: dict[str, go.Figure] | None, progress: Callable[[str, float], None] | None = None, *,
                 stamp: str | None = None, total: int | None = None) -> RenderJob:
    """Start :func:`render_static` in the background (the browser starts while tables are written).

    With ``stamp``, the PNGs of the outcome carry that line along their bottom; the print copies (JPEG)
    and the SVGs stay as drawn.  With ``figs=None`` the figures follow through :meth:`RenderJob.add`.
    """
    return RenderJob(figs, progress, stamp, total)


def render_static(figs: dict[str, go.Figure], progress: Callable[[str, float], None] | None = None, *,
                  stamp: str | None = None) -> RenderOutcome:
    """Render every figure to PNG (slide size at 2x), SVG and a JPEG print copy through one browser page.

    Returns a :class:`RenderOutcome`; with no browser (or a browser that fails to start) the
    dicts are empty and ``note`` is :data:`NO_BROWSER_HINT` (plus the cause), never an exception.
    """
    return start_render(figs, progress, stamp=stamp).wait()


def print_jpeg(png: bytes) -> bytes:
    """A chart's print copy: JPEG at quality 92 without chroma subsampling (the PDF embeds it as it is)."""
    buf = io.BytesIO()
    Image.open(io.BytesIO(png)).convert("RGB").save(buf, format="JPEG", quality=92, subsampling=0, optimize=False)
    return buf.getvalue()
