"""The tables of where a study's reward comes from (relative, periods, regimes, sectors, decay, controls,
cap-weighted): the result's frames in file order, nothing recomputed."""

from __future__ import annotations

import pandas as pd

from valuesift.core.result import StudyResult

__all__ = ["STABILITY_TABLES", "stability_tables"]

#: table key -> what it holds (joined to the bundle's table list).
STABILITY_TABLES: dict[str, str] = {
    "relative": "cheapest quantile and long-short against the comparison: active return, tracking error, "
                "information ratios, beta and Jensen alpha with their HAC t, capture ratios",
    "ic_by_period": "mean IC and spread with their headline t per calendar year and for the two halves of the history",
    "period_difference": "second half minus first half of the history: IC and spread differences with their t",
    "ic_by_regime": "mean IC and spread when the comparison rose or fell and in high or low trailing volatility",
    "ic_by_sector": "mean IC, spread and breadth within each sector with their t (sectors too small say so)",
    "ic_decay": "marginal IC of each single month 1 to 24 ahead, its t and the running sum",
    "fm_controls": "Fama-MacBeth slope on the signal without and with controls, and the IC net of the controls",
    "cap_weighted": "quantile spread equal-weighted beside cap-weighted, with their t (needs a market-cap file)",
    "cap_weighted_backtest": "cheapest quantile and long-short, equal- and cap-weighted: return, volatility, "
                             "Sharpe ratio, worst drawdown (gross of costs)",
}

_FIRST: dict[str, list[str]] = {
    "ic_by_period": ["period", "horizon", "mean_ic", "ic_t", "spread", "spread_t", "n_dates"],
    "ic_by_regime": ["regime", "state", "horizon", "mean_ic", "ic_t", "spread", "spread_t", "n_dates"],
    "ic_by_sector": ["sector", "horizon", "mean_ic", "ic_t", "mean_breadth", "n_dates"],
    "ic_decay": ["month_ahead", "marginal_ic", "t", "cumulative_ic"],
    "cap_weighted": ["horizon", "spread_equal", "spread_equal_t", "spread_cap", "spread_cap_t", "n_dates_cap"],
    "cap_weighted_backtest": ["portfolio", "weighting", "ann_return", "ann_vol", "sharpe", "max_drawdown", "n_months"],
    "relative": ["portfolio", "active_return_ann", "tracking_error_ann", "information_ratio", "beta", "alpha_ann",
                 "alpha_t", "comparison"],
}


def _ordered(key: str, df: pd.DataFrame) -> pd.DataFrame:
    first = _FIRST.get(key, [])
    if df.empty:
        return pd.DataFrame(columns=first or list(df.columns))
    cols = [c for c in first if c in df.columns] + [c for c in df.columns if c not in first]
    return df[cols].reset_index(drop=True)


def stability_tables(result: StudyResult) -> dict[str, pd.DataFrame]:
    """The tables of :data:`STABILITY_TABLES` (new frames; empty with their header when not available)."""
    rel = result.relative.rename_axis("portfolio").reset_index() if not result.relative.empty else result.relative
    return {
        "relative": _ordered("relative", rel),
        "ic_by_period": _ordered("ic_by_period", result.ic_by_period),
        "period_difference": _ordered("period_difference", result.period_difference),
        "ic_by_regime": _ordered("ic_by_regime", result.ic_by_regime),
        "ic_by_sector": _ordered("ic_by_sector", result.ic_by_sector),
        "ic_decay": _ordered("ic_decay", result.ic_decay),
        "fm_controls": _ordered("fm_controls", result.fm_controls),
        "cap_weighted": _ordered("cap_weighted", result.cap_weighted),
        "cap_weighted_backtest": _ordered("cap_weighted_backtest", result.cap_weighted_backtest),
    }
