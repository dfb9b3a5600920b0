"""Study fields derived from the main results, for the charts, tables and sentences that show them.

:func:`derived_fields` is called by :func:`valuesift.core.study.run_study` after the main steps;
every number here is computed once, by a public function of its domain folder, so the
dashboard, the command line and the bundle read it instead of recomputing it.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from valuesift.core.arrays import row_median
from valuesift.core.correlation.ic import rolling_ic
from valuesift.core.panel import Panel
from valuesift.core.portfolio.summaries import cohort_summary, drawdown_summary, sharpe_inference
from valuesift.core.quantiles.bands import equal_count_bins, row_breakpoints
from valuesift.core.regression.pooled import row_simple_ols, simple_ols
from valuesift.core.reporting.coverage import price_coverage
from valuesift.core.study.steps import per_horizon

if TYPE_CHECKING:  # pragma: no cover
    from valuesift.core.result import StudyResult

__all__ = ["derived_fields", "POOLED_BINS"]

#: Number of equal-count bins of the pooled scatter.
POOLED_BINS = 20


def _pairs(result: "StudyResult", h: int) -> tuple[np.ndarray, np.ndarray]:
    fwd = result.forward_returns[h]
    z = result.signal_z.reindex(index=fwd.index, columns=fwd.columns)
    return z.to_numpy(dtype=float), fwd.to_numpy(dtype=float)


def _spread_facts(result: "StudyResult") -> pd.DataFrame:
    rows = {}
    for h in result.config.horizons:
        s = result.spread[h]
        v = s.to_numpy(dtype=float)
        ok = np.isfinite(v)
        n = int(ok.sum())
        counts = result.quantile_counts.reindex(s.index[ok])
        rows[int(h)] = {
            "positive_share": float((v[ok] > 0).sum() / n) if n else math.nan,
            "n_dates": float(n),
            "names_per_quantile": float(counts.to_numpy(dtype=float).mean()) if n and counts.size else math.nan,
        }
    out = pd.DataFrame.from_dict(rows, orient="index", columns=["positive_share", "n_dates", "names_per_quantile"])
    out.index.name = "horizon"
    return out


def _fits(result: "StudyResult") -> tuple[pd.DataFrame, dict[int, pd.DataFrame], dict[int, pd.DataFrame]]:
    pooled, bins, per_date = {}, {}, {}

    def one(h: int) -> tuple[dict[str, float], pd.DataFrame, pd.DataFrame]:
        z, y = _pairs(result, int(h))
        a, b, t, n = simple_ols(z, y)
        ok = np.isfinite(z) & np.isfinite(y)
        ra, rb, rt, rn = row_simple_ols(z, y)
        return ({"intercept": a, "slope": b, "t_slope": t, "n_pairs": float(n),
                 "n_dates": float(np.count_nonzero(ok.any(axis=1)))}, equal_count_bins(z, y, POOLED_BINS),
                pd.DataFrame({"intercept": ra, "slope": rb, "t_slope": rt, "n_names": rn},
                             index=result.forward_returns[h].index))

    horizons = tuple(int(h) for h in result.config.horizons)
    for h, (p, b, d) in zip(horizons, per_horizon(one, horizons, int(result.signal_z.size))):
        pooled[h], bins[h], per_date[h] = p, b, d
    pf = pd.DataFrame.from_dict(pooled, orient="index", columns=["intercept", "slope", "t_slope", "n_pairs", "n_dates"])
    pf.index.name = "horizon"
    return pf, bins, per_date


def _signal_bands(result: "StudyResult") -> pd.DataFrame:
    raw = result.signal_raw.to_numpy(dtype=float)
    uni = result.universe.reindex_like(result.signal_raw).fillna(False).to_numpy(dtype=bool)
    x = np.where(uni & np.isfinite(raw), raw, np.nan)
    q = result.config.n_quantiles
    med, bps, n = row_breakpoints(x, q)
    out = pd.DataFrame({"median": med, "n_names": n.astype(float)}, index=result.signal_raw.index)
    for k in range(bps.shape[1]):
        out[f"b{k + 1}"] = bps[:, k]
    return out


def _forward_median(result: "StudyResult") -> pd.DataFrame:
    cols = {}
    for h in result.config.horizons:
        fwd = result.forward_returns[h]
        uni = result.universe.reindex_like(fwd).fillna(False).to_numpy(dtype=bool)
        cols[int(h)] = row_median(np.where(uni, fwd.to_numpy(dtype=float), np.nan))
    out = pd.DataFrame(cols, index=result.signal_raw.index)
    out.columns.name = "horizon"
    return out


def _coverage(result: "StudyResult", panel: Panel) -> pd.Series:
    cov = price_coverage(panel)
    names = result.universe.sum(axis=1).to_numpy(dtype=float)
    used = names[names > 0]
    mb = result.ic_summary["mean_breadth"].to_numpy(dtype=float) if "mean_breadth" in result.ic_summary else np.array([])
    mb = mb[np.isfinite(mb)]
    cov["mean_universe_names"] = float(used.mean()) if used.size else math.nan
    cov["n_universe_dates"] = float(used.size)
    cov["mean_ic_breadth"] = float(mb.mean()) if mb.size else math.nan
    return cov


def derived_fields(result: "StudyResult", panel: Panel) -> dict[str, Any]:
    """The derived fields of :class:`~valuesift.core.result.StudyResult` (see its docstring), by name."""
    pooled, bins, per_date = _fits(result)
    bt = result.backtest
    cohorts = bt.cohorts
    excess = cohorts["excess"] if cohorts is not None and "excess" in cohorts.columns else pd.Series(dtype=float)
    return {
        # the same rolling rule as the rolling IC: a window needs all its dates
        "rolling_spread": rolling_ic(result.spread),
        "spread_facts": _spread_facts(result),
        "pooled_fit": pooled,
        "pooled_bins": bins,
        "cross_section_fit": per_date,
        "signal_bands": _signal_bands(result),
        "forward_return_median": _forward_median(result),
        "sharpe_inference": sharpe_inference(bt.stats),
        "cohort_summary": cohort_summary(excess, bt.holding_months),
        "drawdown_summary": drawdown_summary(bt.drawdown),
        "coverage": _coverage(result, panel),
    }
