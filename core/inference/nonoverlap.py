"""The non-overlapping check of a time-mean of h-month statistics, and the count of independent periods.

With overlapping h-month windows, dates ``t`` and ``t + h`` share no month: the h
sub-samples of every h-th date (offsets 0..h-1) are each free of overlap.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from valuesift.core.choices import HacLagRule
from valuesift.core.inference.evidence import evidence_category
from valuesift.core.inference.hac import headline_inference

__all__ = ["nonoverlap_t", "independent_periods", "headline_block", "TOO_SHORT_PERIODS"]

#: Below this many independent periods a horizon is "too short to judge" (common practice: with fewer than
#: ten non-overlapping observations a t-statistic's sampling distribution is far from normal and any HAC
#: variance is badly biased; no single published source).
TOO_SHORT_PERIODS = 10.0


def nonoverlap_t(x: np.ndarray, horizon: int) -> dict[str, Any]:
    """t-statistics of the mean on each of the h non-overlapping sub-samples of ``x``.

    Parameters
    ----------
    x : ndarray (D,)
        The per-date statistic on the full date axis (NaN where undefined), so
        that positions are calendar months.
    horizon : int
        h; sub-sample k holds the dates ``k, k + h, k + 2h, ...``.

    Returns
    -------
    dict
        ``t_mean, t_min, t_max`` over the sub-samples with at least two values and a
        positive spread, ``t_each`` (list, NaN where undefined) and ``n_each``.

    Notes
    -----
    Within a sub-sample the observations do not overlap, so the iid standard error
    ``sd(ddof=1) / sqrt(n)`` applies: ``t_k = mean_k / (sd_k / sqrt(n_k))``.

    Examples
    --------
    Reference case 18 of the project's check list (h = 3):

    >>> m = [0.02, -0.01, 0.03, 0.01, -0.02, 0.04, 0.00, 0.01, -0.03, 0.02, 0.05, -0.01, 0.02, 0.01]
    >>> y = np.array([m[i] + m[i + 1] + m[i + 2] for i in range(12)])
    >>> r = nonoverlap_t(y, 3)
    >>> [round(v, 6) for v in r["t_each"]], round(r["t_mean"], 7)
    ([1.616017, 2.2, 4.333333], 2.7164501)
    """
    x = np.asarray(x, dtype=float)
    h = max(int(horizon), 1)
    ts: list[float] = []
    ns: list[int] = []
    for k in range(h):
        s = x[k::h]
        s = s[np.isfinite(s)]
        ns.append(int(s.size))
        if s.size < 2:
            ts.append(float("nan"))
            continue
        sd = float(s.std(ddof=1))
        ts.append(float(s.mean()) / (sd / math.sqrt(s.size)) if sd > 0 else float("nan"))
    fin = [v for v in ts if np.isfinite(v)]
    return {
        "t_mean": float(np.mean(fin)) if fin else float("nan"),
        "t_min": float(min(fin)) if fin else float("nan"),
        "t_max": float(max(fin)) if fin else float("nan"),
        "t_each": ts,
        "n_each": ns,
    }


def independent_periods(n_dates: int, horizon: int) -> float:
    """Dates with a defined statistic divided by the horizon (not rounded): the independent windows."""
    return float(n_dates) / float(max(int(horizon), 1))


def headline_block(x_full: np.ndarray, horizon: int, rule: HacLagRule) -> dict[str, Any]:
    """Everything the outputs state about one time-mean: headline, Bartlett, non-overlapping, verdict.

    ``x_full`` is the per-date statistic on the full date axis (NaN where undefined).
    Returns the keys of :func:`valuesift.core.inference.hac.headline_inference` plus
    ``t_nonoverlap_mean, t_nonoverlap_min, t_nonoverlap_max, independent_periods,
    too_short, evidence``.
    """
    x_full = np.asarray(x_full, dtype=float)
    inf = headline_inference(x_full, horizon, rule)
    no = nonoverlap_t(x_full, horizon)
    ip = independent_periods(int(inf["n_dates"]), horizon)
    short = bool(ip < TOO_SHORT_PERIODS)
    inf.update({
        "t_nonoverlap_mean": no["t_mean"], "t_nonoverlap_min": no["t_min"], "t_nonoverlap_max": no["t_max"],
        "independent_periods": ip, "too_short": short, "evidence": evidence_category(inf["t"], short),
    })
    return inf
