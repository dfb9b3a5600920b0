"""JSON-ready summaries of a study result (re-exported by :mod:`core.study`)."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

if TYPE_CHECKING:  # pragma: no cover
    from valuesift.core.result import StudyResult

__all__ = ["summary_dict", "ic_by_date_frame"]


def _f(x: object) -> float | None:
    v = float(x)  # type: ignore[arg-type]
    return v if np.isfinite(v) else None


def summary_dict(result: "StudyResult") -> dict[str, Any]:
    """JSON-ready summary of a study.

    Returns
    -------
    dict
        ``{"config": {...}, "signal": str, "horizons": {"<h>": {...}}, "<h>": {...}, "backtest": {...}}``
        (each horizon's block appears under ``"horizons"`` and, identically, at the top level);
        per horizon ``mean_ic``, ``ic_t`` (the headline: Hansen-Hodrick for h > 1,
        Newey-West for h = 1; method in ``ic_se_method``), ``ic_t_bartlett``,
        ``ic_t_nonoverlap_mean/min/max``, ``independent_periods``, ``too_short``,
        ``evidence`` (verdict code, ``"too_short"`` whenever ``too_short``), ``ic_se``, ``ic_lags``,
        ``ic_ci_low``, ``ic_ci_high``, ``ic_ir``, ``hit_share``, ``n_dates``,
        ``mean_pearson_ic``, ``spread`` (mean over dates of the highest-signal
        quantile's h-month forward return minus the lowest-signal quantile's,
        not annualised), ``spread_t`` (headline, method in ``spread_se_method``), ``spread_t_bartlett``,
        ``spread_evidence``, ``spread_annualised``,
        ``monotonicity``, ``fm_slope``, ``fm_t`` (headline, method in ``fm_se_method``).
        Top level ``warnings``: a list of ``{"code", "message", ...}``.  Each backtest
        portfolio has ``hit_rate_against`` (``"zero"``, ``"universe"``, ``"benchmark"``
        or ``"none"``); the cheapest quantile and the long-short carry a ``relative`` block
        (``active_return_ann, tracking_error_ann, information_ratio, information_ratio_residual,
        beta, beta_t, alpha_ann, alpha_t, comparison, ...``; see ``StudyResult.relative``).
        Top level ``decay`` (``half_life_months, rank_autocorrelation_1m, ...``) and
        ``period_difference`` (per horizon).  NaN becomes ``None``.
    """
    out: dict[str, Any] = {"config": result.config.to_dict(), "signal": result.signal_name, "horizons": {}}
    ic, sp, fm = result.ic_summary, result.spread_summary, result.fm_summary
    for h in result.config.horizons:
        out["horizons"][str(h)] = {
            "mean_ic": _f(ic.at[h, "mean_ic"]),
            "ic_t": _f(ic.at[h, "t_hac"]),
            "ic_se": _f(ic.at[h, "se_hac"]),
            "ic_se_method": str(ic.at[h, "se_method"]),
            "ic_lags": int(ic.at[h, "hac_lags"]),  # type: ignore[arg-type]
            "ic_t_bartlett": _f(ic.at[h, "t_bartlett"]),
            "ic_t_nonoverlap_mean": _f(ic.at[h, "t_nonoverlap_mean"]),
            "ic_t_nonoverlap_min": _f(ic.at[h, "t_nonoverlap_min"]),
            "ic_t_nonoverlap_max": _f(ic.at[h, "t_nonoverlap_max"]),
            "independent_periods": _f(ic.at[h, "independent_periods"]),
            "too_short": bool(ic.at[h, "too_short"]),
            "evidence": str(ic.at[h, "evidence"]),
            "ic_ci_low": _f(ic.at[h, "ci_low"]),
            "ic_ci_high": _f(ic.at[h, "ci_high"]),
            "ic_ir": _f(ic.at[h, "ic_ir"]),
            "hit_share": _f(ic.at[h, "hit_share"]),
            "n_dates": int(ic.at[h, "n_dates"]),  # type: ignore[arg-type]
            "mean_pearson_ic": _f(ic.at[h, "mean_pearson_ic"]),
            "spread": _f(sp.at[h, "mean"]),
            "spread_t": _f(sp.at[h, "t_hac"]),
            "spread_se_method": str(sp.at[h, "se_method"]),
            "spread_t_bartlett": _f(sp.at[h, "t_bartlett"]),
            "spread_evidence": str(sp.at[h, "evidence"]),
            "spread_annualised": _f(sp.at[h, "mean_annualised"]),
            "monotonicity": _f(sp.at[h, "monotonicity"]),
            "fm_slope": _f(fm.at[h, "mean_slope"]),
            "fm_t": _f(fm.at[h, "t_hac"]),
            "fm_se_method": str(fm.at[h, "se_method"]),
        }
    st = result.backtest.stats
    out["backtest"] = {
        "holding_months": result.backtest.holding_months,
        "comparison": result.backtest.comparison,
        "cohort_share_beat": _f(result.backtest.cohort_share_beat),
        "cohort_windows": _f(result.backtest.cohort_windows),
        "portfolios": {p: {**{c: _f(st.at[p, c]) for c in st.columns},
                           "hit_rate_against": result.backtest.hit_rate_against.get(str(p), "none")}
                       for p in st.index},
    }
    rel = getattr(result, "relative", None)
    if rel is not None and not rel.empty:
        for p in rel.index:
            if p in out["backtest"]["portfolios"]:
                out["backtest"]["portfolios"][p]["relative"] = _jsonable(
                    {k: (bool(v) if isinstance(v, (bool, np.bool_)) else v) for k, v in rel.loc[p].to_dict().items()})
    facts = getattr(result, "decay_facts", None)
    if facts is not None and len(facts):
        out["decay"] = _jsonable({str(k): float(v) for k, v in facts.items()})
    cw = getattr(result, "cap_weighted", None)
    if cw is not None and not cw.empty:
        out["cap_weighted"] = {str(int(r["horizon"])): _jsonable({k: (bool(v) if isinstance(v, (bool, np.bool_)) else v)
                                                                 for k, v in r.items() if k != "horizon"})
                               for r in cw.to_dict("records")}
    pdiff = getattr(result, "period_difference", None)
    if pdiff is not None and not pdiff.empty:
        out["period_difference"] = {str(int(r["horizon"])): _jsonable({k: (bool(v) if isinstance(v, (bool, np.bool_))
                                                                            else v) for k, v in r.items()
                                                                       if k != "horizon"})
                                    for r in pdiff.to_dict("records")}
    # The same per-horizon blocks also sit at the top level under their horizon
    # key ("1", "3", ...), so ``summary["12"]["mean_ic"]`` works as documented in README.
    for key, block in out["horizons"].items():
        out[key] = block
    out["excluded_dates"] = int(len(result.date_notes))
    out["notes"] = list(result.notes)
    out["warnings"] = [_jsonable(w) for w in result.warnings]
    return out


def _jsonable(w: dict[str, Any]) -> dict[str, Any]:
    """A warning with NaN numbers as None (summary.json is written without NaN)."""
    out: dict[str, Any] = {}
    for k, v in w.items():
        if isinstance(v, (float, np.floating)):
            out[k] = _f(v)
        elif isinstance(v, (np.integer,)):
            out[k] = int(v)
        else:
            out[k] = v
    return out


def ic_by_date_frame(result: "StudyResult") -> pd.DataFrame:
    """One row per signal date and horizon: ``date`` (ISO text), ``horizon``, ``rank_ic``, ``pearson_ic``, ``breadth``.

    Dates without a forward return for the horizon (the last h dates) are left out;
    dates below the minimum breadth stay in with NaN ICs.
    """
    parts = []
    n = len(result.rank_ic.index)
    for h in result.config.horizons:
        keep = np.arange(n) < n - h
        parts.append(pd.DataFrame({
            "date": [d.date().isoformat() for d in result.rank_ic.index[keep]],
            "horizon": int(h),
            "rank_ic": result.rank_ic[h].to_numpy(dtype=float)[keep],
            "pearson_ic": result.pearson_ic[h].to_numpy(dtype=float)[keep],
            "breadth": result.breadth[h].to_numpy(dtype=int)[keep],
        }))
    return pd.concat(parts, ignore_index=True)
