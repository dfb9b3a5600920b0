"""The information coefficient when the signal is used 1, 2, 3 months after its date.

A valuation signal decays slowly: the IC of the signal dated ``t - d`` against the
return from ``t`` is close to the IC at ``d = 0``.  A sharp drop from delay 0 is the
fingerprint of a signal whose values were known only after their dates (look-ahead
in the input file).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import pandas as pd

from valuesift.core.choices import HacLagRule
from valuesift.core.correlation.ic import rank_ic_grid
from valuesift.core.inference.hac import headline_inference

__all__ = ["DELAYS", "delayed_signal", "ic_by_delay"]

#: Delays (months) at which every study measures the IC.
DELAYS: tuple[int, ...] = (0, 1, 2, 3)


def delayed_signal(z: np.ndarray, universe: np.ndarray, delay: int) -> np.ndarray:
    """The signal dated ``t - delay`` placed at ``t``, for the names in the universe at ``t``."""
    if delay == 0:
        return np.where(universe, z, np.nan)
    out = np.full(z.shape, np.nan)
    if delay < z.shape[0]:
        out[delay:] = z[:-delay]
    return np.where(universe, out, np.nan)


def ic_by_delay(
    z: np.ndarray,
    forward: dict[int, np.ndarray],
    universe: np.ndarray,
    min_breadth: int,
    rule: HacLagRule,
    rank_ic_now: dict[int, np.ndarray],
    delays: tuple[int, ...] = DELAYS,
    late: Mapping[tuple[int, int], np.ndarray] | None = None,
) -> pd.DataFrame:
    """Mean rank IC and its headline t per delay and horizon.

    Parameters
    ----------
    z : ndarray (D x S)
        The evaluated signal (z-score, higher = cheaper).
    forward : dict of h -> ndarray (D x S)
        Forward returns per horizon (NaN outside the universe).
    universe : ndarray (D x S, bool)
    min_breadth : int
    rule : HAC lag rule
    rank_ic_now : dict of h -> ndarray (D,)
        The study's own rank IC per date (delay 0), reused.
    delays : tuple of int
    late : mapping of (delay, horizon) -> ndarray (D,), optional
        The rank IC of each delayed signal against each horizon's returns when the caller has them
        (:func:`~valuesift.core.correlation.ic.rank_ic_grid` of the delayed signals, other keys ignored);
        made here otherwise.

    Returns
    -------
    DataFrame
        Columns ``delay_months, horizon, mean_ic, ic_t, n_dates``; ``ic_t`` is the
        headline t (Hansen-Hodrick for h > 1).

    Notes
    -----
    Delay ``d``: ``IC_t(d) = Spearman(z_{t-d}, r_{t, t+h})`` over the names in the
    universe at ``t`` with both values; dates below the minimum breadth are left out.
    """
    rows = []
    # every delayed signal and every horizon's returns sorted once (the same ICs as ic_by_date per pair)
    if late is None:
        late = rank_ic_grid({d: delayed_signal(z, universe, d) for d in delays if d != 0}, forward, min_breadth)
    for d in delays:
        for h in forward:
            ric = rank_ic_now[h] if d == 0 else late[(d, h)]
            inf = headline_inference(ric, h, rule)
            rows.append({"delay_months": int(d), "horizon": int(h), "mean_ic": inf["mean"], "ic_t": inf["t"],
                         "n_dates": int(inf["n_dates"])})
    return pd.DataFrame(rows, columns=["delay_months", "horizon", "mean_ic", "ic_t", "n_dates"])
