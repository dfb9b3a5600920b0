"""The probabilistic and the deflated Sharpe ratio: how likely a Sharpe ratio beats a hurdle, and the
hurdle the best of many trials should be judged against.

References
----------
Bailey, D. H. & López de Prado, M. (2012). The Sharpe ratio efficient frontier. J. Risk 15(2), 3-44.
Bailey, D. H. & López de Prado, M. (2014). The deflated Sharpe ratio: correcting for selection bias,
backtest overfitting and non-normality. J. Portfolio Mgmt 40(5), 94-107.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import stats as _st

__all__ = ["EULER_GAMMA", "probabilistic_sharpe", "psr_from_moments", "sharpe_moments", "expected_max_sharpe",
           "deflated_sharpe"]

#: The Euler-Mascheroni constant.
EULER_GAMMA = 0.5772156649015329


def probabilistic_sharpe(returns: np.ndarray, sr_star: float = 0.0) -> float:
    """PSR: the probability that the true per-period Sharpe ratio exceeds ``sr_star``.

    Notes
    -----
    ``PSR = Phi((SR - SR*) sqrt(T - 1) / sqrt(1 - g3 SR + (g4 - 1)/4 SR^2))`` with the per-period
    ``SR = mean / sd`` (sd with ddof 1), the sample skewness ``g3`` and non-excess kurtosis ``g4``
    (population moments, as ``scipy.stats.skew`` and ``kurtosis(fisher=False)`` by default).
    ``returns`` are per-period excess returns (NaN dropped).  NaN with fewer than three values or a
    non-positive denominator.

    Examples
    --------
    Reference case 20 of the project's check list (case 10's returns less 0.002 a month):

    >>> r = np.array([0.02, -0.01, 0.03, -0.05, -0.02, 0.04, 0.01, -0.03, 0.05, 0.02, -0.01, 0.03]) - 0.002
    >>> round(probabilistic_sharpe(r, 0.0), 8)
    0.6884495
    """
    sr, g3, g4, t = sharpe_moments(returns)
    return psr_from_moments(sr, g3, g4, t, sr_star)


def sharpe_moments(returns: np.ndarray) -> tuple[float, float, float, int]:
    """``(SR, g3, g4, T)``: per-period Sharpe ratio (sd ddof 1), population skewness and non-excess kurtosis."""
    x = np.asarray(returns, dtype=float)
    x = x[np.isfinite(x)]
    t = int(x.size)
    if t < 3:
        return math.nan, math.nan, math.nan, t
    sd = float(x.std(ddof=1))
    if not sd > 0:
        return math.nan, math.nan, math.nan, t
    return float(x.mean()) / sd, float(_st.skew(x)), float(_st.kurtosis(x, fisher=False)), t


def psr_from_moments(sr: float, g3: float, g4: float, t: int, sr_star: float = 0.0) -> float:
    """:func:`probabilistic_sharpe` from the moments (so a sweep can keep four numbers per trial, not the series)."""
    if t < 3 or not all(math.isfinite(v) for v in (sr, g3, g4)):
        return math.nan
    den = 1.0 - g3 * sr + (g4 - 1.0) / 4.0 * sr * sr
    if not den > 0:
        return math.nan
    return float(_st.norm.cdf((sr - sr_star) * math.sqrt(t - 1) / math.sqrt(den)))


def expected_max_sharpe(n_trials: int, variance: float) -> float:
    """The expected largest of ``n_trials`` per-period Sharpe ratios when every true one is zero.

    Notes
    -----
    ``SR* = sqrt(V) ((1 - gamma) Phi^-1(1 - 1/N) + gamma Phi^-1(1 - 1/(N e)))`` with ``V`` the
    variance of the trials' Sharpe ratios and ``gamma`` the Euler-Mascheroni constant
    (Bailey & López de Prado 2014, eq. for the expected maximum).  0 for a single trial.

    Examples
    --------
    >>> round(expected_max_sharpe(10, 0.01), 8)
    0.15745983
    """
    n = int(n_trials)
    if n < 2 or not (variance >= 0):
        return 0.0
    z1 = _st.norm.ppf(1.0 - 1.0 / n)
    z2 = _st.norm.ppf(1.0 - 1.0 / (n * math.e))
    return float(math.sqrt(variance) * ((1.0 - EULER_GAMMA) * z1 + EULER_GAMMA * z2))


def deflated_sharpe(returns: np.ndarray, n_trials: int, trial_sharpes_variance: float) -> tuple[float, float]:
    """DSR: the PSR of the chosen trial against the expected best of ``n_trials`` null trials.

    Returns ``(dsr, sr_star)`` with ``sr_star`` from :func:`expected_max_sharpe`.

    Examples
    --------
    Reference case 20 (N = 10 distinct trials, V = 0.01):

    >>> r = np.array([0.02, -0.01, 0.03, -0.05, -0.02, 0.04, 0.01, -0.03, 0.05, 0.02, -0.01, 0.03]) - 0.002
    >>> [round(v, 8) for v in deflated_sharpe(r, 10, 0.01)]
    [0.49395821, 0.15745983]
    """
    sr_star = expected_max_sharpe(n_trials, trial_sharpes_variance)
    return probabilistic_sharpe(returns, sr_star), sr_star
