"""Sharpe-ratio standard error (Lo 2002, iid case) against the project's reference case 19."""

from __future__ import annotations

import math

import numpy as np
import pytest

from valuesift.core.inference.sharpe import sharpe_ratio_se, sharpe_ratio_t
from valuesift.core.portfolio.performance import sharpe_ratio

# Reference case 10/19 of /work/shared/REFERENCE_CHECKS.md (Sharpe 1994; Lo 2002, FAJ 58(4)).
CASE_10 = np.array([0.02, -0.01, 0.03, -0.05, -0.02, 0.04, 0.01, -0.03, 0.05, 0.02, -0.01, 0.03])
RF = 0.002


def test_case_19_standard_error_and_t() -> None:
    sr_annual = sharpe_ratio(CASE_10, RF)
    assert sr_annual == pytest.approx(0.52915026, abs=1e-8)          # case 10
    sr_m = sr_annual / math.sqrt(12)
    assert sr_m == pytest.approx(0.15275252, abs=1e-8)               # case 19
    assert sharpe_ratio_se(sr_m, 12) == pytest.approx(0.29035419, abs=1e-8)
    assert sharpe_ratio_t(sr_m, 12) == pytest.approx(0.52609030, abs=1e-7)
    # annualised: SE times sqrt(12), case 19
    assert math.sqrt(12) * sharpe_ratio_se(sr_m, 12) == pytest.approx(1.00581642, abs=1e-7)


def test_undefined_cases_are_nan() -> None:
    assert math.isnan(sharpe_ratio_se(0.1, 1)) and math.isnan(sharpe_ratio_t(float("nan"), 24))
