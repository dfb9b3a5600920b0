"""Study fields on where the reward comes from: relative to the comparison, by period, regime and sector,
its decay, Fama-MacBeth with controls, and the cap-weighted view.

:func:`stability_fields` is called by :func:`valuesift.core.study.run_study` after the derived fields;
every number comes from a public function of its domain folder (``core.portfolio.relative``,
``core.stability``, ``core.correlation.decay``, ``core.regression.multi`` / ``factors``,
``core.portfolio.capweight``); this module only feeds them the study's arrays.
"""

from __future__ import annotations

import math
import os
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from valuesift.core.correlation.decay import half_life, ic_decay, rank_autocorrelation
from valuesift.core.errors import ConfigError
from valuesift.core.inference.nonoverlap import headline_block
from valuesift.core.panel import Panel
from valuesift.core.portfolio.capweight import cap_weighted_monthly, cap_weighted_quantile_means
from valuesift.core.portfolio.performance import max_drawdown, sharpe_ratio
from valuesift.core.portfolio.relative import RELATIVE_KEYS, relative_performance
from valuesift.core.regression.factors import log_market_cap, momentum_12_1, rolling_beta
from valuesift.core.regression.multi import fm_multi, residualise
from valuesift.core.correlation.ranks import row_sort
from valuesift.core.correlation.rowwise import row_spearman
from valuesift.core.returns import excess_returns, forward_returns, level_forward_returns, monthly_returns, price_track
from valuesift.core.signals.clean import sector_codes, sector_relative
from valuesift.core.stability.sectors import sector_ic_table
from valuesift.core.stability.subsets import (
    default_split,
    difference_of_means,
    regime_masks,
    split_masks,
    subset_block,
    trailing_volatility,
    year_masks,
)
from valuesift.core.study.steps import per_horizon, to_month_grid

if TYPE_CHECKING:  # pragma: no cover
    from valuesift.core.result import StudyResult

__all__ = ["stability_fields", "comparison_column", "RELATIVE_PORTFOLIOS", "CONTROL_WORDS"]

#: The backtest portfolios measured against the comparison.
RELATIVE_PORTFOLIOS: tuple[str, ...] = ("cheapest", "long_short")
#: Threads for the decay table on large panels: ``VALUESIFT_THREADS`` (as the study's steps), else up to 2.
_THREADS_SETTING = os.environ.get("VALUESIFT_THREADS", "")
_WORKERS = int(_THREADS_SETTING) if _THREADS_SETTING.isdigit() and int(_THREADS_SETTING) > 0 else min(2, os.cpu_count() or 1)
#: How a person reads each Fama-MacBeth control.
CONTROL_WORDS: dict[str, str] = {"log_market_cap": "log market capitalisation", "momentum": "momentum (12-1)",
                                 "beta": "market beta (60 months)", "sector": "sector dummies"}


def _on_dates(s: pd.Series, dates: pd.DatetimeIndex) -> np.ndarray:
    return pd.to_numeric(s, errors="coerce").reindex(dates).to_numpy(dtype=float)


def comparison_column(result: "StudyResult") -> str:
    """The series the relative figures, regimes and betas are measured against: the benchmark when a
    benchmark file was given, else the equal-weight universe."""
    return "benchmark" if "benchmark" in result.backtest.returns.columns else "universe"


def _relative(result: "StudyResult") -> pd.DataFrame:
    bt = result.backtest
    col = comparison_column(result)
    comp = bt.returns[col].to_numpy(dtype=float)
    rows = {}
    for p in RELATIVE_PORTFOLIOS:
        if p in bt.returns.columns:
            rows[p] = relative_performance(bt.returns[p].to_numpy(dtype=float), comp, result.config.hac_lag_rule, col)
    out = pd.DataFrame.from_dict(rows, orient="index", columns=[*RELATIVE_KEYS, "comparison"])
    out.index.name = "portfolio"
    return out


def _stat_row(inf: dict[str, Any], spi: dict[str, Any]) -> dict[str, Any]:
    return {"mean_ic": inf["mean"], "ic_t": inf["t"], "spread": spi["mean"], "spread_t": spi["t"],
            "n_dates": int(inf["n_dates"]), "too_short": bool(inf["too_short"]), "evidence": inf["evidence"],
            "spread_evidence": spi["evidence"]}


