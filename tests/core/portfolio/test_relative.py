"""Benchmark-relative figures against Grinold & Kahn's definitions (REFERENCE_CHECKS case 21) and statsmodels OLS."""

from __future__ import annotations

import numpy as np
import pytest
import statsmodels.api as sm

from valuesift.core.portfolio.relative import capture_ratios, regression_hac, relative_performance

# REFERENCE_CHECKS case 21 (Grinold & Kahn, Active Portfolio Management, 2nd ed., ch. 5; Jensen 1968)
PORT = np.array([.02, -.01, .03, .00, .015, -.02])
BENCH = np.array([.01, .00, .02, .01, .015, -.03])


def test_case_21_active_return_tracking_error_information_ratio() -> None:
    r = relative_performance(PORT, BENCH)
    assert r["active_return_ann"] / 12 == pytest.approx(0.00166667, abs=1e-8)  # case 21: monthly mean active
    assert r["tracking_error_ann"] == pytest.approx(0.03405877, abs=1e-8)      # case 21
    assert r["information_ratio"] == pytest.approx(0.58722022, abs=1e-8)       # case 21


def test_case_21_jensen_alpha_and_beta() -> None:
    r = relative_performance(PORT, BENCH)
    assert r["alpha_ann"] / 12 == pytest.approx(0.00203085, abs=1e-8)  # case 21 (statsmodels OLS with a constant)
    assert r["alpha_ann"] == pytest.approx(0.02437018, abs=1e-7)
    assert r["beta"] == pytest.approx(0.91259640, abs=1e-8)
    # six months: below the ten-period guard, no verdict word
    assert r["too_short"] is True and r["alpha_evidence"] == "too_short"


@pytest.mark.parametrize("lags", [0, 2, 4])
def test_hac_t_matches_statsmodels(lags: int) -> None:
    rng = np.random.default_rng(7)
    x = rng.normal(0.005, 0.04, 120)
    y = 0.002 + 0.9 * x + rng.normal(0, 0.02, 120)
    ours = regression_hac(y, x, lags)
    # statsmodels 0.15: HAC with Bartlett kernel, no small-sample correction
    fit = sm.OLS(y, sm.add_constant(x)).fit(cov_type="HAC", cov_kwds={"maxlags": lags, "use_correction": False})
    assert ours["alpha"] == pytest.approx(fit.params[0], abs=1e-12)
    assert ours["beta"] == pytest.approx(fit.params[1], abs=1e-12)
    assert ours["t_alpha"] == pytest.approx(fit.tvalues[0], rel=1e-9)
    assert ours["t_beta"] == pytest.approx(fit.tvalues[1], rel=1e-9)


def test_residual_information_ratio_is_alpha_over_residual_risk() -> None:
    rng = np.random.default_rng(3)
    x = rng.normal(0.005, 0.04, 60)
    y = 0.003 + 1.2 * x + rng.normal(0, 0.01, 60)
    r = relative_performance(y, x)
    fit = sm.OLS(y, sm.add_constant(x)).fit()
    theta = y - fit.params[1] * x  # Grinold & Kahn residual return
    assert r["information_ratio_residual"] == pytest.approx(12 * fit.params[0] / (theta.std(ddof=1) * np.sqrt(12)),
                                                            rel=1e-10)
    assert r["too_short"] is False and r["alpha_evidence"] in {"strong", "moderate", "no_evidence"}


def test_capture_ratios_by_hand() -> None:
    # up months of the comparison: 1, 3 (0.01, 0.02); down: 2, 4 (-0.02, -0.02); hand calculation
    up, down = capture_ratios(np.array([0.02, -0.01, 0.03, -0.02, 0.5]), np.array([0.01, -0.02, 0.02, -0.02, 0.0]))
    assert up == pytest.approx(0.025 / 0.015) and down == pytest.approx(-0.015 / -0.02)


def test_missing_months_are_left_out_pairwise() -> None:
    p = np.r_[PORT, np.nan]
    b = np.r_[BENCH, 0.01]
    assert relative_performance(p, b)["information_ratio"] == pytest.approx(0.58722022, abs=1e-8)
