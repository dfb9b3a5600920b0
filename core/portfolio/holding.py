"""The backtest of a finished study at another holding period (cohorts held h months)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from valuesift.core.panel import Panel
from valuesift.core.portfolio.backtest import BacktestResult, run_backtest
from valuesift.core.result import StudyResult
from valuesift.core.returns import monthly_returns, price_track
from valuesift.core.study.steps import to_month_grid

__all__ = ["MonthlyInputs", "monthly_inputs", "backtest_at_holding"]


class MonthlyInputs:
    """The month grid's one-month returns and benchmark level, computed once for several backtests."""

    def __init__(self, panel: Panel) -> None:
        grid = to_month_grid(panel, [])
        price = grid.prices.to_numpy(dtype=float)
        valid = grid.valid_price_mask()
        div = grid.dividend_matrix().to_numpy(dtype=float) if grid.dividends is not None else np.zeros_like(price)
        self._track = price_track(price, valid, div)
        self._monthly: dict[float, np.ndarray] = {}
        self.dates = pd.DatetimeIndex(grid.prices.index)
        self.securities = pd.Index(grid.prices.columns)
        self.bench = grid.benchmark.to_numpy(dtype=float) if grid.benchmark is not None else None

    def monthly(self, delisting_return: float) -> np.ndarray:
        """One-month returns (row t: t -> t+1) with this delisting assumption."""
        key = float(delisting_return)
        if key not in self._monthly:
            self._monthly[key] = monthly_returns(self._track, key)
        return self._monthly[key]


def monthly_inputs(panel: Panel) -> MonthlyInputs:
    """:class:`MonthlyInputs` of ``panel``."""
    return MonthlyInputs(panel)


def backtest_at_holding(result: StudyResult, inputs: MonthlyInputs, holding: int) -> BacktestResult:
    """The study's backtest with cohorts held ``holding`` months (the study's own when it is its holding period).

    Same quantiles, universe, costs, risk-free rate and comparison as the study
    (:func:`valuesift.core.portfolio.backtest.run_backtest`).
    """
    cfg = result.config
    if int(holding) == cfg.holding_months:
        return result.backtest
    return run_backtest(result.quantile.to_numpy(dtype=float), cfg.n_quantiles, result.universe.to_numpy(dtype=bool),
                        inputs.monthly(cfg.delisting_return), inputs.dates, inputs.securities, holding_months=int(holding),
                        cost_bps=cfg.transaction_cost_bps, risk_free_annual=cfg.risk_free_annual,
                        comparison=cfg.comparison, benchmark_level=inputs.bench)
