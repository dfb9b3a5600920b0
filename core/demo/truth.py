"""The relation planted in the demo market, as numbers a test can check against.

Each month the next month's total return of every listed company is

    r_{i,t+1} = m_{t+1} + s_{k(i),t+1} + GAMMA * z_{i,t} + e_{i,t+1}

with ``z_{i,t}`` the cross-sectional z-score (mean and standard deviation,
ddof 0) of earnings yield ``EPS_{i,t} / P_{i,t}`` over the names listed at
``t``; ``m`` the common market return, ``s`` a sector effect drawn afresh each
month independently of everything else, ``e`` idiosyncratic noise.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from types import MappingProxyType

from valuesift.core.demo._constants import GAMMA, IDIO_SD, MARKET_MEAN, MARKET_SD, RHO, SECTOR_SD
from valuesift.core.errors import ConfigError

__all__ = [
    "DEMO_TRUTH",
    "spearman_from_pearson",
    "expected_spearman_ic",
    "ic_standard_error",
    "horizon_ic_approx",
]


def spearman_from_pearson(rho: float) -> float:
    """Population Spearman correlation of a bivariate normal with Pearson correlation ``rho``.

    Parameters
    ----------
    rho : float
        Pearson correlation, in [-1, 1].

    Returns
    -------
    float
        ``(6 / pi) * arcsin(rho / 2)``.

    Notes
    -----
    For a bivariate normal pair the population grade (Spearman) correlation is
    :math:`\\rho_S = \\frac{6}{\\pi}\\arcsin(\\rho/2)`.

    References
    ----------
    K. Pearson (1907), "On further methods of determining correlation",
    Drapers' Company Research Memoirs; restated in W. H. Kruskal (1958),
    "Ordinal measures of association", JASA 53(284) (attribution from memory).

    Examples
    --------
    >>> round(spearman_from_pearson(0.10), 6)
    0.095533
    """
    if not -1.0 <= rho <= 1.0:
        raise ConfigError(f"A correlation must lie in [-1, 1]; got {rho!r}.")
    return 6.0 / math.pi * math.asin(rho / 2.0)


def expected_spearman_ic(rho: float, n_names: int) -> float:
    """Expected sample Spearman correlation of ``n_names`` bivariate-normal pairs.

    Parameters
    ----------
    rho : float
        Pearson correlation of the pair, in [-1, 1].
    n_names : int
        Names in the cross-section (at least 3).

    Returns
    -------
    float
        ``6 / (pi (n + 1)) * (arcsin(rho) + (n - 2) arcsin(rho / 2))``.

    Notes
    -----
    The sample Spearman coefficient is biased towards zero in small samples;
    the expression tends to :func:`spearman_from_pearson` as ``n`` grows.

    References
    ----------
    P. A. P. Moran (1948), "Rank correlation and product-moment correlation",
    Biometrika 35(1/2) (from memory).

    Examples
    --------
    >>> round(expected_spearman_ic(0.10, 118), 5)
    0.09473
    """
    if n_names < 3:
        raise ConfigError(f"The expected Spearman correlation needs at least 3 names; got {n_names}.")
    if not -1.0 <= rho <= 1.0:
        raise ConfigError(f"A correlation must lie in [-1, 1]; got {rho!r}.")
    n = float(n_names)
    return 6.0 / (math.pi * (n + 1.0)) * (math.asin(rho) + (n - 2.0) * math.asin(rho / 2.0))


def ic_standard_error(n_names: float, n_months: int) -> float:
    """Approximate standard error of the mean monthly IC under independence.

    Parameters
    ----------
    n_names : float
        Average number of names per cross-section (more than 1).
    n_months : int
        Number of monthly ICs averaged (at least 1).

    Returns
    -------
    float
        ``1 / sqrt(n_names - 1) / sqrt(n_months)``.

    Notes
    -----
    A sample correlation of ``n`` independent pairs near zero has standard
    deviation close to ``1 / sqrt(n - 1)`` (common practice; for a small true
    correlation the factor ``1 - rho**2`` is negligible).  Averaging ``T``
    independent months divides it by ``sqrt(T)``.  Sector effects shared by
    the names of a sector make the true spread slightly larger.

    Examples
    --------
    >>> round(ic_standard_error(118, 179), 5)
    0.00691
    """
    if n_names <= 1 or n_months < 1:
        raise ConfigError(
            f"The IC standard error needs more than 1 name and at least 1 month; got {n_names} names, {n_months} months."
        )
    return 1.0 / math.sqrt(n_names - 1.0) / math.sqrt(n_months)


def horizon_ic_approx(horizon: int, z_autocorrelation: Sequence[float], rho: float = RHO) -> float:
    """Approximate Pearson IC of ``z_t`` with the summed return over ``horizon`` months.

    Parameters
    ----------
    horizon : int
        Months ahead (1 gives ``rho``).
    z_autocorrelation : sequence of float
        ``a_1 .. a_{h-1}``: mean cross-sectional correlation of ``z_t`` with
        ``z_{t+k}`` (at least ``horizon - 1`` values; extra ones are ignored).
    rho : float
        The one-month correlation (default: the planted one).

    Returns
    -------
    float
        ``rho * S / sqrt(h (1 - rho**2) + rho**2 * V)`` with
        ``S = 1 + a_1 + ... + a_{h-1}`` and
        ``V = h + 2 * sum_{k=1}^{h-1} (h - k) a_k``.

    Notes
    -----
    Only the one-month relation is planted.  Write the one-month return in
    units of its cross-sectional standard deviation as
    ``r_{t+k} = rho z_{t+k-1} + u_{t+k}`` with ``Var(u) = 1 - rho**2``, and
    ``R = r_{t+1} + ... + r_{t+h}``.  Then ``Cov(z_t, R) = rho * S`` exactly
    (the shocks are drawn after ``z_t``) and
    ``Var(R) = h (1 - rho**2) + rho**2 V`` if the shocks are uncorrelated with
    later signals.  That last step and summing instead of compounding are the
    approximations (a price shock lowers the earnings yield until the next
    report, a small negative covariance); the ``a_k`` are measured, not planted.

    Examples
    --------
    >>> round(horizon_ic_approx(1, []), 4)
    0.1
    >>> round(horizon_ic_approx(3, [0.9, 0.8]), 4)
    0.1546
    """
    if horizon < 1:
        raise ConfigError(f"The horizon must be at least 1 month; got {horizon}.")
    if len(z_autocorrelation) < horizon - 1:
        raise ConfigError(
            f"A {horizon}-month horizon needs {horizon - 1} autocorrelations; got {len(z_autocorrelation)}."
        )
    a = [float(x) for x in z_autocorrelation[: horizon - 1]]
    s = 1.0 + sum(a)
    v = horizon + 2.0 * sum((horizon - k) * a_k for k, a_k in enumerate(a, start=1))
    return rho * s / math.sqrt(horizon * (1.0 - rho**2) + rho**2 * v)


DEMO_TRUTH: Mapping[str, float] = MappingProxyType(
    {
        "horizon_months": 1.0,
        "gamma": GAMMA,
        "rho_pearson": RHO,
        "spearman_ic": spearman_from_pearson(RHO),
        "market_mean": MARKET_MEAN,
        "market_sd": MARKET_SD,
        "sector_sd": SECTOR_SD,
        "idio_sd": IDIO_SD,
        "cross_section_noise_sd": math.sqrt(SECTOR_SD**2 + IDIO_SD**2),
    }
)
"""Read-only truth of the planted one-month relation (see the module docstring)."""
