"""Dashboard timings through the app's own service layer (no browser, no HTTP).

What the study page does on the server, called directly:

* cold study: a fresh :class:`app.services.AppState` over a workspace holding
  the size-M files; ``run_now`` builds the panel from the parsed files, runs
  the study and writes the result cache;
* first view of a study: the eight figures and the scatter built from nothing;
* warm horizon change: ``AppState.result(key)`` (memory hit) and the figures of
  the new horizon from the page's figure memo (``app.figures.cache``), which the
  first view warms for every horizon in the background;
* first page of the screen: ``display_frame`` + ``page`` as the screen page's
  table callback calls them (only the rows of one page are sent).

HTTP, JSON encoding of the figures and browser rendering are not included.
"""

from __future__ import annotations

import statistics
import tempfile
import time
from pathlib import Path
from typing import Any

import pandas as pd

from valuesift.core.panel import Panel

__all__ = ["measure_dashboard"]


def _write_files(panel: Panel, folder: Path) -> dict[str, Path]:
    p = panel.prices.rename_axis("date").reset_index()
    p["date"] = p["date"].dt.strftime("%Y-%m-%d")
    paths = {"prices": folder / "prices_monthly.csv", "earnings": folder / "eps_monthly.csv",
             "dividends": folder / "dividends.csv", "sectors": folder / "sectors.csv"}
    p.to_csv(paths["prices"], index=False, float_format="%.6f")
    assert panel.eps is not None and panel.dividends is not None and panel.sectors is not None
    e = panel.eps.rename_axis("date").reset_index()
    e["date"] = e["date"].dt.strftime("%Y-%m-%d")
    e.to_csv(paths["earnings"], index=False, float_format="%.6f")
    d = panel.dividends.copy()
    d["ex_date"] = d["ex_date"].dt.strftime("%Y-%m-%d")
    d.to_csv(paths["dividends"], index=False)
    pd.DataFrame({"security": panel.sectors.index, "sector": panel.sectors.to_numpy()}).to_csv(paths["sectors"], index=False)
    return paths


def measure_dashboard(panel: Panel, repeats: int = 5) -> dict[str, Any]:
    """Server-side seconds of a cold study, a warm horizon change and the first screen page."""
    import flask

    from valuesift.app.screen_table import display_frame, page
    from valuesift.app.services import AppState
    from valuesift.app.workspace import Workspace
    from valuesift.core.intake import ReadOptions
    from valuesift.core.config import StudyConfig

    out: dict[str, Any] = {}
    with tempfile.TemporaryDirectory(prefix="valuesift-bench-app-") as tmp:
        root = Path(tmp)
        paths = _write_files(panel, root)
        ws = Workspace(root / "ws")
        ids = [ws.add_upload(p.name, p.read_bytes(), ReadOptions(kind=kind)).id  # type: ignore[arg-type]
               for kind, p in paths.items()]
        sel = {"ids": ids, "splits": []}
        cfg = StudyConfig()
        colds = []
        key = ""
        for _ in range(max(2, repeats // 2)):
            st = AppState(Workspace(root / "ws"), flask.Flask("valuesift-bench"))
            st.cache.clear() if hasattr(st.cache, "clear") else None
            t0 = time.perf_counter()
            key, res = st.run_now(sel, cfg)
            colds.append(time.perf_counter() - t0)
        out["cold_study_s"] = statistics.median(colds)
        out["cold_study_runs_s"] = colds
        # What the Study page's figure callbacks do (app.figures.cache): the figures of the
        # chosen horizon, memoised per study; the first view warms the other horizons in the
        # background, so a later horizon change is a look-up.
        from valuesift.app.figures import cache as fc

        hs = list(cfg.horizons)
        firsts, warm = [], []
        parts: dict[str, list[float]] = {}
        for _ in range(repeats):
            fc.clear()
            t0 = time.perf_counter()
            r = st.result(key)
            assert r is not None
            for name, draw in fc.STUDY_CHARTS.items():       # first view, nothing memoised
                t1 = time.perf_counter()
                draw(r, hs[0])
                parts.setdefault(name, []).append(time.perf_counter() - t1)
            fc.study_figures(key, r, hs[0])
            fc.scatter_for(key, r, hs[0], None)
            firsts.append(time.perf_counter() - t0)
            for h in hs:                                       # the background warm-up, run here in line
                fc.study_figures(key, r, h)
                fc.scatter_for(key, r, h, None)
            for i in range(len(hs)):
                h = hs[(i + 1) % len(hs)]
                t0 = time.perf_counter()
                r = st.result(key)
                assert r is not None
                fc.study_figures(key, r, h)
                fc.scatter_for(key, r, h, None)
                warm.append(time.perf_counter() - t0)
        out["first_view_s"] = statistics.median(firsts)
        out["warm_horizon_change_s"] = statistics.median(warm)
        out["warm_horizon_change_max_s"] = max(warm)
        out["warm_by_figure_s"] = {k: statistics.median(v) for k, v in parts.items()}
        pages = []
        for _ in range(repeats):
            t0 = time.perf_counter()
            rows, n_pages = page(display_frame(res.screen), 0, 25)
            pages.append(time.perf_counter() - t0)
        out["screen_first_page_s"] = statistics.median(pages)
        out["screen_rows_sent"] = len(rows)
        out["screen_rows_total"] = int(len(res.screen))
        out["screen_pages"] = n_pages
    return out
