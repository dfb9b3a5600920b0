"""Headline inference for overlapping horizons against outside references.

Sources: shared/REFERENCE_CHECKS.md cases 5, 6, 17, 18, 19 (Newey & West 1987; Hansen & Hodrick 1980;
Lo 2002), statsmodels OLS on a constant with cov_type="HAC" (kernel "uniform"/"bartlett",
use_correction=False), and a plain loop for the non-overlapping sub-samples.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import statsmodels.api as sm
from hypothesis import given, settings
from hypothesis import strategies as st

from valuesift.core.inference.evidence import evidence_category
from valuesift.core.inference.hac import hac_lags, hansen_hodrick_se, headline_inference, newey_west_se
from valuesift.core.inference.nonoverlap import headline_block, independent_periods, nonoverlap_t
from valuesift.core.inference.sharpe import sharpe_ratio_se, sharpe_ratio_t

M = [0.02, -0.01, 0.03, 0.01, -0.02, 0.04, 0.00, 0.01, -0.03, 0.02, 0.05, -0.01, 0.02, 0.01]
Y = np.array([M[i] + M[i + 1] + M[i + 2] for i in range(12)])  # case 6: overlapping 3-period sums


def _sm(x: np.ndarray, lags: int, kernel: str) -> tuple[float, float]:
    with warnings.catch_warnings():  # a rectangular variance below zero gives statsmodels a NaN SE (and a warning)
        warnings.simplefilter("ignore", RuntimeWarning)
        fit = sm.OLS(x, np.ones_like(x)).fit(cov_type="HAC", cov_kwds={"maxlags": lags, "kernel": kernel,
                                                                      "use_correction": False})
        return float(fit.bse[0]), float(fit.tvalues[0])  # (computed on first use: inside the filter)


def test_hansen_hodrick_case_17_by_hand_and_statsmodels() -> None:
    # REFERENCE_CHECKS case 17: SE 0.005776008, t 5.0496237 (1e-6); hand formula of gamma_j / T.
    u = Y - Y.mean()
    gam = [float(u[j:] @ u[: u.size - j]) / u.size for j in range(3)]
    hand = math.sqrt((gam[0] + 2 * (gam[1] + gam[2])) / u.size)
    se = hansen_hodrick_se(Y, 2)
    assert se == pytest.approx(hand, abs=1e-15)
    assert se == pytest.approx(0.005776008, abs=1e-9)
    assert se == pytest.approx(_sm(Y, 2, "uniform")[0], rel=1e-12)
    out = headline_inference(Y, 3, "overlap")
    assert out["method"] == "hansen_hodrick" and out["lags"] == 2
    assert out["t"] == pytest.approx(5.0496237, abs=1e-6)
    assert out["t_bartlett"] == pytest.approx(4.4248949, abs=1e-6)  # case 17: Bartlett under-corrects


def test_newey_west_case_5_for_one_month() -> None:
    # REFERENCE_CHECKS case 5: L = 2, mean 0.0341667, NW SE 0.004779742, t 7.148224.
    x = np.array([0.05, 0.02, -0.01, 0.08, 0.03, 0.06, -0.02, 0.04, 0.07, 0.01, 0.05, 0.03])
    out = headline_inference(x, 1, "overlap_or_auto")
    assert out["method"] == "newey_west" and out["lags"] == 2
    assert out["se"] == pytest.approx(0.004779742, abs=1e-9)
    assert out["t"] == pytest.approx(7.148224, abs=1e-6)


@settings(max_examples=40, deadline=None)
@given(seed=st.integers(0, 10_000), h=st.integers(2, 12), t=st.integers(30, 200))
def test_headline_matches_statsmodels_uniform_or_falls_back(seed: int, h: int, t: int) -> None:
    rng = np.random.default_rng(seed)
    m = rng.normal(0.01, 0.05, t + h)
    x = np.convolve(m, np.ones(h), "valid")[:t]  # overlapping h-period sums
    out = headline_inference(x, h, "overlap_or_auto")
    lags = hac_lags(h, t, "overlap_or_auto")
    se_u, t_u = _sm(x, lags, "uniform")
    if out["method"] == "hansen_hodrick":
        assert out["se"] == pytest.approx(se_u, rel=1e-9)
    else:  # the rectangular variance was not positive (statsmodels agrees: no SE): Bartlett with 2L lags
        assert not np.isfinite(se_u) or se_u <= 0
        assert out["method"] == "newey_west_fallback"
        fb = min(2 * lags, t - 1)
        assert out["lags"] == fb and out["se"] == pytest.approx(newey_west_se(x, fb), rel=1e-12)
    assert out["t_bartlett"] == pytest.approx(_sm(x, lags, "bartlett")[1], rel=1e-9)


def test_nonoverlap_case_18_against_a_plain_loop() -> None:
    # REFERENCE_CHECKS case 18: t per offset 1.6160170, 2.2, 4.3333333; mean 2.7164501.
    r = nonoverlap_t(Y, 3)
    assert r["t_each"] == pytest.approx([1.6160170, 2.2, 4.3333333], abs=1e-6)
    loop = []
    for k in range(3):
        s = Y[k::3]
        loop.append(s.mean() / (s.std(ddof=1) / math.sqrt(s.size)))
    assert r["t_each"] == pytest.approx(loop, abs=1e-12)
    assert (r["t_mean"], r["t_min"], r["t_max"]) == pytest.approx((2.7164501, 1.6160170, 4.3333333), abs=1e-6)


def test_independent_periods_and_the_too_short_guard() -> None:
    assert independent_periods(168, 12) == 14.0
    assert independent_periods(36, 24) == 1.5  # not rounded
    # 60 months of a strongly persistent overlapping series at h = 24: HAC variances collapse, the guard holds
    rng = np.random.default_rng(3)
    m = rng.normal(0.01, 0.03, 60)
    x = np.full(60, np.nan)
    x[: 60 - 24] = np.convolve(m, np.ones(24), "valid")[: 60 - 24]
    block = headline_block(x, 24, "overlap_or_auto")
    assert block["independent_periods"] == pytest.approx(36 / 24)
    assert block["too_short"] and block["evidence"] == "too_short"


@pytest.mark.parametrize("t, short, code", [
    (3.4, False, "strong"), (2.5, False, "moderate"), (1.2, False, "no_evidence"), (-1.2, False, "no_evidence"),
    (-2.4, False, "moderate_reverse"), (-3.1, False, "strong_reverse"), (231.0, True, "too_short"),
    (float("nan"), False, "not_available"),
])
def test_evidence_is_sign_aware_and_never_a_verdict_when_too_short(t: float, short: bool, code: str) -> None:
    assert evidence_category(t, short) == code


def test_lo_2002_sharpe_standard_error_case_19() -> None:
    # REFERENCE_CHECKS cases 10 and 19: monthly SR 0.15275252, SE 0.29035419, t 0.52609030.
    r = np.array([0.02, -0.01, 0.03, -0.05, -0.02, 0.04, 0.01, -0.03, 0.05, 0.02, -0.01, 0.03]) - 0.002
    sr = r.mean() / r.std(ddof=1)
    assert sr == pytest.approx(0.15275252, abs=1e-8)
    assert sharpe_ratio_se(sr, 12) == pytest.approx(0.29035419, abs=1e-8)
    assert sharpe_ratio_t(sr, 12) == pytest.approx(0.52609030, abs=1e-8)
    assert sharpe_ratio_se(sr, 12) * math.sqrt(12) == pytest.approx(1.00581642, abs=1e-7)
