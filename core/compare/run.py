"""Compare two to eight signals: each signal's own study, the rank correlation between the signals,
and a joint Fama-MacBeth regression that shows which carries information the others do not.

Each signal is studied exactly as its own study would be (:func:`valuesift.core.study.run_study`
with the same settings and only ``signal`` changed), so it keeps its own dates and its headline
numbers equal those of ``valuesift study``.

References
----------
Fama, E. & MacBeth, J. (1973). JPE 81(3) (the joint regression); Spearman, C. (1904) (rank correlation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Callable

import numpy as np
import pandas as pd

from valuesift.core.config import StudyConfig
from valuesift.core.correlation.rowwise import row_spearman
from valuesift.core.errors import ConfigError
from valuesift.core.inference.nonoverlap import headline_block
from valuesift.core.panel import Panel
from valuesift.core.portfolio.holding import backtest_at_holding, monthly_inputs
from valuesift.core.regression.multi import fm_multi
from valuesift.core.result import StudyResult
from valuesift.core.settings import SIGNAL_WORDS
from valuesift.core.study import run_study

__all__ = ["COMPARE_COLUMNS", "CompareResult", "run_compare", "compare_results", "signal_correlation", "MIN_SIGNALS",
           "MAX_SIGNALS"]

MIN_SIGNALS, MAX_SIGNALS = 2, 8

#: Columns of ``compare.csv`` (one row per signal and horizon).
COMPARE_COLUMNS: tuple[str, ...] = (
    "signal", "horizon", "mean_ic", "ic_t", "spread", "spread_t", "sharpe", "max_drawdown", "turnover",
    "mean_breadth", "n_dates", "ic_se_method", "independent_periods", "too_short", "evidence", "spread_evidence",
    "sharpe_t", "holding_months",
)


@dataclass(frozen=True)
class CompareResult:
    """A finished comparison.

    Attributes
    ----------
    signals : tuple of str
        The compared signals, in the order asked.
    config : StudyConfig
        The shared settings (``signal`` is each signal's own).
    table : DataFrame
        :data:`COMPARE_COLUMNS`, one row per signal and horizon.  ``sharpe``, ``max_drawdown``,
        ``turnover`` and ``sharpe_t`` are the cheapest quantile's, from overlapping cohorts held
        ``holding_months`` = the horizon (so they vary by horizon; at the study's own holding period
        they equal its backtest's figures).
    correlation : DataFrame (signal x signal)
        Time-mean of the per-date Spearman correlation of the signals' z-scores over the names with both.
    correlation_dates : DataFrame (signal x signal)
        Dates behind each correlation.
    joint_fm : DataFrame
        ``signal, horizon, mean_slope, t, se_method, n_dates, too_short, evidence``: the slope on each
        signal's z-score in one cross-sectional regression with all the non-composite signals.
    joint_left_out : tuple of str
        Signals left out of the joint regression (composites: combinations of the others; an entry with
        the same z-scores as an earlier one).
    rank_ic : dict signal -> DataFrame (D x H)
        Each signal's per-date rank IC (for the cumulative-IC chart).
    notes : tuple of str
    """

    signals: tuple[str, ...]
    config: StudyConfig
    table: pd.DataFrame
    correlation: pd.DataFrame
    correlation_dates: pd.DataFrame
    joint_fm: pd.DataFrame
    joint_left_out: tuple[str, ...]
    rank_ic: dict[str, pd.DataFrame] = field(default_factory=dict)
    notes: tuple[str, ...] = ()


def signal_correlation(z: dict[str, np.ndarray], min_names: int = 3) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Time-mean of the per-date cross-sectional Spearman correlation between each pair of signals.

    Parameters
    ----------
    z : dict name -> ndarray (D x S)
        Signals on the same axes (NaN where undefined).
    min_names : int
        A date needs this many names with both signals.

    Returns
    -------
    (mean correlation, dates used): square frames with the signal names as index and columns;
    the diagonal is 1 (and the dates where the signal has ``min_names`` values).

    Notes
    -----
    ``rho_ab = (1/T) sum_t spearman(z_a[t], z_b[t])`` over the dates where both have ``min_names``
    common names (Spearman: Pearson on average ranks, ties averaged).
    """
    names = list(z)
    k = len(names)
    corr = np.eye(k)
    dates = np.zeros((k, k))
    for i in range(k):
        dates[i, i] = float((np.isfinite(z[names[i]]).sum(axis=1) >= min_names).sum())
        for j in range(i + 1, k):
            rho, n = row_spearman(z[names[i]], z[names[j]])
            rho = np.where(n >= min_names, rho, np.nan)
            ok = np.isfinite(rho)
            corr[i, j] = corr[j, i] = float(rho[ok].mean()) if ok.any() else math.nan
            dates[i, j] = dates[j, i] = float(ok.sum())
    idx = pd.Index(names, name="signal")
    return pd.DataFrame(corr, index=idx, columns=names), pd.DataFrame(dates, index=idx, columns=names)


def _check(signals: tuple[str, ...], panel: Panel) -> None:
    if len(signals) < MIN_SIGNALS or len(signals) > MAX_SIGNALS:
        raise ConfigError(f"A comparison needs {MIN_SIGNALS} to {MAX_SIGNALS} signals; {len(signals)} given.",
                          hint="Name two to eight signals, e.g. earnings_yield,dividend_yield.", setting="signal")
    if len(set(signals)) != len(signals):
        raise ConfigError("A signal is named twice in the comparison.", hint="Name each signal once.",
                          setting="signal")
    known = {"earnings_yield", "dividend_yield", "composite", *(s.name for s in panel.signals)}
    unknown = [s for s in signals if s not in known]
    if unknown:
        raise ConfigError(f"Unknown signal(s) for the comparison: {', '.join(unknown)}.",
                          hint="Use earnings_yield, dividend_yield, composite or the name of a signal file you loaded"
                               + (f" ({', '.join(s.name for s in panel.signals)})" if panel.signals else "") + ".",
                          setting="signal")


def _row(res: StudyResult, h: int, bt_stats: pd.Series, turnover: float, holding: int) -> dict[str, object]:
    ic, sp = res.ic_summary, res.spread_summary
    return {"signal": res.signal_name, "horizon": int(h), "mean_ic": float(ic.at[h, "mean_ic"]),
            "ic_t": float(ic.at[h, "t_hac"]), "spread": float(sp.at[h, "mean"]), "spread_t": float(sp.at[h, "t_hac"]),
            "sharpe": float(bt_stats["sharpe"]), "max_drawdown": float(bt_stats["max_drawdown"]),
            "turnover": turnover, "mean_breadth": float(ic.at[h, "mean_breadth"]),
            "n_dates": int(ic.at[h, "n_dates"]), "ic_se_method": str(ic.at[h, "se_method"]),
            "independent_periods": float(ic.at[h, "independent_periods"]), "too_short": bool(ic.at[h, "too_short"]),
            "evidence": str(ic.at[h, "evidence"]), "spread_evidence": str(sp.at[h, "evidence"]),
            "sharpe_t": float(bt_stats["sharpe_t"]), "holding_months": int(holding)}


def run_compare(panel: Panel, signals: tuple[str, ...] | list[str], config: StudyConfig | None = None,
                progress: Callable[[str, float], None] | None = None) -> CompareResult:
    """Study each of ``signals`` with the same settings and put them side by side.

    Parameters
    ----------
    panel : Panel
    signals : sequence of str
        Two to eight signal names (built-in or user signals of the panel).
    config : StudyConfig, optional
        The shared settings (default settings when None); ``signal`` is replaced per signal.
    progress : callable(stage, fraction), optional

    Returns
    -------
    CompareResult

    Raises
    ------
    ConfigError
        Fewer than two or more than eight signals, a repeated or unknown signal.
    """
    sigs = tuple(str(s) for s in signals)
    _check(sigs, panel)
    base = config or StudyConfig()
    results: dict[str, StudyResult] = {}
    for i, s in enumerate(sigs):
        if progress is not None:
            progress(f"studying {s}", i / (len(sigs) + 1))
        results[s] = run_study(panel, replace(base, signal=s), detail=False)
    if progress is not None:
        progress("correlations and the joint regression", len(sigs) / (len(sigs) + 1))
    out = compare_results(panel, results)
    if progress is not None:
        progress("done", 1.0)
    return out


def compare_results(panel: Panel, results: dict[str, StudyResult]) -> CompareResult:
    """Put finished studies of the same panel side by side (labels are the keys of ``results``).

    The studies may be saved studies with settings of their own; the table then reports each with its
    own settings (horizons, holding period), and the correlation and joint regression use the
    dates and names they share.  Composites (``signal == "composite"``) stay out of the joint regression.
    """
    if len(results) < MIN_SIGNALS or len(results) > MAX_SIGNALS:
        raise ConfigError(f"A comparison needs {MIN_SIGNALS} to {MAX_SIGNALS} signals; {len(results)} given.",
                          hint="Choose two to eight signals or saved studies.", setting="signal")
    labels = tuple(results)
    base = results[labels[0]].config
    inputs = monthly_inputs(panel)
    rows: list[dict[str, object]] = []
    zs: dict[str, np.ndarray] = {}
    fwd: dict[int, np.ndarray] = {}
    ics: dict[str, pd.DataFrame] = {}
    for label, res in results.items():
        cfg = res.config
        ics[label] = res.rank_ic
        zs[label] = res.signal_z.to_numpy(dtype=float)
        if cfg.signal != "composite":
            for h in cfg.horizons:
                f = res.forward_returns[h].to_numpy(dtype=float)
                fwd[h] = f if h not in fwd else np.where(np.isfinite(fwd[h]), fwd[h], f)
        for h in cfg.horizons:
            bt = backtest_at_holding(res, inputs, int(h))
            tov = bt.turnover["cheapest"].to_numpy(dtype=float)[1:]
            row = _row(res, int(h), bt.stats.loc["cheapest"], float(np.nanmean(tov)) if tov.size else math.nan, int(h))
            row["signal"] = label
            rows.append(row)
    corr, corr_n = signal_correlation(zs)
    joint: list[str] = []
    notes = []
    same: list[str] = []
    for k in labels:
        if results[k].config.signal == "composite":
            continue
        twin = next((j for j in joint if np.array_equal(zs[j], zs[k], equal_nan=True)), None)
        if twin is not None:  # the same z-scores twice would make the regression singular
            same.append(k)
            notes.append(f"{SIGNAL_WORDS.get(k, k)} has the same z-scores as {SIGNAL_WORDS.get(twin, twin)}: "
                         "it is left out of the joint regression.")
            continue
        joint.append(k)
    left = tuple(k for k in labels if results[k].config.signal == "composite") + tuple(same)
    if any(results[k].config.signal == "composite" for k in labels):
        notes.insert(0, "The composite is left out of the joint regression: it is a combination of the other signals.")
    jrows = []
    shared = sorted(set.intersection(*[set(results[k].config.horizons) for k in joint])) if joint else []
    if len(joint) >= 2:
        for h in shared:
            coefs, _ = fm_multi(fwd[h], [zs[k] for k in joint])
            for j, k in enumerate(joint):
                inf = headline_block(coefs[:, j], int(h), base.hac_lag_rule)
                jrows.append({"signal": k, "horizon": int(h), "mean_slope": inf["mean"], "t": inf["t"],
                              "se_method": inf["method"], "n_dates": int(inf["n_dates"]),
                              "too_short": bool(inf["too_short"]), "evidence": inf["evidence"]})
    else:
        notes.append("The joint regression needs at least two signals that are not composites.")
    notes.append("Each signal keeps its own dates, as its own study would (a trailing yield starts later); the "
                 "joint regression uses the dates and names where every signal in it has a value.")
    table = pd.DataFrame(rows, columns=list(COMPARE_COLUMNS))
    jf = pd.DataFrame(jrows, columns=["signal", "horizon", "mean_slope", "t", "se_method", "n_dates", "too_short",
                                      "evidence"])
    return CompareResult(labels, base, table, corr, corr_n, jf, left, ics, tuple(notes))
