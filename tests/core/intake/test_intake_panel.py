"""Panel building: month-end alignment, staleness, splits, flags and cross-file notes.

Inputs are small hand-made files; every expected value is worked out by hand
in the comments.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from valuesift.core.errors import ConfigError, IntakeError, Reason
from valuesift.core.intake import PanelOptions, ReadOptions, build_panel, load_files, read_table
from valuesift.core.intake.align import align_to_months, month_calendar
from valuesift.core.intake.flags import longest_flat_run
from valuesift.core.intake.splits import apply_split, detect_splits, shows_same_jump

ME = pd.date_range("2019-01-31", periods=8, freq="ME")


def _csv(frame: dict[str, list[object]], dates: pd.DatetimeIndex = ME) -> bytes:
    cols = list(frame)
    lines = ["date," + ",".join(cols)]
    for i, d in enumerate(dates):
        lines.append(d.strftime("%Y-%m-%d") + "," + ",".join("" if frame[c][i] is None else str(frame[c][i]) for c in cols))
    return ("\n".join(lines) + "\n").encode()


def _prices(frame: dict[str, list[object]], dates: pd.DatetimeIndex = ME) -> object:
    return read_table(_csv(frame, dates), name="prices.csv")


# -- alignment ------------------------------------------------------------------
def test_staleness_limit_on_daily_input() -> None:
    # TOR14 trades only on 2019-01-10 in January: 21 days before the month-end
    data = pd.DataFrame({"date": pd.to_datetime(["2019-01-10", "2019-02-27", "2019-02-28"]),
                         "security": ["TOR14"] * 3, "value": [1.0, 2.0, 3.0]})
    cal = month_calendar(data["date"])
    r = align_to_months(data, cal, staleness_days=10, frequency="daily")
    assert np.isnan(r.values.loc["2019-01-31", "TOR14"]) and bool(r.stale.loc["2019-01-31", "TOR14"])
    assert r.values.loc["2019-02-28", "TOR14"] == 3.0  # the last observation in the month wins
    assert (r.superseded, r.n_stale) == (1, 1)
    r30 = align_to_months(data, cal, staleness_days=30, frequency="daily")
    assert r30.values.loc["2019-01-31", "TOR14"] == 1.0 and r30.n_stale == 0


def test_monthly_input_any_day_of_month() -> None:
    data = pd.DataFrame({"date": pd.to_datetime(["2019-01-15", "2019-02-01"]), "security": ["A", "A"], "value": [1.0, 2.0]})
    r = align_to_months(data, month_calendar(data["date"]), staleness_days=10, frequency="monthly")
    assert r.values["A"].tolist() == [1.0, 2.0] and r.n_stale == 0


def test_calendar_fills_missing_months() -> None:
    cal = month_calendar(pd.Series(pd.to_datetime(["2019-01-31", "2019-04-30"])))
    assert len(cal) == 4 and cal.name == "date"
    assert len(month_calendar(pd.Series([], dtype="datetime64[ns]"))) == 0


# -- splits ---------------------------------------------------------------------
@pytest.mark.parametrize(
    "series,ratio,threshold",
    [
        ([100, 102, 51, 52, 50, 53], 2.0, 0.4),       # 2-for-1
        ([90, 93, 31, 30, 32, 31], 3.0, 0.4),         # 3-for-1
        ([10, 10.5, 21, 20.5, 21.5, 22], 0.5, 0.4),   # 1-for-2 reverse split
        # 3-for-2: a 34% fall, examined only with a threshold below 0.34
        ([60, 61, 40.5, 41, 40, 42], 1.5, 0.3),
    ],
    ids=["2-for-1", "3-for-1", "reverse-1-for-2", "3-for-2"],
)
def test_split_detected(series: list[float], ratio: float, threshold: float) -> None:
    p = pd.DataFrame({"TOR14": series}, index=ME[: len(series)], dtype=float)
    found = detect_splits(p, threshold)
    assert found["ratio"].tolist() == [ratio] and found["date"].iloc[0] == ME[2]


@pytest.mark.parametrize(
    "series",
    [[100, 102, 51, 101, 100, 103],   # halves for one month then reverts: a bad print
     [100, 102, 75, 74, 76, 75],      # a 26% fall: below the threshold
     [100, 102, 58, 57, 59, 58],      # a 43% fall, but 1.76 is no near-integer ratio
     [100, 102, 104, 101, 103, 51]],  # a halving in the last month: cannot confirm it sticks
    ids=["reverts", "small-move", "not-integer", "last-period"],
)
def test_split_not_detected(series: list[float]) -> None:
    p = pd.DataFrame({"TOR14": series}, index=ME[: len(series)], dtype=float)
    assert detect_splits(p, 0.4).empty
    assert detect_splits(pd.DataFrame({"A": [1.0, np.nan]}, index=ME[:2]), 0.4).empty  # too short


def test_apply_split_and_same_jump_rule() -> None:
    p = pd.DataFrame({"A": [100.0, 102.0, 51.0, 52.0]}, index=ME[:4])
    adj = apply_split(p, "A", ME[2], 2.0)
    assert adj["A"].tolist() == [50.0, 51.0, 51.0, 52.0] and p["A"].iloc[0] == 100.0  # input untouched
    eps_jump = pd.Series([4.0, np.nan, np.nan, 2.05], index=ME[:4])
    assert shows_same_jump(eps_jump, ME[2], 2.0) == ME[3]
    eps_flat = pd.Series([2.0, 2.0, 2.05, 2.1], index=ME[:4])
    assert shows_same_jump(eps_flat, ME[2], 2.0) is None
    assert shows_same_jump(pd.Series([-4.0, 2.0], index=ME[1:3]), ME[2], 2.0) is None


def _split_files(eps_values: list[object]) -> list[object]:
    prices = _prices({"TOR14": [100, 102, 51, 52, 50, 53, 54, 55], "VEL22": [20, 21, 22, 21, 23, 24, 25, 26]})
    earn = read_table(_csv({"TOR14": eps_values, "VEL22": [1.0] * 8}), name="eps.csv")
    return [prices, earn]


def test_split_confirmed_adjusts_eps_only_when_it_jumps() -> None:
    # EPS stamped on the old share count halves with the split: it is adjusted too
    files = _split_files([4, 4, 2, 2, 2, 2, 2, 2])
    unconfirmed = build_panel(files)
    assert unconfirmed.report.flagged("suspected_split") == ["TOR14"]
    assert unconfirmed.prices.loc[ME[0], "TOR14"] == 100.0
    p = build_panel(files, PanelOptions(confirmed_splits=frozenset({"TOR14"})))
    assert p.prices.loc[ME[0], "TOR14"] == 50.0 and p.prices.loc[ME[2], "TOR14"] == 51.0
    assert p.eps.loc[ME[0], "TOR14"] == 2.0
    sp = p.report.suspected_splits
    assert bool(sp["applied"].iloc[0]) and bool(sp["eps_adjusted"].iloc[0])
    assert p.report.flagged("split_adjusted") == ["TOR14"]
    assert p.report.securities.loc["TOR14", "split_ratio"] == 2.0
    # EPS already on the new basis: left as stamped
    q = build_panel(_split_files([2, 2, 2, 2, 2, 2, 2, 2]), PanelOptions(apply_all_suspected_splits=True))
    assert q.eps.loc[ME[0], "TOR14"] == 2.0 and not bool(q.report.suspected_splits["eps_adjusted"].iloc[0])


def test_confirmed_split_without_suspicion_is_noted() -> None:
    p = build_panel([_prices({"VEL22": [20, 21, 22, 21, 23, 24, 25, 26]})], PanelOptions(confirmed_splits=frozenset({"VEL22"})))
    assert any("VEL22" in n for n in p.report.panel_notes) and p.report.suspected_splits.empty


# -- flags and coverage ----------------------------------------------------------
def test_security_flags_and_coverage() -> None:
    prices = _prices({
        "LAT01": [None, None, 10, 11, 12, 13, 14, 15],      # lists in month 3: coverage 6/8
        "DEL02": [10, 11, 12, 13, None, None, None, None],  # delists after month 4
        "GAP03": [10, 11, None, 12, 13, 14, 15, 16],        # one gap
        "FLT04": [10, 10, 10, 10, 10, 10, 11, 12],          # six identical prices in a row
    })
    earn = read_table(_csv({"LAT01": [None, None, 0.01, 0.5, 0.5, 0.5, 0.5, 0.5], "DEL02": [-1] * 8,
                            "GAP03": [1.0] * 8, "FLT04": [None] * 8}), name="earnings.csv")
    p = build_panel([prices, earn])
    s = p.report.securities
    assert s.loc["LAT01", "coverage"] == pytest.approx(6 / 8)
    assert s.loc["LAT01", "first_valid"] == ME[2] and s.loc["DEL02", "last_valid"] == ME[3]
    assert s.loc["GAP03", "n_gaps"] == 1 and s.loc["FLT04", "max_flat_run"] == 6
    rep = p.report
    assert rep.flagged("late_listing") == ["LAT01"] and rep.flagged("delisted") == ["DEL02"]
    assert rep.flagged("gaps") == ["GAP03"] and rep.flagged("stale") == ["FLT04"]
    # P/E of LAT01 in month 3 = 10 / 0.01 = 1000 > 200
    assert rep.flagged("extreme_pe") == ["LAT01"] and s.loc["LAT01", "max_abs_pe"] == pytest.approx(1000.0)
    assert rep.flagged("negative_earnings") == ["DEL02"] and rep.flagged("no_earnings") == ["FLT04"]
    assert "late_listing" in rep.securities.loc["LAT01", "flags"].split(";")  # codes; the app words them


def test_longest_flat_run() -> None:
    assert longest_flat_run(np.array([np.nan, np.nan])) == 0
    assert longest_flat_run(np.array([1.0, 2.0, 2.0, 2.0, 3.0, 3.0])) == 3


# -- other kinds ------------------------------------------------------------------
def test_pe_input_turned_into_eps() -> None:
    prices = _prices({"TOR14": [20, 22, 24, 26, 28, 30, 32, 34]})
    pe = read_table(_csv({"TOR14": [10, 11, 0, 13, 14, 15, 16, 17]}), name="pe.csv", options=ReadOptions(kind="earnings"))
    assert pe.report.value_form == "pe"
    p = build_panel([prices, pe])
    assert p.eps.loc[ME[0], "TOR14"] == pytest.approx(2.0)  # 20 / 10
    assert np.isnan(p.eps.loc[ME[2], "TOR14"])              # a P/E of zero gives no EPS


def test_dividends_sectors_holdings_benchmark_notes() -> None:
    prices = _prices({"TOR14": [10, 11, 12, 13, 14, 15, 16, 17], "VEL22": [None, None, 5, 5.5, 6, 6.5, 7, 7.5]})
    div = read_table(b"code,ex_date,amount\nTOR14,03/15/2019,0.5\nVEL22,01/15/2019,0.2\nXAN77,03/15/2019,1\n"
                     b"TOR14,12/15/2018,0.4\n", name="dividends.csv")
    sec = read_table(b"code,sector\nTOR14,Mining\nYUL55,Banks\n", name="sectors.csv")
    hold = read_table(b"code,weight\nTOR14,70%\nXAN77,20%\n", name="holdings.csv")
    bench = read_table(_csv({"level": [100, 101, None, 103, 104, 105, 106, 107]}), name="benchmark.csv")
    p = build_panel([prices, div, sec, hold, bench])
    al = p.report.alignment.set_index(["file", "reason"])["count"]
    assert al[("dividends.csv", "unknown_security")] == 1   # XAN77
    assert al[("dividends.csv", "outside_history")] == 2    # VEL22 before its listing; TOR14 before the calendar
    assert al[("sectors.csv", "unknown_security")] == 1     # YUL55
    assert sorted(p.dividends["security"].unique()) == ["TOR14", "VEL22"] and len(p.dividends) == 3
    assert p.dividend_matrix().loc["2019-03-31", "TOR14"] == 0.5
    assert p.sectors.to_dict() == {"TOR14": "Mining"}
    assert p.report.holdings_total == pytest.approx(0.9)
    assert p.holdings.to_dict() == pytest.approx({"TOR14": 0.7, "XAN77": 0.2})
    notes = " ".join(p.report.panel_notes)
    assert "holdings.csv" in notes and "sectors.csv" in notes and "dividends.csv" in notes
    assert p.benchmark.isna().sum() == 1 and p.benchmark.index.equals(p.prices.index)
    assert [s["kind"] for s in p.sources] == ["prices", "dividends", "sectors", "holdings", "benchmark"]
    assert all(len(s["sha256"]) == 64 for s in p.sources)


def test_signals_and_market_cap() -> None:
    prices = _prices({"TOR14": [10, 11, 12, 13, 14, 15, 16, 17]})
    s1 = read_table(_csv({"TOR14": ["5%"] * 8, "XAN77": ["1%"] * 8}), name="yield_signal.csv",
                    options=ReadOptions(kind="signal", signal_name="my yield"))
    s2 = read_table(_csv({"TOR14": [2] * 8}), name="other.csv", options=ReadOptions(kind="signal", higher_is_cheaper=False))
    mc = read_table(_csv({"TOR14": [1000] * 8}), name="mcap.csv")
    p = build_panel([prices, s1, s2, mc])
    assert [s.name for s in p.signals] == ["my yield", "other"]
    assert p.signals[0].values.loc[ME[0], "TOR14"] == pytest.approx(0.05) and not p.signals[1].higher_is_cheaper
    assert list(p.signals[0].values.columns) == ["TOR14"]
    assert p.market_cap.loc[ME[0], "TOR14"] == 1000.0
    assert ("yield_signal.csv", "unknown_security") in set(map(tuple, p.report.alignment[["file", "reason"]].to_numpy()))


# -- errors -----------------------------------------------------------------------
def test_build_needs_exactly_one_price_file() -> None:
    prices = _prices({"TOR14": [10, 11, 12, 13, 14, 15, 16, 17]})
    with pytest.raises(IntakeError, match="exactly one price file") as info:
        build_panel([])
    assert info.value.reason is Reason.PRICE_FILE_COUNT
    with pytest.raises(IntakeError, match="found 2") as info:
        build_panel([prices, prices])
    assert info.value.reason is Reason.PRICE_FILE_COUNT
    sec = read_table(b"code,sector\nTOR14,Mining\n", name="sectors.csv")
    with pytest.raises(IntakeError, match="more than one sectors file") as info:
        build_panel([prices, sec, sec])
    assert info.value.reason is Reason.DUPLICATE_KIND
    with pytest.raises(IntakeError, match="expected parsed files") as info:
        build_panel([prices, "sectors.csv"])  # type: ignore[list-item]
    assert info.value.reason is Reason.BAD_OPTION


def test_build_price_file_without_valid_prices() -> None:
    empty = read_table(_csv({"TOR14": [None] * 8}), name="prices.csv")
    with pytest.raises(IntakeError, match="no valid prices") as info:
        build_panel([empty])
    assert info.value.reason is Reason.NO_DATA and info.value.file == "prices.csv"


def test_unexpected_failures_are_wrapped(monkeypatch: pytest.MonkeyPatch) -> None:
    import valuesift.core.intake.build as build

    prices = _prices({"TOR14": [10, 11, 12, 13, 14, 15, 16, 17]})

    def boom(*a: object, **k: object) -> None:
        raise ZeroDivisionError("bug")

    monkeypatch.setattr(build, "detect_splits", boom)
    with pytest.raises(IntakeError) as info:
        build_panel([prices])
    assert info.value.reason is Reason.UNREADABLE and isinstance(info.value.__cause__, ZeroDivisionError)


def test_load_files(tmp_path: pytest.TempPathFactory) -> None:
    path = tmp_path / "closing.csv"  # type: ignore[operator]
    path.write_bytes(b"Exported\nDate,TOR14,Maren All-Share\n31/01/2019,10,1000\n28/02/2019,11,1010\n")
    p = load_files([path], {"closing.csv": ReadOptions(kind="prices", exclude_columns=("Maren All-Share",))})
    assert list(p.prices.columns) == ["TOR14"] and p.report.files[0].header_row == 2


def test_panel_options_validated() -> None:
    for bad in (dict(staleness_days=-1), dict(split_threshold=1.5), dict(extreme_pe=0), dict(flat_run_months=1),
                dict(confirmed_splits="TOR14")):
        with pytest.raises(ConfigError):
            PanelOptions(**bad)  # type: ignore[arg-type]
    assert PanelOptions(confirmed_splits={"A"}).confirmed_splits == frozenset({"A"})  # type: ignore[arg-type]


def _flat_run_loop(v: np.ndarray) -> int:
    """The per-series loop ``longest_flat_run`` used before it was vectorised (the reference here)."""
    v = v[np.isfinite(v)]
    if v.size == 0:
        return 0
    best = run = 1
    for a, b in zip(v[:-1], v[1:]):
        run = run + 1 if a == b else 1
        best = max(best, run)
    return best


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_longest_flat_runs_matches_the_loop(seed: int) -> None:
    from valuesift.core.intake.flags import longest_flat_runs

    rng = np.random.default_rng(seed)
    v = rng.integers(0, 3, size=(60, 40)).astype(float)  # many repeats
    v[rng.random(v.shape) < 0.2] = np.nan
    v[:, 5] = np.nan  # a column without values
    v[3, 7] = np.inf
    got = longest_flat_runs(v)
    assert got.tolist() == [_flat_run_loop(v[:, j]) for j in range(v.shape[1])]
    assert [longest_flat_run(v[:, j]) for j in range(v.shape[1])] == got.tolist()