def _periods(result: "StudyResult", split: pd.Timestamp) -> tuple[pd.DataFrame, pd.DataFrame]:
    cfg = result.config
    dates = pd.DatetimeIndex(result.rank_ic.index)
    masks = {**year_masks(dates), **split_masks(dates, split)}
    rows, diffs = [], []
    for h in cfg.horizons:
        ic = result.rank_ic[h].to_numpy(dtype=float)
        sp = result.spread[h].to_numpy(dtype=float)
        for label, m in masks.items():
            rows.append({"period": label, "horizon": int(h),
                         **_stat_row(subset_block(ic, m, h, cfg.hac_lag_rule), subset_block(sp, m, h, cfg.hac_lag_rule))})
        a, b = split_masks(dates, split).values()
        di, ds = difference_of_means(ic, a, b, h, cfg.hac_lag_rule), difference_of_means(sp, a, b, h, cfg.hac_lag_rule)
        diffs.append({"horizon": int(h), "split": f"{split.year:04d}-{split.month:02d}",
                      "ic_difference": di["difference"], "ic_difference_t": di["t"],
                      "spread_difference": ds["difference"], "spread_difference_t": ds["t"],
                      "too_short": di["too_short"]})
    return pd.DataFrame(rows), pd.DataFrame(diffs)


def _comparison_monthly(result: "StudyResult", dates: pd.DatetimeIndex) -> np.ndarray:
    """The comparison's monthly return on the date axis, dated at the end of the month earned."""
    return _on_dates(result.backtest.returns[comparison_column(result)], dates)


def _regimes(result: "StudyResult") -> pd.DataFrame:
    cfg = result.config
    dates = pd.DatetimeIndex(result.rank_ic.index)
    mc = _comparison_monthly(result, dates)
    level = np.concatenate([[1.0], np.cumprod(1.0 + np.nan_to_num(mc[1:], nan=0.0))])
    level = np.where(np.isfinite(mc) | (np.arange(mc.size) == 0), level, np.nan)
    vol = trailing_volatility(mc)
    rows = []
    for h in cfg.horizons:
        masks = regime_masks(level_forward_returns(level, int(h)), vol)
        ic = result.rank_ic[h].to_numpy(dtype=float)
        sp = result.spread[h].to_numpy(dtype=float)
        for (regime, state), m in masks.items():
            rows.append({"regime": regime, "state": state, "horizon": int(h),
                         **_stat_row(subset_block(ic, m, h, cfg.hac_lag_rule), subset_block(sp, m, h, cfg.hac_lag_rule))})
    return pd.DataFrame(rows)


def _arrays(result: "StudyResult") -> tuple[np.ndarray, dict[int, np.ndarray]]:
    z = result.signal_z.to_numpy(dtype=float)
    fwd = {int(h): result.forward_returns[h].to_numpy(dtype=float) for h in result.config.horizons}
    return z, fwd


def _grid_panel(panel: Panel) -> Panel:
    return to_month_grid(panel, [])


def _track(grid: Panel) -> Any:
    price = grid.prices.to_numpy(dtype=float)
    valid = grid.valid_price_mask()
    div = grid.dividend_matrix().to_numpy(dtype=float) if grid.dividends is not None else np.zeros_like(price)
    return price_track(price, valid, div), valid


def _one_month(result: "StudyResult", grid: Panel, track: Any, valid: np.ndarray) -> np.ndarray:
    """The study's one-month forward return (the same steps as the study's own horizons)."""
    if 1 in result.config.horizons:
        return result.forward_returns[1].to_numpy(dtype=float)
    cfg = result.config
    r, _ = forward_returns(track, valid, 1, cfg.dividend_treatment, cfg.delisting_return)
    r = np.where(result.universe.to_numpy(dtype=bool), r, np.nan)
    bench = grid.benchmark.to_numpy(dtype=float) if grid.benchmark is not None else None
    r = excess_returns(r, cfg.excess_over, level_forward_returns(bench, 1) if bench is not None else None)
    if cfg.sector_neutral and grid.sectors is not None:
        r = sector_relative(r, sector_codes(pd.Index(grid.prices.columns), grid.sectors)[0])
    return r


