"""Earnings dated by their announcement: detection, the user's choice of column, and no look-ahead.

The rule (issue: evidence that never overstates, B): each EPS is used from the first month-end on or after the
date it became public, row by row, with no fixed lag. Invented data only.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from valuesift.core.intake import ReadOptions, build_panel, read_table
from valuesift.core.study import StudyConfig, run_study


def _files(tmp: Path, *, col: str = "announced", seed: int = 0, garbage_after: str | None = None) -> list[Path]:
    rng = np.random.default_rng(seed)
    dates = pd.date_range("2015-01-31", periods=60, freq="ME")
    secs = [f"QZ{i:02d}" for i in range(20)]
    px = pd.DataFrame(np.exp(np.cumsum(rng.normal(0.005, 0.05, (60, 20)), axis=0)) * 50, index=dates, columns=secs)
    rows = []
    for q_end in pd.date_range("2014-12-31", "2019-12-31", freq="QE"):
        for s in secs:
            lag_days = int(rng.integers(20, 80))  # published 20-80 days after the quarter end
            rows.append({"period_end": q_end.date().isoformat(), "code": s,
                         col: (q_end + pd.Timedelta(days=lag_days)).date().isoformat(),
                         "eps": round(float(rng.normal(3, 1)), 4)})
    eps = pd.DataFrame(rows)
    if garbage_after is not None:
        late = pd.to_datetime(eps[col]) > pd.Timestamp(garbage_after)
        eps.loc[late, "eps"] = rng.normal(100, 50, int(late.sum())).round(4)
    pp, ep = tmp / "prices.csv", tmp / "earnings.csv"
    px.rename_axis("date").to_csv(pp)
    eps.to_csv(ep, index=False)
    return [pp, ep]


def _panel(paths: list[Path], **opts):  # type: ignore[no-untyped-def]
    parsed = [read_table(paths[0], options=ReadOptions(kind="prices")),
              read_table(paths[1], options=ReadOptions(kind="earnings", **opts))]
    return build_panel(parsed)


def test_announcement_column_is_detected_and_used_row_by_row(tmp_path: Path) -> None:
    paths = _files(tmp_path)
    panel = _panel(paths)
    rep = panel.report.file("earnings.csv")
    assert rep.availability_column == "announced" and panel.eps_dated_by_availability
    raw = pd.read_csv(paths[1])
    row = raw.iloc[5]
    month_end = (pd.Timestamp(row["announced"]) + pd.offsets.MonthEnd(0)).normalize()
    assert panel.eps.loc[month_end, row["code"]] == pytest.approx(row["eps"])  # first month-end on or after it
    # the study applies no fixed lag to such figures, whatever the setting says
    a = run_study(panel, StudyConfig(horizons=(1,), min_breadth=5))
    b = run_study(panel, StudyConfig(horizons=(1,), min_breadth=5, reporting_lag_months=3))
    pd.testing.assert_frame_equal(a.eps_used, b.eps_used)


def test_the_user_names_the_column(tmp_path: Path) -> None:
    paths = _files(tmp_path, col="went_public")  # a name the detector does not know
    assert not _panel(paths).eps_dated_by_availability
    panel = _panel(paths, earnings_date_column="went_public")
    assert panel.eps_dated_by_availability and panel.report.file("earnings.csv").availability_column == "went_public"


def test_announcement_dated_panels_pass_the_future_garbage_test(tmp_path: Path) -> None:
    # Every figure published after the cut is replaced by garbage: nothing the study dates on or before the
    # cut may change (no look-ahead through announcement dates).
    cut = "2017-06-30"
    clean = run_study(_panel(_files(tmp_path / "a" if (tmp_path / "a").mkdir() is None else tmp_path)),
                      StudyConfig(horizons=(1,), min_breadth=5))
    (tmp_path / "b").mkdir()
    dirty = run_study(_panel(_files(tmp_path / "b", garbage_after=cut)), StudyConfig(horizons=(1,), min_breadth=5))
    upto = clean.signal_raw.index <= pd.Timestamp(cut)
    pd.testing.assert_frame_equal(clean.signal_raw[upto], dirty.signal_raw[upto])
    pd.testing.assert_frame_equal(clean.eps_used[upto], dirty.eps_used[upto])
    assert not clean.signal_raw[~upto].equals(dirty.signal_raw[~upto])  # the garbage did arrive later


def test_suspect_dividends_are_flagged_and_set_aside_unless_kept(tmp_path: Path) -> None:
    # A dividend in a month without a price, and one of 12 % of the price, would enter returns unchecked.
    dates = pd.date_range("2018-01-31", periods=24, freq="ME")
    px = pd.DataFrame({"QZ01": np.linspace(50, 60, 24), "QZ02": np.linspace(20, 25, 24)}, index=dates)
    px.iloc[5, 0] = np.nan
    divs = pd.DataFrame({"security": ["QZ01", "QZ02", "QZ02"],
                         "ex_date": [dates[5] - pd.Timedelta(days=3), dates[8] - pd.Timedelta(days=3),
                                     dates[11] - pd.Timedelta(days=3)],
                         "amount": [0.5, 0.12 * px.iloc[8, 1], 0.2]})
    pp, dp = tmp_path / "prices.csv", tmp_path / "dividends.csv"
    px.rename_axis("date").to_csv(pp)
    divs.assign(ex_date=divs["ex_date"].dt.date.astype(str)).to_csv(dp, index=False)
    parsed = [read_table(pp, options=ReadOptions(kind="prices")), read_table(dp, options=ReadOptions(kind="dividends"))]
    from valuesift.core.intake import PanelOptions

    panel = build_panel(parsed)
    assert len(panel.dividends) == 1 and float(panel.dividends["amount"].iloc[0]) == pytest.approx(0.2)
    reasons = set(panel.report.alignment["reason"])
    assert {"dividend_without_price", "dividend_implausible"} <= reasons
    kept = build_panel(parsed, PanelOptions(keep_suspect_dividends=True))
    assert len(kept.dividends) == 3
