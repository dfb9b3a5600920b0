"""Judging the best configuration of a sweep: its deflated Sharpe ratio and its record on a hold-out.

References
----------
Bailey, D. H. & López de Prado, M. (2014). J. Portfolio Mgmt 40(5) (deflated Sharpe ratio).
Harvey, C. R., Liu, Y. & Zhu, H. (2016). ... and the cross-section of expected returns. Rev. Financ. Stud.
29(1) (the best of many tried looks better than it is; higher t-hurdles).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pandas as pd

from valuesift.core.multiple_testing.deflated import expected_max_sharpe, psr_from_moments

__all__ = ["deflated_best", "holdout_report", "holdout_sentence"]


def _ok(table: pd.DataFrame) -> pd.DataFrame:
    return table[table["status"] == "ok"]


def deflated_best(table: pd.DataFrame) -> dict[str, Any]:
    """PSR and DSR of the row with the highest long-short Sharpe ratio, against the distinct trials.

    Notes
    -----
    Trials: every (distinct configuration, horizon) row with a per-period Sharpe ratio ``sr_monthly``
    (in-sample when the sweep has a hold-out); ``N`` their count and ``V`` the variance (ddof 1) of their
    ``sr_monthly``.  ``SR* = E[max of N null Sharpe ratios]`` (:func:`expected_max_sharpe`);
    ``psr = PSR(0)`` and ``dsr = PSR(SR*)`` of the best row from its moments
    (:func:`psr_from_moments`).  Rows of one configuration at several horizons are correlated, so N
    overstates the independent trials and the DSR errs on the strict side.
    """
    t = _ok(table)
    sr = pd.to_numeric(t.get("sr_monthly", pd.Series(dtype=float)), errors="coerce")
    fin = t[np.isfinite(sr.to_numpy(dtype=float))]
    if fin.empty:
        return {"n_trials": 0, "point_id": None, "horizon": None, "sharpe": math.nan, "psr": math.nan,
                "dsr": math.nan, "sr_star_monthly": math.nan, "variance": math.nan}
    srv = fin["sr_monthly"].to_numpy(dtype=float)
    best = fin.iloc[int(np.argmax(srv))]
    n = int(len(fin))
    var = float(np.var(srv, ddof=1)) if n > 1 else 0.0
    star = expected_max_sharpe(n, var)
    args = (float(best["sr_monthly"]), float(best["skew"]), float(best["kurtosis"]), int(best["n_months"]))
    return {"n_trials": n, "point_id": str(best["point_id"]), "horizon": int(best["horizon"]),
            "sharpe": float(best["sharpe"]), "psr": psr_from_moments(*args, 0.0), "dsr": psr_from_moments(*args, star),
            "sr_star_monthly": star, "variance": var}


def holdout_report(table: pd.DataFrame, dimensions: tuple[str, ...], top: int = 10) -> pd.DataFrame:
    """The configurations ranked on the dates before the hold-out, beside their figures on the hold-out.

    Returns up to ``top`` rows (best in-sample first): ``point_id``, the dimensions, ``horizon``,
    ``rank_in`` / ``ic_t`` / ``mean_ic`` / ``sharpe`` (in-sample) and ``rank_out`` / ``oos_ic_t`` /
    ``oos_mean_ic`` / ``oos_sharpe`` (hold-out).  Ranks are by the headline IC t among the rows that
    have one (1 = best); empty without hold-out columns.
    """
    if "oos_ic_t" not in table.columns:
        return pd.DataFrame()
    t = _ok(table).copy()
    t = t[np.isfinite(pd.to_numeric(t["ic_t"], errors="coerce").to_numpy(dtype=float))]
    t["rank_in"] = t["ic_t"].rank(ascending=False, method="min").astype(int)
    oos = pd.to_numeric(t["oos_ic_t"], errors="coerce")
    t["rank_out"] = oos.rank(ascending=False, method="min")
    cols = ["point_id", *dimensions, "horizon", "rank_in", "mean_ic", "ic_t", "sharpe", "rank_out", "oos_mean_ic",
            "oos_ic_t", "oos_sharpe", "oos_n_dates", "oos_too_short"]
    return t.sort_values(["rank_in", "horizon"])[[c for c in cols if c in t.columns]].head(top).reset_index(drop=True)


def holdout_sentence(report: pd.DataFrame, holdout: str, n_rows: int) -> str:
    """The plain sentence on the best in-sample configuration's record on the hold-out."""
    if report.empty:
        return f"No configuration had an information coefficient before {holdout}."
    b = report.iloc[0]
    r_out = b["rank_out"]
    out = "no rank (no hold-out figure)" if not np.isfinite(r_out) else f"rank {int(r_out)} of {n_rows}"
    short = " The hold-out is too short to judge at this horizon." if bool(b.get("oos_too_short", False)) else ""
    return (f"The configuration ranked best on the dates before {holdout} (IC t {float(b['ic_t']):.2f}) has an IC t "
            f"of {float(b['oos_ic_t']):.2f} on the hold-out from {holdout} ({out}).{short} The in-sample best is "
            f"flattered by having been chosen from many: judge it by the hold-out figure and by a t-hurdle of about "
            f"3 (Harvey, Liu & Zhu 2016).")
