"""The top-minus-bottom quantile spread and the shape of the quantile means."""

from __future__ import annotations

import numpy as np
import pandas as pd

from valuesift.core.choices import HacLagRule
from valuesift.core.correlation.ranks import average_ranks
from valuesift.core.inference.nonoverlap import headline_block
from valuesift.core.portfolio.performance import annualise

__all__ = ["monotonicity", "spread_summary"]


def monotonicity(mean_by_quantile: np.ndarray) -> float:
    """Spearman correlation of quantile order (1..n) with mean return (NaN if undefined)."""
    y = np.asarray(mean_by_quantile, dtype=float)
    ok = np.isfinite(y)
    if ok.sum() < 3 or np.all(y[ok] == y[ok][0]):
        return float("nan")
    # scipy.stats.spearmanr's own steps (rankdata of both columns, then np.corrcoef), without importing
    # scipy.stats (about 1 s of a study's start-up, python -X importtime); average ranks as rankdata's
    ranks = average_ranks(np.vstack([np.arange(1, y.size + 1)[ok].astype(float), y[ok]]))
    return float(np.corrcoef(ranks.T, rowvar=False)[1, 0])


def spread_summary(
    spread: np.ndarray, quantile_mean: np.ndarray, horizons: tuple[int, ...], rule: HacLagRule
) -> pd.DataFrame:
    """Per-horizon summary of the top-minus-bottom quantile spread.

    Parameters
    ----------
    spread : ndarray (D x H)
        Cheapest-minus-dearest quantile forward return per date and horizon.
    quantile_mean : ndarray (H x Q)
        Time-mean forward return of each quantile per horizon.
    horizons : tuple of int
        The horizons (columns of ``spread``, rows of ``quantile_mean``), in months.
    rule : {"overlap", "overlap_or_auto"}
        HAC lag rule (:func:`valuesift.core.inference.hac.hac_lags`).

    Returns
    -------
    DataFrame (H x statistics)
        ``mean, se_hac, t_hac, hac_lags, ci_low, ci_high, n_dates, se_naive,
        mean_annualised, monotonicity``.

    Notes
    -----
    ``mean`` is the time-mean of the spread over the dates where it is defined,
    with its HAC standard error; ``mean_annualised`` is the annualised cheapest
    quantile mean minus the annualised dearest quantile mean,
    ``(1 + m_n)^(12/h) - (1 + m_1)^(12/h)``.
    """
    rows = []
    for j, h in enumerate(horizons):
        inf = headline_block(spread[:, j], h, rule)
        qm = quantile_mean[j]
        rows.append({"horizon": h, "mean": inf["mean"], "se_hac": inf["se"], "t_hac": inf["t"],
                     "hac_lags": int(inf["lags"]), "ci_low": inf["ci_low"], "ci_high": inf["ci_high"],
                     "n_dates": int(inf["n_dates"]), "se_naive": inf["se_naive"],
                     "mean_annualised": float(annualise(qm[-1], h) - annualise(qm[0], h)),
                     "monotonicity": monotonicity(qm), "se_method": inf["method"], "t_bartlett": inf["t_bartlett"],
                     "t_nonoverlap_mean": inf["t_nonoverlap_mean"], "t_nonoverlap_min": inf["t_nonoverlap_min"],
                     "t_nonoverlap_max": inf["t_nonoverlap_max"], "independent_periods": inf["independent_periods"],
                     "too_short": inf["too_short"], "evidence": inf["evidence"]})
    return pd.DataFrame(rows).set_index("horizon")
