"""Forward total returns, dividends, delisting and annualisation."""

from __future__ import annotations

import numpy as np
import pytest

from valuesift.core.returns import forward_returns, level_forward_returns, monthly_returns, price_track
from valuesift.core.portfolio.performance import annualise


def _track(prices: list[float], divs: list[float]):  # type: ignore[no-untyped-def]
    p = np.array(prices, dtype=float)[:, None]
    v = np.isfinite(p) & (p > 0)
    return price_track(p, v, np.array(divs, dtype=float)[:, None]), v


def test_holding_period_return_with_dividend() -> None:
    # REFERENCE_CHECKS 3 (Bodie, Kane & Marcus, Investments 10th ed., ch. 5): P0 100, P1 110, D 4 -> 0.14.
    tr, v = _track([100, 110], [0, 4])
    for how in ("reinvest", "uninvested"):
        r, _ = forward_returns(tr, v, 1, how, 0.0)  # type: ignore[arg-type]
        assert r[0, 0] == pytest.approx(0.14, abs=1e-12)


def test_chain_linked_two_periods_and_annualised() -> None:
    # REFERENCE_CHECKS 3: buy 100; D 5, P 120; D 5, P 110 -> r1 0.25, r2 -0.0416667, total 0.1979167,
    # geometric annualised (two years) 0.0944938.
    tr, v = _track([100, 120, 110], [0, 5, 5])
    r1, _ = forward_returns(tr, v, 1, "reinvest", 0.0)
    assert r1[0, 0] == pytest.approx(0.25, abs=1e-12)
    assert r1[1, 0] == pytest.approx(-0.0416667, abs=1e-7)
    r2, _ = forward_returns(tr, v, 2, "reinvest", 0.0)
    assert r2[0, 0] == pytest.approx(0.1979167, abs=1e-7)
    assert float(annualise(r2[0, 0], 24)) == pytest.approx(0.0944938, abs=1e-7)  # each period read as a year
    u2, _ = forward_returns(tr, v, 2, "uninvested", 0.0)
    assert u2[0, 0] == pytest.approx((110 + 5 + 5) / 100 - 1, abs=1e-12)  # dividends held as cash


@pytest.mark.parametrize(
    "price,months,hpr,ear",
    [(97.36, 6, 0.0271159, 0.0549670), (95.52, 12, 0.0469012, 0.0469012), (23.30, 300, 3.2918455, 0.0599998)],
)
def test_annualisation_zero_coupon_table(price: float, months: int, hpr: float, ear: float) -> None:
    # REFERENCE_CHECKS 4 (Bodie, Kane & Marcus, Table 5.1): EAR = (1 + HPR)^(1/T) - 1.
    r = level_forward_returns(np.array([price] + [np.nan] * (months - 1) + [100.0]), months)[0]
    assert r == pytest.approx(hpr, abs=1e-6)
    assert float(annualise(r, months)) == pytest.approx(ear, abs=1e-6)


def test_delisting_inside_horizon_uses_last_price_and_assumption() -> None:
    tr, v = _track([10, 11, np.nan, np.nan, np.nan], [0, 0, 0, 0, 0])
    r, gone = forward_returns(tr, v, 3, "reinvest", -0.3)
    assert r[0, 0] == pytest.approx(1.1 * 0.7 - 1)
    assert gone[0, 0] and gone[1, 0]
    assert r[1, 0] == pytest.approx(-0.3)  # from t=1 the last price is t=1 itself
    assert np.isnan(r[2, 0])  # no valid price at the start
    r0, _ = forward_returns(tr, v, 1, "reinvest", -0.3)
    assert r0[0, 0] == pytest.approx(0.1)  # no delisting inside a 1-month horizon from t=0
    assert r0[1, 0] == pytest.approx(-0.3)  # delists in the month after t=1


def test_gap_is_not_a_delisting_and_end_of_history_is_nan() -> None:
    tr, v = _track([10, 11, np.nan, 12, 13], [0, 0, 0, 0, 0])
    r, gone = forward_returns(tr, v, 2, "reinvest", -0.5)
    assert r[0, 0] == pytest.approx(0.1) and not gone[0, 0]  # to the last valid price in the horizon
    assert r[1, 0] == pytest.approx(12 / 11 - 1)
    assert np.isnan(r[3, 0]) and np.isnan(r[4, 0])  # t + h past the last date


def test_monthly_returns_apply_delisting_once_then_cash() -> None:
    tr, v = _track([10, 11, np.nan, np.nan], [0, 0, 0, 0])
    m = monthly_returns(tr, -0.2)
    np.testing.assert_allclose(m[:3, 0], [0.1, -0.2, 0.0])
    assert np.isnan(m[3, 0])


def test_dividend_before_first_price_is_ignored() -> None:
    tr, v = _track([np.nan, 50, 55], [1.0, 1.0, 0.5])
    r, _ = forward_returns(tr, v, 1, "reinvest", 0.0)
    assert r[1, 0] == pytest.approx((55 + 0.5) / 50 - 1)
    assert np.isnan(r[0, 0])
