"""The comparison table of a sweep and its multiple-testing adjustment."""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from scipy import stats as _st

from valuesift.core.multiple_testing.adjust import ALPHA, adjust_pvalues, two_sided_p

__all__ = ["comparison_table", "heatmap_cells", "METRIC_COLUMNS", "OOS_COLUMNS"]


#: Numeric columns per (grid point, horizon), in table order (after the adjusted ones are added).
METRIC_COLUMNS: tuple[str, ...] = (
    "mean_ic", "ic_t", "ic_p", "ic_p_bh", "ic_p_bonferroni", "ic_t_bh", "ic_t_bonferroni",
    "spread", "spread_t", "spread_p", "spread_p_bh", "spread_t_bh", "spread_t_bonferroni",
    "sharpe", "sharpe_t", "sharpe_p", "sharpe_p_bh", "sharpe_t_bh", "sharpe_t_bonferroni",
    "max_drawdown", "breadth", "n_dates", "too_short", "sr_monthly", "skew", "kurtosis", "n_months",
)
#: Hold-out columns (present when the sweep was run with a hold-out).
OOS_COLUMNS: tuple[str, ...] = (
    "oos_mean_ic", "oos_ic_t", "oos_spread", "oos_spread_t", "oos_n_dates", "oos_too_short", "oos_sharpe",
    "oos_sharpe_t", "oos_max_drawdown",
)
_RAW = ("mean_ic", "ic_t", "spread", "spread_t", "sharpe", "sharpe_t", "max_drawdown", "breadth", "n_dates",
        "too_short", "sr_monthly", "skew", "kurtosis", "n_months")


def _t_from_p(p: np.ndarray, sign: np.ndarray) -> np.ndarray:
    """The t on the normal scale with the same two-sided p: ``sign(t) Phi^{-1}(1 - p/2)``."""
    out = np.full(p.shape, np.nan)
    ok = np.isfinite(p) & np.isfinite(sign)
    out[ok] = np.sign(sign[ok]) * _st.norm.isf(p[ok] / 2.0)
    return out


def comparison_table(rows: list[dict[str, Any]], dimensions: tuple[str, ...]) -> pd.DataFrame:
    """One row per (grid point, horizon) with raw and adjusted statistics.

    Parameters
    ----------
    rows : list of dict
        ``point_id, status, error, horizon``, the dimension labels and the raw
        metrics ``mean_ic, ic_t, spread, spread_t, sharpe, max_drawdown,
        breadth, n_dates`` (NaN for failed points).
    dimensions : tuple of str
        The varied dimensions (their columns come right after ``point_id``).

    Returns
    -------
    DataFrame
        Columns ``point_id``, the dimensions, ``horizon``, ``status``,
        ``error``, then :data:`METRIC_COLUMNS` and ``significant_bh`` /
        ``significant_bonferroni`` (adjusted p at most :data:`ALPHA`).

    Notes
    -----
    The adjustment runs across every row with a finite HAC t (all points and
    horizons of the sweep); the spread t and the Sharpe ratio's t (Lo 2002) are adjusted
    the same way (``spread_t_bh``, ``sharpe_t_bh``, ...).  ``sharpe`` is the long-short held for
    the row's horizon, so it varies by horizon.  ``ic_t_bh`` and ``ic_t_bonferroni`` put the
    adjusted p back on the t scale, ``sign(t) Phi^{-1}(1 - p_adj / 2)``, so an
    adjusted t above 1.96 means significant at 5 % after adjustment.
    """
    df = pd.DataFrame(rows)
    base = ["point_id", *dimensions, "horizon", "status", "error"]
    for c in base + list(_RAW):
        if c not in df.columns:
            df[c] = np.nan if c not in ("status", "error", "point_id") else None
    t = df["ic_t"].to_numpy(dtype=float)
    p = two_sided_p(t)
    bh, bon = adjust_pvalues(p)
    df["ic_p"] = p
    df["ic_p_bh"] = bh
    df["ic_p_bonferroni"] = bon
    df["ic_t_bh"] = _t_from_p(bh, t)
    df["ic_t_bonferroni"] = _t_from_p(bon, t)
    df["significant_bh"] = np.isfinite(bh) & (bh <= ALPHA)
    df["significant_bonferroni"] = np.isfinite(bon) & (bon <= ALPHA)
    for stat in ("spread", "sharpe"):  # the same adjustment for the spread t and the Sharpe ratio's t
        ts = df[f"{stat}_t"].to_numpy(dtype=float)
        ps = two_sided_p(ts)
        sbh, sbon = adjust_pvalues(ps)
        df[f"{stat}_p"], df[f"{stat}_p_bh"] = ps, sbh
        df[f"{stat}_t_bh"], df[f"{stat}_t_bonferroni"] = _t_from_p(sbh, ts), _t_from_p(sbon, ts)
    df["horizon"] = df["horizon"].astype(int)
    for c in ("too_short", "oos_too_short"):  # missing for failed points: a nullable boolean
        if c in df.columns:
            df[c] = pd.array([None if v is None or (isinstance(v, float) and np.isnan(v)) else bool(v)
                              for v in df[c]], dtype="boolean")
    oos = [c for c in OOS_COLUMNS if c in df.columns]
    return df[base + list(METRIC_COLUMNS) + ["significant_bh", "significant_bonferroni"] + oos].reset_index(drop=True)


def heatmap_cells(table: pd.DataFrame, configs: dict[str, dict[str, Any]]) -> pd.DataFrame:
    """Per (signal, horizon): the largest Benjamini-Hochberg adjusted IC t and how many configurations it is the best of.

    Parameters
    ----------
    table : DataFrame
        :func:`comparison_table` of a sweep.
    configs : dict
        The sweep's settings by point id (the signal of a sweep without a ``signal`` dimension).

    Returns
    -------
    DataFrame
        ``signal`` (code), ``horizon``, ``best_t_bh`` (the largest ``ic_t_bh`` of the cell),
        ``raw_t`` (that row's ``ic_t``) and ``n_configs`` (rows of the cell with a finite adjusted t).
    """
    t = table[table["status"] == "ok"].copy()
    t["signal"] = [str(configs[p]["signal"]) for p in t["point_id"]]
    t = t[np.isfinite(t["ic_t_bh"].to_numpy(dtype=float))]
    if t.empty:
        return pd.DataFrame(columns=["signal", "horizon", "best_t_bh", "raw_t", "n_configs"])
    best = t.loc[t.groupby(["signal", "horizon"])["ic_t_bh"].idxmax()]
    counts = t.groupby(["signal", "horizon"]).size().rename("n_configs")
    out = best[["signal", "horizon", "ic_t_bh", "ic_t"]].rename(columns={"ic_t_bh": "best_t_bh", "ic_t": "raw_t"})
    return out.merge(counts.reset_index(), on=["signal", "horizon"]).reset_index(drop=True)
