"""Summaries of a backtest for reading: the Sharpe ratio's t, the cohorts' record, the drawdowns.

References
----------
Lo, A. W. (2002). FAJ 58(4) (Sharpe-ratio standard error); Newey, W. K. & West, K. D. (1987).
Econometrica 55(3); Hansen, L. P. & Hodrick, R. J. (1980). JPE 88(5) (h - 1 lags for
overlapping holding periods).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from valuesift.core.inference.hac import headline_inference, mean_inference
from valuesift.core.inference.sharpe import sharpe_ratio_se, sharpe_ratio_t

__all__ = ["sharpe_inference", "cohort_summary", "drawdown_summary", "DRAWDOWN_DEPTH"]

#: Depth below the running peak counted by :func:`drawdown_summary` (common practice: 10 %).
DRAWDOWN_DEPTH = 0.10


def sharpe_inference(stats: pd.DataFrame) -> pd.DataFrame:
    """Monthly Sharpe ratio, its standard error and t per portfolio (Lo 2002, iid case).

    Parameters
    ----------
    stats : DataFrame (portfolios x statistics)
        A backtest's ``stats`` with ``sharpe`` (annual, ``sqrt(12)`` x monthly) and ``n_months``.

    Returns
    -------
    DataFrame (portfolios x ``sharpe_monthly, se_monthly, t, n_months``)

    Notes
    -----
    ``SR_m = sharpe / sqrt(12)``, ``SE = sqrt((1 + SR_m^2/2)/T)``, ``t = SR_m / SE``.
    """
    sr_m = stats["sharpe"].to_numpy(dtype=float) / math.sqrt(12.0)
    n = stats["n_months"].to_numpy(dtype=float)
    se = [sharpe_ratio_se(float(a), int(b)) if math.isfinite(b) else math.nan for a, b in zip(sr_m, n)]
    t = [sharpe_ratio_t(float(a), int(b)) if math.isfinite(b) else math.nan for a, b in zip(sr_m, n)]
    return pd.DataFrame({"sharpe_monthly": sr_m, "se_monthly": se, "t": t, "n_months": n}, index=stats.index)


def cohort_summary(excess: pd.Series, holding_months: int) -> pd.Series:
    """The record of the cohorts against the comparison: count, wins, mean, t and the extremes.

    Parameters
    ----------
    excess : Series (formation dates)
        Each cohort's return over its holding period minus the comparison's (NaN: not completed).
    holding_months : int
        Holding period; cohorts overlap by ``holding_months - 1`` months.

    Returns
    -------
    Series with ``n_cohorts, n_beat, share_beat, mean_excess, sd_excess, t_naive, t_hac,
    hac_lags`` (floats) and ``best_formed, best_excess, worst_formed, worst_excess``.

    Notes
    -----
    ``t_naive = mean / (sd / sqrt(n))`` treats the cohorts as independent, which overlapping
    cohorts are not; ``t_hac`` is the headline t with ``holding_months - 1`` lags (Hansen &
    Hodrick 1980).
    """
    ex = pd.to_numeric(excess, errors="coerce")
    ex = ex[np.isfinite(ex.to_numpy(dtype=float))]
    inf = mean_inference(ex.to_numpy(dtype=float), max(int(holding_months) - 1, 0))
    head = headline_inference(ex.to_numpy(dtype=float), max(int(holding_months), 1), "overlap")
    n = int(ex.size)
    beat = int((ex > 0).sum())
    return pd.Series({
        "n_cohorts": float(n),
        "n_beat": float(beat),
        "share_beat": beat / n if n else math.nan,
        "mean_excess": inf["mean"],
        "sd_excess": inf["sd"],
        "t_naive": inf["t_naive"],
        "t_hac": head["t"],
        "hac_lags": float(head["lags"]),
        "best_formed": ex.idxmax() if n else pd.NaT,
        "best_excess": float(ex.max()) if n else math.nan,
        "worst_formed": ex.idxmin() if n else pd.NaT,
        "worst_excess": float(ex.min()) if n else math.nan,
    }, dtype=object)


def drawdown_summary(drawdown: pd.DataFrame, depth: float = DRAWDOWN_DEPTH) -> pd.DataFrame:
    """Per portfolio: the deepest drawdown, the month it was reached, and the share of months deeper than ``depth``.

    Parameters
    ----------
    drawdown : DataFrame (months x portfolios)
        Fall from the running peak, as a negative fraction (or zero) per month.

    Returns
    -------
    DataFrame (portfolios x ``deepest, trough, share_below, n_months``); ``share_below``
    counts months with ``drawdown < -depth``.
    """
    rows = {}
    for col in drawdown.columns:
        s = pd.to_numeric(drawdown[col], errors="coerce").dropna()
        n = int(s.size)
        rows[col] = {
            "deepest": float(s.min()) if n else math.nan,
            "trough": s.idxmin() if n else pd.NaT,
            "share_below": float((s < -depth).sum() / n) if n else math.nan,
            "n_months": float(n),
        }
    out = pd.DataFrame.from_dict(rows, orient="index", columns=["deepest", "trough", "share_below", "n_months"])
    out.index.name = "portfolio"
    return out
