"""Price coverage of a panel, by hand."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from valuesift.core.panel import Panel
from valuesift.core.reporting.coverage import price_coverage


def test_coverage_by_hand() -> None:
    dates = pd.date_range("2020-01-31", periods=4, freq="ME", name="date")
    p = pd.DataFrame({"AQZ1": [1.0, 2.0, np.nan, 3.0], "AQZ2": [np.nan, 5.0, 5.0, 0.0]}, index=dates)
    p.columns.name = "security"
    cov = price_coverage(Panel(prices=p))
    # 5 of 8 cells hold a finite, positive price (0.0 is not a valid price); 1 to 2 names a month.
    assert cov["share_valid"] == pytest.approx(5 / 8)
    assert (cov["n_securities"], cov["n_dates"], cov["min_names"], cov["max_names"]) == (2, 4, 1, 2)
