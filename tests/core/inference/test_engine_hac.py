"""Newey-West standard errors against statsmodels and the hand Bartlett formula."""

from __future__ import annotations

import numpy as np
import pytest
import statsmodels.api as sm

from valuesift.core.inference.hac import auto_lags, hac_lags, mean_inference, newey_west_se

X5 = np.array([0.05, 0.02, -0.01, 0.08, 0.03, 0.06, -0.02, 0.04, 0.07, 0.01, 0.05, 0.03])
M6 = np.array([0.02, -0.01, 0.03, 0.01, -0.02, 0.04, 0.00, 0.01, -0.03, 0.02, 0.05, -0.01, 0.02, 0.01])


def _hand_bartlett(x: np.ndarray, lags: int) -> float:
    # Newey & West (1987), Econometrica 55(3): gamma_j divided by T, weights 1 - j/(L+1).
    u = x - x.mean()
    t = len(x)
    om = sum(u[k] * u[k] for k in range(t)) / t
    for j in range(1, lags + 1):
        g = sum(u[k] * u[k - j] for k in range(j, t)) / t
        om += 2 * (1 - j / (lags + 1)) * g
    return float(np.sqrt(om / t))


def _sm_se(x: np.ndarray, lags: int, kernel: str = "bartlett") -> float:
    # statsmodels OLS on a constant with cov_type="HAC" (use_correction defaults to False).
    res = sm.OLS(x, np.ones_like(x)).fit(cov_type="HAC", cov_kwds={"maxlags": lags, "kernel": kernel})
    return float(res.bse[0])


def test_nw_se_reference_series() -> None:
    # REFERENCE_CHECKS 5: mean 0.0341667, NW SE (L=2) 0.004779742, t 7.148224, iid SE 0.008829902.
    inf = mean_inference(X5, 2)
    assert inf["mean"] == pytest.approx(0.0341667, abs=1e-7)
    assert inf["se_hac"] == pytest.approx(0.004779742, abs=1e-9)
    assert inf["t_hac"] == pytest.approx(7.148224, abs=1e-5)
    assert inf["se_naive"] == pytest.approx(0.008829902, abs=1e-9)
    assert inf["se_hac"] == pytest.approx(_sm_se(X5, 2), abs=1e-12)
    assert inf["se_hac"] == pytest.approx(_hand_bartlett(X5, 2), abs=1e-12)


def test_overlapping_three_month_returns() -> None:
    # REFERENCE_CHECKS 6 (Hansen & Hodrick 1980, JPE 88(5)): h = 3 -> L = 2; Bartlett SE 0.006591494,
    # uniform-kernel SE 0.005776008 (statsmodels kernel "uniform"), naive SE 0.006504094.
    y = M6[:-2] + M6[1:-1] + M6[2:]
    assert y.size == 12
    lags = hac_lags(3, y.size, "overlap")
    assert lags == 2
    inf = mean_inference(y, lags)
    assert inf["mean"] == pytest.approx(0.0291667, abs=1e-7)
    assert inf["se_hac"] == pytest.approx(0.006591494, abs=1e-9)
    assert inf["t_hac"] == pytest.approx(4.4249, abs=1e-4)
    # The check's "naive" SE is sqrt(gamma_0 / T) (divide by T, i.e. zero lags), 0.006504094;
    # ValueSift's reported se_naive uses ddof 1 (sd / sqrt(T)) as in check 5.
    assert newey_west_se(y, 0) == pytest.approx(0.006504094, abs=1e-9)
    assert inf["se_naive"] == pytest.approx(y.std(ddof=1) / np.sqrt(12), abs=1e-12)
    assert _sm_se(y, 2, "uniform") == pytest.approx(0.005776008, abs=1e-9)  # our kernel is not uniform
    assert inf["se_hac"] != pytest.approx(0.005776008, abs=1e-6)


@pytest.mark.parametrize("t,expected", [(12, 2), (36, 3), (120, 4), (360, 5), (1000, 6)])
def test_automatic_lag_rule(t: int, expected: int) -> None:
    # REFERENCE_CHECKS 5: Newey & West (1994), Rev. Econ. Stud. 61(4): floor(4 (T/100)^(2/9)).
    assert auto_lags(t) == expected


@pytest.mark.parametrize(
    "h,t,rule,expected",
    [
        (1, 120, "overlap", 0),  # exactly h - 1
        (1, 120, "overlap_or_auto", 4),  # max(h - 1, floor(4 (120/100)^(2/9))) = max(0, 4)
        (3, 12, "overlap_or_auto", 2),
        (12, 120, "overlap_or_auto", 11),  # overlap dominates
        (36, 20, "overlap", 19),  # never beyond T - 1
    ],
)
def test_hac_lag_rule(h: int, t: int, rule: str, expected: int) -> None:
    assert hac_lags(h, t, rule) == expected  # type: ignore[arg-type]


@pytest.mark.parametrize("lags", [0, 1, 4, 11])
def test_nw_matches_statsmodels_random(lags: int) -> None:
    rng = np.random.default_rng(lags)
    x = np.convolve(rng.normal(size=200), np.ones(5), mode="valid")
    assert newey_west_se(x, lags) == pytest.approx(_sm_se(x, lags), rel=1e-10)


def test_too_short_series_is_nan() -> None:
    assert np.isnan(newey_west_se(np.array([0.1]), 2))
    assert np.isnan(mean_inference(np.array([]), 0)["mean"])
