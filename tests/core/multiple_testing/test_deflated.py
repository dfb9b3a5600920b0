"""Probabilistic and deflated Sharpe ratios against REFERENCE_CHECKS case 20 (Bailey & López de Prado 2012, 2014)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from valuesift.core.multiple_testing.deflated import deflated_sharpe, expected_max_sharpe, probabilistic_sharpe

R = np.array([0.02, -0.01, 0.03, -0.05, -0.02, 0.04, 0.01, -0.03, 0.05, 0.02, -0.01, 0.03]) - 0.002  # case 10 less rf


def test_case_20_moments_and_psr() -> None:
    assert stats.skew(R) == pytest.approx(-0.36926187, abs=1e-8)          # case 20, scipy population moments
    assert stats.kurtosis(R, fisher=False) == pytest.approx(2.07151290, abs=1e-8)
    assert probabilistic_sharpe(R, 0.0) == pytest.approx(0.68844950, abs=1e-8)  # case 20


def test_case_20_deflated() -> None:
    assert expected_max_sharpe(10, 0.01) == pytest.approx(0.15745983, abs=1e-8)  # case 20
    dsr, star = deflated_sharpe(R, 10, 0.01)
    assert dsr == pytest.approx(0.49395821, abs=1e-8) and star == pytest.approx(0.15745983, abs=1e-8)


def test_one_trial_has_no_deflation_and_short_series_none() -> None:
    assert expected_max_sharpe(1, 0.01) == 0.0
    assert np.isnan(probabilistic_sharpe(np.array([0.01, 0.02])))


def test_psr_matches_a_hand_formula_on_random_returns() -> None:
    rng = np.random.default_rng(11)
    x = rng.standard_t(5, 240) * 0.03 + 0.004
    sr = x.mean() / x.std(ddof=1)
    g3, g4 = stats.skew(x), stats.kurtosis(x, fisher=False)
    want = stats.norm.cdf((sr - 0.05) * np.sqrt(239) / np.sqrt(1 - g3 * sr + (g4 - 1) / 4 * sr ** 2))  # 2012 eq.
    assert probabilistic_sharpe(x, 0.05) == pytest.approx(want, abs=1e-12)