def _decay(result: "StudyResult", r1: np.ndarray) -> tuple[pd.DataFrame, pd.Series]:
    z = result.signal_z.to_numpy(dtype=float)
    z_sort = row_sort(z)  # sorted once for the decay table and both autocorrelations (the same numbers)
    tab = ic_decay(z, r1, result.config.min_breadth, result.config.hac_lag_rule, z_ranks=z_sort, workers=_WORKERS)
    ac1, n1 = rank_autocorrelation(z, 1, result.config.min_breadth, z_sort)
    ac12, _ = rank_autocorrelation(z, 12, result.config.min_breadth, z_sort)
    facts = pd.Series({"half_life_months": half_life(tab["marginal_ic"].to_numpy(dtype=float)),
                       "rank_autocorrelation_1m": ac1, "rank_autocorrelation_12m": ac12,
                       "autocorrelation_dates": float(n1), "months": float(len(tab))}, dtype=float)
    return tab, facts


def _controls(result: "StudyResult", grid: Panel, track: Any, valid: np.ndarray) -> dict[str, np.ndarray]:
    dates = pd.DatetimeIndex(result.rank_ic.index)
    out: dict[str, np.ndarray] = {}
    if grid.market_cap is not None:
        out["log_market_cap"] = log_market_cap(grid.market_cap.to_numpy(dtype=float))
    out["momentum"] = np.where(valid, momentum_12_1(track.tri), np.nan)
    m = monthly_returns(track, result.config.delisting_return)
    ended = np.vstack([np.full((1, m.shape[1]), np.nan), m[:-1]])  # row t: the month ending at t
    out["beta"] = rolling_beta(ended, _comparison_monthly(result, dates))
    return {k: v for k, v in out.items() if np.isfinite(v).any()}


def _fm_controls(result: "StudyResult", grid: Panel, track: Any, valid: np.ndarray) -> pd.DataFrame:
    cfg = result.config
    z, fwd = _arrays(result)
    ctrl = _controls(result, grid, track, valid)
    groups = None
    if grid.sectors is not None:
        codes, _ = sector_codes(pd.Index(grid.prices.columns), grid.sectors)
        groups = codes if np.unique(codes).size > 1 else None
    used = [CONTROL_WORDS[k] for k in ctrl] + ([CONTROL_WORDS["sector"]] if groups is not None else [])
    resid = residualise(z, list(ctrl.values()), groups)
    plain_is_study = not (cfg.fm_log_market_cap or cfg.fm_sector_dummies)
    resid_sort = row_sort(resid)  # sorted once: each horizon's net IC ranks its names from it (same numbers)

    def one(h: int) -> dict[str, Any]:
        # without controls: the study's own slopes when it ran none (the same regression), else computed here
        plain = (result.fm_slopes[h].to_numpy(dtype=float) if plain_is_study else fm_multi(fwd[h], [z])[0][:, 0])
        full, _ = fm_multi(fwd[h], [z, *ctrl.values()], groups)
        a, b = headline_block(plain, h, cfg.hac_lag_rule), headline_block(full[:, 0], h, cfg.hac_lag_rule)
        rho, n = row_spearman(resid, fwd[h], resid_sort)
        net = headline_block(np.where(n < cfg.min_breadth, np.nan, rho), h, cfg.hac_lag_rule)
        row = {"horizon": int(h), "slope_without": a["mean"], "t_without": a["t"], "slope_with": b["mean"],
               "t_with": b["t"], "n_dates_with": int(b["n_dates"]), "ic_net": net["mean"], "ic_net_t": net["t"],
               "n_dates_net": int(net["n_dates"]), "too_short": bool(b["too_short"] or a["too_short"]),
               "evidence_with": b["evidence"], "controls": ", ".join(used) if used else "none"}
        for j, k in enumerate(ctrl, start=1):
            ci = headline_block(full[:, j], h, cfg.hac_lag_rule)
            row[f"slope_{k}"], row[f"t_{k}"] = ci["mean"], ci["t"]
        return row

    rows = per_horizon(one, tuple(cfg.horizons), int(z.size))  # the horizons side by side on large panels
    return pd.DataFrame(rows)


