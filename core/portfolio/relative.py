"""A portfolio measured against the comparison it is judged by: active return, tracking error,
information ratios, Jensen's alpha and beta, up- and down-market capture.

References
----------
Grinold, R. & Kahn, R. (2000). Active Portfolio Management, 2nd ed., ch. 5 (active return,
tracking error, information ratio; residual return and residual risk).
Jensen, M. (1968). The performance of mutual funds in the period 1945-1964. J. Finance 23(2).
Newey, W. & West, K. (1987). Econometrica 55(3) (HAC covariance of the regression).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from valuesift.core.choices import HacLagRule
from valuesift.core.inference.hac import hac_lags
from valuesift.core.inference.nonoverlap import TOO_SHORT_PERIODS
from valuesift.core.inference.evidence import evidence_category

__all__ = ["RELATIVE_KEYS", "regression_hac", "capture_ratios", "relative_performance"]

#: The keys of :func:`relative_performance`, in output order.
RELATIVE_KEYS: tuple[str, ...] = (
    "active_return_ann", "tracking_error_ann", "information_ratio", "information_ratio_residual",
    "beta", "beta_t", "alpha_ann", "alpha_t", "alpha_se_method", "hac_lags", "residual_risk_ann",
    "up_capture", "down_capture", "n_months", "too_short", "alpha_evidence",
)


def regression_hac(y: np.ndarray, x: np.ndarray, lags: int) -> dict[str, Any]:
    """OLS of ``y`` on a constant and ``x`` with a Newey-West (Bartlett) HAC covariance.

    Parameters
    ----------
    y, x : ndarray (T,)
        Paired observations (positions where either is not finite are dropped).
    lags : int
        Bartlett lags L.

    Returns
    -------
    dict
        ``alpha, beta, se_alpha, se_beta, t_alpha, t_beta, resid`` (ndarray), ``n``.

    Notes
    -----
    ``b = (X'X)^-1 X'y`` with ``X = [1, x]``; residuals ``e``; scores ``g_t = X_t e_t``;
    ``S = Gamma_0 + sum_{j=1..L} (1 - j/(L+1)) (Gamma_j + Gamma_j')`` with
    ``Gamma_j = sum_{t>j} g_t g_{t-j}'``; ``V = (X'X)^-1 S (X'X)^-1``.  No small-sample
    correction: the same as statsmodels ``OLS(y, X).fit(cov_type="HAC",
    cov_kwds={"maxlags": L, "use_correction": False})``.

    References
    ----------
    Newey, W. & West, K. (1987). Econometrica 55(3), 703-708.
    """
    y = np.asarray(y, dtype=float)
    x = np.asarray(x, dtype=float)
    ok = np.isfinite(y) & np.isfinite(x)
    y, x = y[ok], x[ok]
    n = int(y.size)
    out: dict[str, Any] = {"alpha": math.nan, "beta": math.nan, "se_alpha": math.nan, "se_beta": math.nan,
                           "t_alpha": math.nan, "t_beta": math.nan, "resid": np.array([]), "n": n}
    if n < 3 or float(np.var(x)) <= 0:
        return out
    X = np.column_stack([np.ones(n), x])
    xtx_inv = np.linalg.inv(X.T @ X)
    b = xtx_inv @ (X.T @ y)
    e = y - X @ b
    g = X * e[:, None]
    s = g.T @ g
    for j in range(1, min(int(lags), n - 1) + 1):
        gj = g[j:].T @ g[:-j]
        s += (1.0 - j / (lags + 1.0)) * (gj + gj.T)
    v = xtx_inv @ s @ xtx_inv
    se = np.sqrt(np.where(np.diag(v) > 0, np.diag(v), np.nan))
    out.update({"alpha": float(b[0]), "beta": float(b[1]), "se_alpha": float(se[0]), "se_beta": float(se[1]),
                "t_alpha": float(b[0] / se[0]) if se[0] > 0 else math.nan,
                "t_beta": float(b[1] / se[1]) if se[1] > 0 else math.nan, "resid": e})
    return out


def capture_ratios(port: np.ndarray, comp: np.ndarray) -> tuple[float, float]:
    """Up- and down-market capture: the portfolio's mean return in the comparison's up (down) months
    over the comparison's mean return in those months.

    Notes
    -----
    Up months: comparison return > 0; down months: < 0 (a month of exactly 0 is neither).
    Arithmetic means of the monthly returns (common practice; some vendors compound instead).
    An up capture above 1 and a down capture below 1 is the favourable pattern.

    Examples
    --------
    >>> capture_ratios(np.array([0.02, -0.01, 0.03, -0.02]), np.array([0.01, -0.02, 0.02, -0.02]))
    (1.6666666666666667, 0.75)
    """
    p = np.asarray(port, dtype=float)
    c = np.asarray(comp, dtype=float)
    ok = np.isfinite(p) & np.isfinite(c)
    up, down = ok & (c > 0), ok & (c < 0)
    upc = float(p[up].mean() / c[up].mean()) if up.any() else math.nan
    dnc = float(p[down].mean() / c[down].mean()) if down.any() else math.nan
    return upc, dnc


def relative_performance(port: np.ndarray, comp: np.ndarray, rule: HacLagRule = "overlap_or_auto",
                         comparison: str = "universe") -> dict[str, Any]:
    """Active return, tracking error, information ratios, alpha and beta of monthly returns.

    Parameters
    ----------
    port, comp : ndarray (T,)
        Monthly returns of the portfolio and of the comparison on the same months
        (decimal fractions; months where either is missing are left out).
    rule : {"overlap", "overlap_or_auto"}
        Lag rule of the HAC standard errors (monthly returns: horizon 1, so the
        Newey-West automatic lag ``floor(4 (T/100)^(2/9))``).
    comparison : str
        What ``comp`` is (``"benchmark"`` or ``"universe"``), passed through.

    Returns
    -------
    dict
        The keys of :data:`RELATIVE_KEYS` plus ``comparison``.

    Notes
    -----
    Active return ``a_t = r_P - r_C``; ``active_return_ann = 12 mean(a)``;
    ``tracking_error_ann = sd(a, ddof 1) sqrt(12)``; ``information_ratio`` = their ratio
    (Grinold & Kahn, ch. 5).  Jensen (1968): OLS ``r_P = alpha + beta r_C + e``;
    ``alpha_ann = 12 alpha``; ``alpha_t``, ``beta_t`` (t of beta against 0) with the Newey-West
    HAC covariance of :func:`regression_hac` (the headline rule for one-month returns).
    Residual version (Grinold & Kahn's residual return ``theta = r_P - beta r_C``, residual
    risk ``omega = sd(theta, ddof 1) sqrt(12)``): ``information_ratio_residual = alpha_ann / omega``.
    ``too_short``: fewer than ten months (the too-short guard); then ``alpha_evidence`` is
    ``"too_short"``.  Returns are taken as given (in excess of cash only if they already are).

    References
    ----------
    Grinold & Kahn (2000), Active Portfolio Management, 2nd ed., ch. 5; Jensen (1968), J. Finance 23(2).

    Examples
    --------
    Reference case 21 of the project's check list:

    >>> r = relative_performance(np.array([.02, -.01, .03, .00, .015, -.02]),
    ...                          np.array([.01, .00, .02, .01, .015, -.03]))
    >>> round(r["information_ratio"], 8), round(r["beta"], 8)
    (0.58722022, 0.9125964)
    """
    p = np.asarray(port, dtype=float)
    c = np.asarray(comp, dtype=float)
    ok = np.isfinite(p) & np.isfinite(c)
    p, c = p[ok], c[ok]
    n = int(p.size)
    out: dict[str, Any] = {k: math.nan for k in RELATIVE_KEYS}
    out.update({"n_months": n, "comparison": comparison, "alpha_se_method": "newey_west", "hac_lags": 0})
    short = n < TOO_SHORT_PERIODS
    out["too_short"] = bool(short)
    if n < 2:
        out["alpha_evidence"] = evidence_category(math.nan, short)
        return out
    a = p - c
    te = float(a.std(ddof=1) * math.sqrt(12.0))
    ar = float(12.0 * a.mean())
    out["active_return_ann"] = ar
    out["tracking_error_ann"] = te
    out["information_ratio"] = ar / te if te > 0 else math.nan
    lags = hac_lags(1, n, rule)
    reg = regression_hac(p, c, lags)
    out["hac_lags"] = int(lags)
    if math.isfinite(reg["beta"]):
        theta = p - reg["beta"] * c
        omega = float(theta.std(ddof=1) * math.sqrt(12.0))
        out.update({"beta": reg["beta"], "beta_t": reg["t_beta"], "alpha_ann": 12.0 * reg["alpha"],
                    "alpha_t": reg["t_alpha"], "residual_risk_ann": omega,
                    "information_ratio_residual": 12.0 * reg["alpha"] / omega if omega > 0 else math.nan})
    out["up_capture"], out["down_capture"] = capture_ratios(p, c)
    out["alpha_evidence"] = evidence_category(out["alpha_t"], short)
    return out
