"""Evaluation of a signal against forward returns: ICs, quantiles, Fama-MacBeth, the screen."""

from __future__ import annotations

from valuesift.core.evaluate.famamacbeth import fm_slopes
from valuesift.core.evaluate.ic import ic_by_date, ic_summary, rolling_ic
from valuesift.core.evaluate.quantiles import assign_quantiles, monotonicity, quantile_means, quantile_turnover

__all__ = [
    "ic_by_date",
    "ic_summary",
    "rolling_ic",
    "assign_quantiles",
    "quantile_means",
    "quantile_turnover",
    "monotonicity",
    "fm_slopes",
]
