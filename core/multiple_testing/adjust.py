"""p-values of HAC t-statistics and their multiple-testing adjustment."""

from __future__ import annotations

import numpy as np
from scipy import stats as _st
from statsmodels.stats.multitest import multipletests

__all__ = ["two_sided_p", "adjust_pvalues", "ALPHA"]

#: Level of the "significant after adjustment" flags.
ALPHA = 0.05


def two_sided_p(t: np.ndarray) -> np.ndarray:
    """Two-sided p-value of a HAC t-statistic against the standard normal.

    Notes
    -----
    ``p = 2 (1 - Phi(|t|))``; the Newey-West t-statistic is asymptotically
    standard normal (Newey & West 1987).  NaN stays NaN.

    References
    ----------
    Newey, W. K. & West, K. D. (1987). Econometrica 55(3), 703-708.
    """
    t = np.asarray(t, dtype=float)
    out = np.full(t.shape, np.nan)
    ok = np.isfinite(t)
    out[ok] = 2.0 * _st.norm.sf(np.abs(t[ok]))
    return out


def adjust_pvalues(p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Benjamini-Hochberg and Bonferroni adjusted p-values over the finite entries of ``p``.

    Returns ``(p_bh, p_bonferroni)`` of the same shape (NaN where ``p`` is NaN).

    Notes
    -----
    With ``m`` finite p-values sorted ``p_(1) <= ... <= p_(m)``, the
    Benjamini-Hochberg adjusted value is
    ``min_{k >= i} min(1, m p_(k) / k)``; rejecting where it is at most q
    controls the false discovery rate at q for independent (and positively
    dependent) tests.  Bonferroni: ``min(1, m p)``.  Both are computed with
    ``statsmodels.stats.multitest.multipletests`` (methods ``fdr_bh`` and
    ``bonferroni``).

    References
    ----------
    Benjamini, Y. & Hochberg, Y. (1995). Controlling the false discovery rate.
    J. R. Stat. Soc. B 57(1), 289-300.
    """
    p = np.asarray(p, dtype=float)
    bh = np.full(p.shape, np.nan)
    bon = np.full(p.shape, np.nan)
    ok = np.isfinite(p)
    if ok.any():
        bh[ok] = multipletests(p[ok], alpha=ALPHA, method="fdr_bh")[1]
        bon[ok] = multipletests(p[ok], alpha=ALPHA, method="bonferroni")[1]
    return bh, bon
