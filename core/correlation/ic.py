"""Information coefficients: rank and Pearson IC per date, their time summary, rolling means.

References
----------
Spearman, C. (1904). Am. J. Psychol. 15(1); Grinold, R. (1989). J. Portfolio Mgmt 15(3).
"""

from __future__ import annotations

import math
from collections.abc import Hashable, Mapping
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pandas as pd

from valuesift.core.choices import HacLagRule
from valuesift.core.correlation.ranks import RowSort, ranks_within, row_sort
from valuesift.core.correlation.rowwise import masked_pearson, masked_spearman, pearson_parts
from valuesift.core.inference.nonoverlap import headline_block
from valuesift.core.regression.famamacbeth import slope_from_centred

__all__ = ["ic_by_date", "ic_and_slope", "rank_ic_grid", "ic_summary", "rolling_ic", "ROLLING_WINDOWS"]


#: Windows (in dates) of the rolling mean IC.
ROLLING_WINDOWS: tuple[int, ...] = (12, 36)


def ic_by_date(
    z: np.ndarray, fwd: np.ndarray, min_breadth: int, z_ranks: np.ndarray | RowSort | None = None
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Spearman and Pearson IC per date over names with both a signal and a forward return.

    Parameters
    ----------
    z : ndarray (D x S)
        Signal (NaN outside the universe).
    fwd : ndarray (D x S)
        Forward returns for one horizon.
    min_breadth : int
        Dates with fewer usable names get NaN ICs (and are reported by the caller).
    z_ranks : ndarray (D x S), optional
        ``average_ranks(z)`` or ``row_sort(z)``, computed once and reused across horizons.

    Returns
    -------
    rank_ic, pearson_ic : ndarray (D,)
    breadth : ndarray (D,) of int

    Notes
    -----
    Spearman's rho is Pearson's correlation of the average ranks (ties share
    their mean rank); Pearson's ``r = sum(dx dy) / sqrt(sum dx^2 sum dy^2)``.
    A date where every name has the same signal has no IC (NaN), not 0.

    References
    ----------
    Spearman, C. (1904). Am. J. Psychol. 15(1); scipy.stats.spearmanr / pearsonr.
    """
    both = np.isfinite(z) & np.isfinite(fwd)  # one mask and count shared by both correlations
    n = both.sum(axis=1)
    rho = masked_spearman(z, fwd, both, n, z_ranks)
    r = pearson_parts(z, fwd, both, n)[0]
    low = n < min_breadth
    return np.where(low, np.nan, rho), np.where(low, np.nan, r), n.astype(int)


def rank_ic_grid(
    signals: Mapping[Hashable, np.ndarray], targets: Mapping[Hashable, np.ndarray], min_breadth: int, *,
    target_sorts: Mapping[Hashable, RowSort] | None = None, workers: int = 1,
) -> dict[tuple[Hashable, Hashable], np.ndarray]:
    """``ic_by_date(z, y, min_breadth)[0]`` for every pair of a signal and a target, each array sorted once.

    Parameters
    ----------
    signals, targets : mapping of key -> ndarray (D x S)
        E.g. the signal at several delays, and the forward returns per horizon.
    min_breadth : int
    target_sorts : mapping of key -> RowSort, optional
        ``row_sort`` of some targets, made by the caller already (the others are sorted here).
    workers : int
        Threads for the pairs on large arrays (numpy's loops release the GIL; the same numbers).

    Returns
    -------
    dict of (signal key, target key) -> ndarray (D,)
        The rank IC per date, the same numbers as :func:`ic_by_date`.

    Notes
    -----
    Each pair's Spearman correlation ranks both arrays over the names they
    share; :func:`~valuesift.core.correlation.ranks.ranks_within` gets those
    ranks from one sort per array, so S signals and H targets cost S + H sorts
    instead of 2 S H.
    """
    given = target_sorts or {}
    big = workers > 1 and any(a.size >= 200_000 for a in (*signals.values(), *targets.values()))
    pool = ThreadPoolExecutor(max_workers=workers, thread_name_prefix="valuesift-grid") if big else None
    try:
        run = pool.map if pool is not None else map
        s_sorts = dict(zip(signals, run(row_sort, signals.values())))
        todo = [k for k in targets if k not in given]
        t_sorts = {k: given[k] for k in targets if k in given}
        t_sorts.update(zip(todo, run(row_sort, [targets[k] for k in todo])))
        s_fin = {k: np.isfinite(z) for k, z in signals.items()}
        t_fin = {k: np.isfinite(y) for k, y in targets.items()}

        def one(pair: tuple[Hashable, Hashable]) -> np.ndarray:
            ks, kt = pair
            both = s_fin[ks] & t_fin[kt]
            n = both.sum(axis=1)
            rho = masked_pearson(ranks_within(s_sorts[ks], both), ranks_within(t_sorts[kt], both), both, n)
            return np.where(n < min_breadth, np.nan, rho)

        pairs = [(ks, kt) for ks in signals for kt in targets]
        return dict(zip(pairs, run(one, pairs)))
    finally:
        if pool is not None:
            pool.shutdown()


def ic_and_slope(
    z: np.ndarray, fwd: np.ndarray, min_breadth: int, z_ranks: np.ndarray | RowSort | None,
    fwd_sort: RowSort | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """:func:`ic_by_date` plus the Fama-MacBeth slope without controls, sharing the centred arrays.

    The slope is ``core.evaluate.famamacbeth.fm_slopes(z, fwd)`` (same
    expressions on the same demeaned arrays, so the same numbers).  ``fwd_sort``:
    ``row_sort(fwd)`` when the caller keeps it for other correlations (same numbers).
    """
    both = np.isfinite(z) & np.isfinite(fwd)
    n = both.sum(axis=1)
    rho = masked_spearman(z, fwd, both, n, z_ranks, fwd_sort)
    r, dz, dy, zm = pearson_parts(z, fwd, both, n)
    slope = slope_from_centred(dz, dy, zm, n)
    low = n < min_breadth
    return np.where(low, np.nan, rho), np.where(low, np.nan, r), n.astype(int), slope


def ic_summary(
    rank_ic: pd.DataFrame,
    pearson_ic: pd.DataFrame,
    breadth: pd.DataFrame,
    rule: HacLagRule,
) -> pd.DataFrame:
    """Per-horizon summary of the IC time series (columns of ``rank_ic`` are horizons).

    Notes
    -----
    Over the T dates with an IC: ``mean_ic``, ``sd_ic`` (ddof 1),
    ``ic_ir = mean / sd``, ``hit_share`` = share of ICs > 0 (the expected sign:
    the signal is oriented so higher = cheaper), ``se_hac`` = Newey-West SE of
    the mean with ``L`` lags from :func:`core.stats.hac_lags`, ``t_hac``, and
    the 95 % interval ``mean +/- 1.96 se_hac``.  ``se_hac``/``t_hac`` are the
    headline of :func:`valuesift.core.inference.hac.headline_inference`
    (Hansen-Hodrick for h > 1, its method in ``se_method``); ``t_bartlett`` is the
    Newey-West figure; ``t_nonoverlap_*`` the non-overlapping check;
    ``independent_periods = n_dates / h``; ``too_short`` below ten of them;
    ``evidence`` the verdict code.  ``t_naive`` assumes independent dates and is
    wrong for overlapping horizons (shown only for comparison).

    References
    ----------
    Newey & West (1987), Econometrica 55(3); Hansen & Hodrick (1980), JPE 88(5).
    """
    rows = []
    for h in rank_ic.columns:
        full = rank_ic[h].to_numpy(dtype=float)
        x = full[np.isfinite(full)]
        inf = headline_block(full, int(h), rule)
        p = pearson_ic[h].to_numpy(dtype=float)
        p = p[np.isfinite(p)]
        b = breadth[h].to_numpy(dtype=float)
        used = np.isfinite(full)
        sd = inf["sd"]
        rows.append(
            {
                "horizon": int(h),
                "mean_ic": inf["mean"],
                "sd_ic": sd,
                "ic_ir": inf["mean"] / sd if np.isfinite(sd) and sd > 0 else math.nan,
                "hit_share": float(np.mean(x > 0)) if x.size else math.nan,
                "se_hac": inf["se"],
                "t_hac": inf["t"],
                "hac_lags": int(inf["lags"]),
                "ci_low": inf["ci_low"],
                "ci_high": inf["ci_high"],
                "n_dates": int(x.size),
                "se_naive": inf["se_naive"],
                "t_naive": inf["t_naive"],
                "mean_pearson_ic": float(p.mean()) if p.size else math.nan,
                "mean_breadth": float(b[used].mean()) if used.any() else math.nan,
                "se_method": inf["method"],
                "t_bartlett": inf["t_bartlett"],
                "t_nonoverlap_mean": inf["t_nonoverlap_mean"],
                "t_nonoverlap_min": inf["t_nonoverlap_min"],
                "t_nonoverlap_max": inf["t_nonoverlap_max"],
                "independent_periods": inf["independent_periods"],
                "too_short": inf["too_short"],
                "evidence": inf["evidence"],
            }
        )
    return pd.DataFrame(rows).set_index("horizon")


def rolling_ic(rank_ic: pd.DataFrame, windows: tuple[int, ...] = ROLLING_WINDOWS) -> pd.DataFrame:
    """Rolling mean rank IC per horizon; a window needs all its dates to have an IC.

    Returns a frame (dates x MultiIndex (horizon, window)).
    """
    parts = {}
    for h in rank_ic.columns:
        for w in windows:
            parts[(int(h), int(w))] = rank_ic[h].rolling(w, min_periods=w).mean()
    out = pd.DataFrame(parts, index=rank_ic.index)
    out.columns = pd.MultiIndex.from_tuples(list(parts.keys()), names=["horizon", "window"])
    return out
