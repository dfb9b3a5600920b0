"""The signal's information coefficient and spread within each sector."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from valuesift.core.choices import HacLagRule
from valuesift.core.correlation.ic import ic_by_date
from valuesift.core.correlation.ranks import row_sort
from valuesift.core.quantiles.assign import assign_quantiles
from valuesift.core.inference.nonoverlap import headline_block

__all__ = ["sector_ic_table", "within_group_spread"]


def within_group_spread(q: np.ndarray, fwd: np.ndarray, member: np.ndarray, n_q: int) -> np.ndarray:
    """Per date: mean forward return of quantile ``n_q`` minus quantile 1 among ``member`` names (NaN if either is empty)."""
    top = member & (q == n_q) & np.isfinite(fwd)
    bot = member & (q == 1) & np.isfinite(fwd)
    nt, nb = top.sum(axis=1), bot.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        mt = np.where(top, fwd, 0.0).sum(axis=1) / nt
        mb = np.where(bot, fwd, 0.0).sum(axis=1) / nb
    return np.where((nt > 0) & (nb > 0), mt - mb, np.nan)


def sector_ic_table(z: np.ndarray, fwd: dict[int, np.ndarray], codes: np.ndarray, names: list[str],
                    n_q: int, min_breadth: int, rule: HacLagRule, tiebreak: np.ndarray | None = None) -> pd.DataFrame:
    """Mean rank IC (headline t), spread within the sector (headline t) and breadth per sector and horizon.

    Parameters
    ----------
    z : ndarray (D x S)
        The evaluated signal.
    fwd : dict horizon -> ndarray (D x S)
    codes : ndarray (S,) of int
        Sector code of each security; ``names[code]`` its name.
    n_q : int
        Quantiles, assigned within each sector (:func:`valuesift.core.quantiles.assign.assign_quantiles`
        on the sector's names, ties by ``tiebreak``).
    min_breadth : int
        A sector-date needs this many names with a signal and a return for an IC.

    Returns
    -------
    DataFrame
        ``sector, horizon, mean_ic, ic_t, spread, spread_t, mean_breadth, n_dates, too_short,
        evidence, judged`` (``judged`` False: the sector never reached ``min_breadth`` names, too small to judge).

    Notes
    -----
    Within a sector the IC is the Spearman correlation over that sector's names only (so it measures
    the ranking inside the sector, not the sector bet); t-statistics are the headline of
    :func:`headline_block`.
    """
    rows = []
    tb = np.arange(z.shape[1]) if tiebreak is None else np.asarray(tiebreak)
    for c in np.unique(codes):
        cols = np.flatnonzero(codes == c)  # the sector's own columns: each pass costs its size, not the universe's
        zs = z[:, cols]
        if not np.isfinite(zs).any():  # no name of this sector ever had a signal: nothing to show
            continue
        qs = assign_quantiles(zs, n_q, tiebreak=tb[cols])
        ranks = row_sort(zs)  # sorted once: each horizon ranks the sector's names with returns from it
        for h in sorted(fwd):
            fs = fwd[h][:, cols]
            ric, _, brd = ic_by_date(zs, fs, min_breadth, ranks)
            inf = headline_block(ric, int(h), rule)
            sp = within_group_spread(qs, fs, np.isfinite(zs), n_q)
            sp = np.where(np.isfinite(ric), sp, np.nan)
            spi = headline_block(sp, int(h), rule)
            used = np.isfinite(ric)
            rows.append({"sector": names[int(c)], "horizon": int(h), "mean_ic": inf["mean"], "ic_t": inf["t"],
                         "spread": spi["mean"], "spread_t": spi["t"],
                         "mean_breadth": float(brd[used].mean()) if used.any() else math.nan,
                         "n_dates": int(inf["n_dates"]), "too_short": bool(inf["too_short"]),
                         "evidence": inf["evidence"], "judged": bool(used.any())})
    return pd.DataFrame(rows, columns=["sector", "horizon", "mean_ic", "ic_t", "spread", "spread_t", "mean_breadth",
                                       "n_dates", "too_short", "evidence", "judged"])
