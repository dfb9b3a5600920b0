"""The per-security table of the intake report (coverage and flags)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from valuesift.core.intake.options import PanelOptions
from valuesift.core.intake.report import FileReport

__all__ = ["security_table", "longest_flat_run", "longest_flat_runs", "SECURITY_FLAGS"]


#: The security flag codes a report lists, in the order it lists them (the app holds their words).
SECURITY_FLAGS: tuple[str, ...] = ("late_listing", "delisted", "suspected_split", "split_adjusted", "stale",
                                   "extreme_pe", "negative_earnings", "no_earnings", "looks_like_index")


def longest_flat_run(values: np.ndarray) -> int:
    """Length of the longest run of identical consecutive valid values (1 when none repeat, 0 when empty).

    Examples
    --------
    >>> longest_flat_run(np.array([1.0, 2, 2, 2, np.nan, 3]))
    3
    """
    return int(longest_flat_runs(np.asarray(values, dtype=float).reshape(-1, 1))[0])


def longest_flat_runs(values: np.ndarray) -> np.ndarray:
    """:func:`longest_flat_run` of every column of a (dates x securities) array at once (int64 per column).

    Notes
    -----
    The finite values of each column, in date order, are laid end to end; a run
    starts wherever a value differs from the one before it or a new column begins;
    each column's answer is its longest run (0 for a column without finite values).

    Examples
    --------
    >>> longest_flat_runs(np.array([[1.0, 5], [2, 5], [2, np.nan], [2, 5]])).tolist()
    [3, 3]
    """
    v = np.asarray(values, dtype=float)
    n = v.shape[1]
    out = np.zeros(n, dtype="int64")
    fin = np.isfinite(v).T
    vals = v.T[fin]  # column by column, dates in order
    if vals.size == 0:
        return out
    col = np.repeat(np.arange(n), fin.sum(axis=1))
    new = np.ones(vals.size, dtype=bool)
    new[1:] = (vals[1:] != vals[:-1]) | (col[1:] != col[:-1])
    starts = np.flatnonzero(new)
    lengths = np.diff(np.append(starts, vals.size))
    run_col = col[starts]
    cols, first = np.unique(run_col, return_index=True)
    out[cols] = np.maximum.reduceat(lengths, first)
    return out


def security_table(prices: pd.DataFrame, stale: pd.DataFrame, eps: pd.DataFrame | None, splits: pd.DataFrame,
                   options: PanelOptions, price_report: FileReport, has_earnings: bool) -> pd.DataFrame:
    """One row per security: valid range, coverage, flags and their details.

    Notes
    -----
    coverage = (months with a valid price) / (calendar months).  Flags:
    ``late_listing`` (first valid month after the calendar's first),
    ``delisted`` (last valid month before the calendar's last),
    ``suspected_split`` / ``split_adjusted``, ``stale`` (months set missing by
    the staleness limit, or a run of ``flat_run_months`` identical prices),
    ``gaps`` (missing months between first and last valid), ``extreme_pe``
    (``|price / EPS| > extreme_pe`` in some month), ``negative_earnings``,
    ``no_earnings`` (an earnings file was given but has no value for the
    security), ``looks_like_index`` (its header reads like an index).
    """
    cal = prices.index
    v = prices.to_numpy(dtype=float)
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(v) & (v > 0)
    n = len(cal)
    any_ok = ok.any(axis=0)
    first_i = np.where(any_ok, ok.argmax(axis=0), -1)
    last_i = np.where(any_ok, n - 1 - ok[::-1].argmax(axis=0), -1)
    n_valid = ok.sum(axis=0)
    span = np.where(any_ok, last_i - first_i + 1, 0)
    n_gaps = (span - n_valid).astype("int64")
    stale_months = stale.reindex(columns=prices.columns).fillna(False).to_numpy(dtype=bool).sum(axis=0).astype("int64")
    flat = longest_flat_runs(v)
    split_date = np.full(len(prices.columns), np.datetime64("NaT"), dtype="datetime64[ns]")
    split_ratio = np.full(len(prices.columns), np.nan)
    flags: list[list[str]] = [[] for _ in range(len(prices.columns))]
    for j in range(len(prices.columns)):
        if not any_ok[j]:
            flags[j].append("no_valid_price")
            continue
        if first_i[j] > 0:
            flags[j].append("late_listing")
        if last_i[j] < n - 1:
            flags[j].append("delisted")
        if n_gaps[j] > 0:
            flags[j].append("gaps")
    pos = {str(s): k for k, s in enumerate(prices.columns)}
    for sec, date, ratio, applied in zip(splits["security"], splits["date"], splits["ratio"], splits["applied"]):
        k = pos[str(sec)]
        if np.isnat(split_date[k]):
            split_date[k] = np.datetime64(pd.Timestamp(date).as_unit("ns").to_datetime64())
            split_ratio[k] = float(ratio)
        flags[k].append("split_adjusted" if bool(applied) else "suspected_split")
    for k in range(len(flags)):
        if stale_months[k] > 0 or flat[k] >= options.flat_run_months:
            flags[k].append("stale")
    out = pd.DataFrame(index=pd.Index(prices.columns, name="security"))
    cal_ns = np.asarray(cal, dtype="datetime64[ns]")
    nat = np.datetime64("NaT", "ns")
    first_d = np.where(first_i >= 0, cal_ns[np.maximum(first_i, 0)], nat) if n else np.full(first_i.shape, nat)
    last_d = np.where(last_i >= 0, cal_ns[np.maximum(last_i, 0)], nat) if n else np.full(last_i.shape, nat)
    out["first_valid"] = pd.Series(first_d, index=out.index, dtype="datetime64[ns]")
    out["last_valid"] = pd.Series(last_d, index=out.index, dtype="datetime64[ns]")
    out["n_valid"] = n_valid.astype("int64")
    out["coverage"] = n_valid / n if n else 0.0
    out["n_gaps"] = n_gaps
    out["stale_months"] = stale_months
    out["max_flat_run"] = flat
    out["split_date"] = split_date
    out["split_ratio"] = split_ratio
    out["extreme_pe_months"] = 0
    out["max_abs_pe"] = np.nan
    if eps is not None:
        e = eps.reindex(index=cal, columns=prices.columns).to_numpy(dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            pe = np.where(np.isfinite(e) & (e != 0) & ok, v / e, np.nan)
        absd = np.abs(pe)
        ext = np.nan_to_num(absd, nan=0.0) > options.extreme_pe
        out["extreme_pe_months"] = ext.sum(axis=0).astype("int64")
        with np.errstate(all="ignore"):
            mx = np.where(np.isfinite(absd).any(axis=0), np.nanmax(np.where(np.isfinite(absd), absd, -np.inf), axis=0), np.nan)
        out["max_abs_pe"] = mx
        has_e = np.isfinite(e).any(axis=0)
        neg = (np.nan_to_num(e, nan=0.0) < 0).any(axis=0)
        ext_any = ext.any(axis=0)
        for k in range(len(out)):
            if ext_any[k]:
                flags[k].append("extreme_pe")
            if neg[k]:
                flags[k].append("negative_earnings")
            if has_earnings and not has_e[k]:
                flags[k].append("no_earnings")
    suspects = set(price_report.suspect_columns)
    for k, s in enumerate(out.index):
        if s in suspects:
            flags[k].append("looks_like_index")
    out["flags"] = pd.Series([";".join(f) for f in flags], index=out.index, dtype="str")
    return out
