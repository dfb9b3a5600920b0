"""Memoised Study-page figures: built once per (study, horizon), then served from memory.

A study result holds every horizon, so switching the shown horizon only has to
pick figures.  The Study page asks :func:`study_figures` for the figures of the
chosen horizon; the first request for a study also warms the other horizons in
a background thread, so a later horizon change is a dictionary look-up.  The
cache is bounded (least recently used studies drop out) and thread-safe.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Callable
from typing import Any

import plotly.graph_objects as go

from valuesift.app.figures import backtest as fb
from valuesift.app.figures import study as fs

__all__ = ["STUDY_CHARTS", "HORIZON_CHARTS", "study_figures", "scatter_for", "warm_study", "clear"]

#: Study-page chart ids and how each is drawn (result, horizon) -> figure.
STUDY_CHARTS: dict[str, Callable[[Any, int], go.Figure]] = {
    "ic-horizon": lambda r, h: fs.ic_by_horizon_figure(r),
    "ic-time": lambda r, h: fs.ic_over_time_figure(r, h),
    "quantiles": lambda r, h: fs.quantile_returns_figure(r, h),
    "spread": lambda r, h: fs.spread_over_time_figure(r, h),
    "fm": lambda r, h: fs.fm_slopes_figure(r),
    "growth": lambda r, h: fb.growth_figure(r),
    "drawdown": lambda r, h: fb.drawdown_figure(r),
    "cohorts": lambda r, h: fb.cohort_figure(r),
}
#: The charts that change with the horizon (the others are drawn once per study).
HORIZON_CHARTS = frozenset({"ic-time", "quantiles", "spread"})

_MAX_ENTRIES = 400          # about 40 studies x (5 + 3 x 6 horizons + 6 scatters)
_lock = threading.Lock()
_cache: OrderedDict[tuple[str, str, int | None, str | None], go.Figure] = OrderedDict()
_warming: set[str] = set()


def _get(key: tuple[str, str, int | None, str | None], build: Callable[[], go.Figure]) -> go.Figure:
    with _lock:
        hit = _cache.get(key)
        if hit is not None:
            _cache.move_to_end(key)
            return hit
    fig = build()
    with _lock:
        _cache[key] = fig
        _cache.move_to_end(key)
        while len(_cache) > _MAX_ENTRIES:
            _cache.popitem(last=False)
    return fig


def study_figures(study_key: str, result: Any, horizon: int) -> dict[str, go.Figure]:
    """The Study page's eight figures for ``horizon``, memoised per study key."""
    out = {}
    for name, draw in STUDY_CHARTS.items():
        h = horizon if name in HORIZON_CHARTS else None
        out[name] = _get((study_key, name, h, None), lambda d=draw: d(result, horizon))
    return out


def scatter_for(study_key: str, result: Any, horizon: int, date: str | None) -> go.Figure:
    """The signal-versus-return scatter (one date, or pooled when ``date`` is None), memoised."""
    return _get((study_key, "scatter", horizon, date), lambda: fs.scatter_figure(result, horizon, date))


def warm_study(study_key: str, result: Any) -> None:
    """Build every horizon's figures (and pooled scatters) in a background thread, once per study."""
    with _lock:
        if study_key in _warming:
            return
        _warming.add(study_key)

    def run() -> None:
        for h in result.config.horizons:
            study_figures(study_key, result, int(h))
            scatter_for(study_key, result, int(h), None)

    threading.Thread(target=run, name=f"warm-{study_key[:8]}", daemon=True).start()


def clear() -> None:
    """Forget every memoised figure (tests)."""
    with _lock:
        _cache.clear()
        _warming.clear()