def _capweighted(result: "StudyResult", grid: Panel) -> tuple[pd.DataFrame, pd.DataFrame]:
    if grid.market_cap is None:
        return pd.DataFrame(), pd.DataFrame()
    cfg = result.config
    cap = grid.market_cap.to_numpy(dtype=float)
    q = result.quantile.to_numpy(dtype=float)
    rows = []
    for h in cfg.horizons:
        fwd = result.forward_returns[h].to_numpy(dtype=float)
        cw = cap_weighted_quantile_means(q, fwd, cap, cfg.n_quantiles)
        a = headline_block(result.spread[h].to_numpy(dtype=float), h, cfg.hac_lag_rule)
        b = headline_block(cw[:, -1] - cw[:, 0], h, cfg.hac_lag_rule)
        rows.append({"horizon": int(h), "spread_equal": a["mean"], "spread_equal_t": a["t"], "spread_cap": b["mean"],
                     "spread_cap_t": b["t"], "n_dates_cap": int(b["n_dates"]), "too_short": bool(b["too_short"]),
                     **{f"q{k + 1}_cap": float(np.nanmean(cw[:, k])) if np.isfinite(cw[:, k]).any() else math.nan
                        for k in range(cfg.n_quantiles)}})
    track, _valid = _track(grid)
    monthly = monthly_returns(track, cfg.delisting_return)
    cwm = cap_weighted_monthly(q, monthly, cap, cfg.n_quantiles, cfg.holding_months)
    bt = result.backtest
    rf = bt.risk_free_monthly
    stats = []
    for p in RELATIVE_PORTFOLIOS:
        ew = bt.gross_returns[p].to_numpy(dtype=float)
        cws = pd.Series(cwm[p][:-1], index=pd.DatetimeIndex(result.rank_ic.index[1:], name="date"))
        cwv = cws.reindex(bt.gross_returns.index).to_numpy(dtype=float)
        for weighting, r in (("equal", ew), ("cap", cwv)):
            x = r[np.isfinite(r)]
            n = int(x.size)
            ann = float(np.expm1(12.0 / n * np.sum(np.log1p(x)))) if n and np.all(x > -1) else math.nan
            stats.append({"portfolio": p, "weighting": weighting, "ann_return": ann,
                          "ann_vol": float(x.std(ddof=1) * math.sqrt(12.0)) if n > 1 else math.nan,
                          "sharpe": sharpe_ratio(x, 0.0 if p == "long_short" else rf),
                          "max_drawdown": max_drawdown(x), "n_months": n})
    return pd.DataFrame(rows), pd.DataFrame(stats)


def _sectors(result: "StudyResult", grid: Panel) -> pd.DataFrame:
    if grid.sectors is None:
        return pd.DataFrame()
    cfg = result.config
    z, fwd = _arrays(result)
    codes, names = sector_codes(pd.Index(grid.prices.columns), grid.sectors)
    tiebreak = np.argsort(np.argsort(np.asarray(pd.Index(grid.prices.columns).astype(str)), kind="stable"),
                          kind="stable")
    return sector_ic_table(z, fwd, codes, names, cfg.n_quantiles, cfg.min_breadth, cfg.hac_lag_rule, tiebreak)


def _split(result: "StudyResult") -> pd.Timestamp:
    dates = pd.DatetimeIndex(result.rank_ic.index)
    text = getattr(result.config, "split_month", "") or ""
    if text:
        split = pd.Timestamp(f"{text}-01")
        if len(dates) and not (dates.min() < split <= dates.max()):
            raise ConfigError(f"The split month {text} leaves one side empty: the study's dates run from "
                              f"{dates.min():%Y-%m} to {dates.max():%Y-%m}.",
                              hint="Choose a month after the first date and not after the last, or leave it empty.",
                              setting="split_month")
        return split
    h0 = min(result.config.horizons)
    return default_split(dates, np.isfinite(result.rank_ic[h0].to_numpy(dtype=float)))


def stability_fields(result: "StudyResult", panel: Panel) -> dict[str, Any]:
    """The fields of :class:`~valuesift.core.result.StudyResult` from ``relative`` on, by name."""
    grid = _grid_panel(panel)
    track, valid = _track(grid)
    periods, diff = _periods(result, _split(result))
    decay, facts = _decay(result, _one_month(result, grid, track, valid))
    cw, cwb = _capweighted(result, grid)
    # which comparison was used is said by ``relative.comparison`` and by every sentence that shows the figures
    return {
        "relative": _relative(result),
        "ic_by_period": periods,
        "period_difference": diff,
        "ic_by_regime": _regimes(result),
        "ic_by_sector": _sectors(result, grid),
        "ic_decay": decay,
        "decay_facts": facts,
        "fm_controls": _fm_controls(result, grid, track, valid),
        "cap_weighted": cw,
        "cap_weighted_backtest": cwb,
    }
