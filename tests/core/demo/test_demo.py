"""Tests of the invented demo universe (core.demo).

The raw files are parsed here with the csv module and pandas directly, never
through the project's intake, so these tests check the demo files on their own.
The recovery checks compute the monthly Spearman IC with scipy.stats.spearmanr
on the generator's clean arrays, independently of the study engine.
"""

from __future__ import annotations

import csv
import datetime as dt
import doctest
import io
import math
import pathlib
import re
from collections import Counter, defaultdict

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import valuesift.core.demo.simulate as simulate_module
import valuesift.core.demo.truth as truth_module
import valuesift.core.demo.write as write_module
from valuesift.core.demo import (
    DemoMarket,
    DEFAULT_SEED,
    DEMO_TRUTH,
    expected_spearman_ic,
    horizon_ic_approx,
    ic_standard_error,
    simulate_demo,
    spearman_from_pearson,
    write_demo,
)
from valuesift.core.errors import ConfigError

ROOT = pathlib.Path(__file__).resolve().parents[3]
SAMPLE = ROOT / "sample_data"
FILES = ("prices.csv", "earnings.csv", "dividends.csv", "sectors.csv", "holdings.csv", "benchmark.csv", "README.md")
PriceSeries = dict[str, list[tuple[dt.date, float | None]]]
PriceRows = tuple[list[str], list[list[str]]]
MISSING_SPELLINGS = ("#N/A", "n.a.", "--", "NA")          # agreed in the demo file spec
INDEX_COLUMN = "Maren All-Share"
PRICE_RE = re.compile(r"\d{1,3}(,\d{3})*\.\d{2}")
CODE_RE = re.compile(r"[A-Z]{3}\d{2}")


# -- fixtures --------------------------------------------------------------------------
@pytest.fixture(scope="module")
def out_dir(tmp_path_factory: pytest.TempPathFactory) -> pathlib.Path:
    d = tmp_path_factory.mktemp("demo_a")
    write_demo(d)
    return d


@pytest.fixture(scope="module")
def texts(out_dir: pathlib.Path) -> dict[str, str]:
    return {name: (out_dir / name).read_bytes().decode("utf-8") for name in FILES}


@pytest.fixture(scope="module")
def market() -> DemoMarket:
    return simulate_demo(DEFAULT_SEED)


def _price_value(cell: str) -> float | None:
    return float(cell.replace(",", "")) if PRICE_RE.fullmatch(cell) else None


@pytest.fixture(scope="module")
def price_rows(texts: dict[str, str]) -> PriceRows:
    """Header and data rows of prices.csv (after the three preamble lines), raw strings."""
    lines = texts["prices.csv"].split("\n")
    rows = list(csv.reader(io.StringIO("\n".join(lines[3:]))))
    return rows[0], [r for r in rows[1:] if r]


@pytest.fixture(scope="module")
def price_series(price_rows: PriceRows) -> PriceSeries:
    """code -> [(date, value or None)], the LAST copy of a duplicated date kept (common practice)."""
    header, rows = price_rows
    by_date: dict[str, list[str]] = {}
    for r in rows:
        by_date[r[0]] = r
    out: dict[str, list[tuple[dt.date, float | None]]] = defaultdict(list)
    for stamp, r in by_date.items():
        d = dt.datetime.strptime(stamp, "%d/%m/%Y").date()
        for code, cell in zip(header[1:], r[1:]):
            out[code].append((d, _price_value(cell)))
    return out


def _valid(series: list[tuple[dt.date, float | None]]) -> list[tuple[dt.date, float]]:
    return [(d, v) for d, v in series if v is not None]


def _years(a: dt.date, b: dt.date) -> float:
    return (b - a).days / 365.25


# -- determinism and the committed copy -------------------------------------------------
def test_write_twice_gives_identical_bytes(tmp_path: pathlib.Path, out_dir: pathlib.Path) -> None:
    paths = write_demo(tmp_path / "b")
    assert [p.name for p in paths] == list(FILES)
    for name in FILES:
        assert (tmp_path / "b" / name).read_bytes() == (out_dir / name).read_bytes(), name


def test_another_seed_gives_another_market(tmp_path: pathlib.Path, out_dir: pathlib.Path) -> None:
    write_demo(tmp_path, seed=7)
    assert (tmp_path / "prices.csv").read_bytes() != (out_dir / "prices.csv").read_bytes()


def test_committed_sample_data_equals_a_fresh_run(out_dir: pathlib.Path) -> None:
    assert sorted(p.name for p in SAMPLE.iterdir()) == sorted(FILES)
    for name in FILES:
        assert (SAMPLE / name).read_bytes() == (out_dir / name).read_bytes(), (
            f"sample_data/{name} differs from write_demo output: regenerate with `valuesift demo --out sample_data`"
        )


def test_sample_data_is_small() -> None:
    assert sum(p.stat().st_size for p in SAMPLE.iterdir()) < 2_000_000


def test_simulation_is_deterministic_and_read_only(market: DemoMarket) -> None:
    again = simulate_demo(DEFAULT_SEED)
    for field in ("price", "eps", "dividend", "signal_z", "total_return", "model_return"):
        assert np.array_equal(getattr(market, field), getattr(again, field), equal_nan=True), field
    assert market.dividend_events == again.dividend_events and market.roles == again.roles
    with pytest.raises(ValueError):
        market.price[0, 0] = 1.0


@pytest.mark.parametrize("seed", [-1, 1.5, "7", True], ids=["negative", "float", "text", "bool"])
def test_bad_seed_is_a_config_error(seed: object, tmp_path: pathlib.Path) -> None:
    with pytest.raises(ConfigError, match="seed must be a whole number"):
        simulate_demo(seed)  # type: ignore[arg-type]
    with pytest.raises(ConfigError, match="seed must be a whole number"):
        write_demo(tmp_path, seed=seed)  # type: ignore[arg-type]


def test_output_path_that_is_a_file_is_a_config_error(tmp_path: pathlib.Path) -> None:
    f = tmp_path / "taken"
    f.write_text("x")
    with pytest.raises(ConfigError, match="not a folder"):
        write_demo(f)


def test_unwritable_folder_is_a_config_error(tmp_path: pathlib.Path) -> None:
    blocker = tmp_path / "file"
    blocker.write_text("x")
    with pytest.raises(ConfigError, match="Could not write the demo files"):
        write_demo(blocker / "sub")


# -- the planted mess in prices.csv ------------------------------------------------------
def test_prices_preamble_and_header(texts: dict[str, str], price_rows: PriceRows) -> None:
    lines = texts["prices.csv"].split("\n")
    assert lines[0] == "Maren exchange closing prices"
    assert lines[1].startswith("Exported ")
    assert lines[2] == ""
    header, _ = price_rows
    assert header[0] == "Date" and INDEX_COLUMN in header
    codes = [h for h in header[1:] if h != INDEX_COLUMN]
    assert 110 <= len(codes) <= 130 and len(set(codes)) == len(codes)
    assert all(CODE_RE.fullmatch(c) for c in codes)


def test_prices_dates_are_month_ends_day_first(price_rows: PriceRows) -> None:
    _, rows = price_rows
    dates = [dt.datetime.strptime(r[0], "%d/%m/%Y").date() for r in rows]
    assert all((d + dt.timedelta(days=1)).day == 1 for d in dates)
    assert any(d.day > 12 for d in dates)
    unique = sorted(set(dates))
    assert len(unique) == 180 and 14.5 < _years(unique[0], unique[-1]) < 15.5


def test_thousands_separators_in_quotes(texts: dict[str, str], price_series: PriceSeries) -> None:
    assert re.search(r'"\d{1,3},\d{3}\.\d{2}"', texts["prices.csv"])
    big = [v for s in price_series.values() for _, v in s if v is not None and v >= 1000]
    assert len(big) > 100


def test_several_missing_spellings(price_rows: PriceRows, price_series: PriceSeries) -> None:
    header, rows = price_rows
    tokens = Counter(c for r in rows for c in r[1:] if _price_value(c) is None)
    for spelling in MISSING_SPELLINGS:
        assert tokens[spelling] >= 3, spelling
    # blanks inside a security's listed span (not only before listing or after delisting)
    inner_blanks = 0
    for series in price_series.values():
        valid = _valid(series)
        lo, hi = valid[0][0], valid[-1][0]
        inner_blanks += sum(1 for d, v in series if v is None and lo < d < hi)
    assert inner_blanks >= 5 * 3


def test_one_duplicated_date_row_slightly_revised(price_rows: PriceRows) -> None:
    _, rows = price_rows
    counts = Counter(r[0] for r in rows)
    dups = [d for d, n in counts.items() if n > 1]
    assert len(dups) == 1 and counts[dups[0]] == 2
    first, second = (r for r in rows if r[0] == dups[0])
    changed = [(a, b) for a, b in zip(first, second) if a != b]
    assert 1 <= len(changed) <= 10
    for a, b in changed:
        va, vb = _price_value(a), _price_value(b)
        assert va is not None and vb is not None and abs(va / vb - 1) < 0.02


def test_index_column_is_not_a_security(texts: dict[str, str], price_series: PriceSeries) -> None:
    sectors = pd.read_csv(io.StringIO(texts["sectors.csv"]), dtype=str)
    assert INDEX_COLUMN not in set(sectors["code"])
    first = _valid(price_series[INDEX_COLUMN])[0][1]
    assert first == 1000.0


def test_late_lister(price_series: PriceSeries, market: DemoMarket) -> None:
    start = min(d for s in price_series.values() for d, _ in s)
    late = [c for c, s in price_series.items() if _years(start, _valid(s)[0][0]) > 1]
    assert len(late) == 1
    first = _valid(price_series[late[0]])[0][0]
    assert 4.5 < _years(start, first) < 5.5
    assert late[0] == market.roles.late_lister


def test_delister(price_series: PriceSeries, market: DemoMarket) -> None:
    end = max(d for s in price_series.values() for d, _ in s)
    gone = [c for c, s in price_series.items() if _years(_valid(s)[-1][0], end) > 1]
    assert len(gone) == 1
    last = _valid(price_series[gone[0]])[-1][0]
    assert all(v is None for d, v in price_series[gone[0]] if d > last)
    assert gone[0] == market.roles.delister


def test_one_unadjusted_two_for_one_split(price_series: PriceSeries, market: DemoMarket) -> None:
    found = []
    for code, series in price_series.items():
        v = _valid(series)
        for k in range(1, len(v)):
            ratio = v[k][1] / v[k - 1][1]
            if 0.4 < ratio < 0.6:
                later = [p for _, p in v[k + 1 : k + 4]]
                if all(p < 0.8 * v[k - 1][1] for p in later):       # no bounce back: it does not revert
                    found.append((code, v[k][0], ratio))
    assert len(found) == 1
    code, when, ratio = found[0]
    assert code == market.roles.split and abs(ratio - 0.5) < 0.1
    assert when == market.dates[market.roles.split_month]


# -- earnings.csv ----------------------------------------------------------------------------
@pytest.fixture(scope="module")
def eps_raw(texts: dict[str, str]) -> list[list[str]]:
    rows = list(csv.reader(io.StringIO(texts["earnings.csv"]), delimiter=";"))
    assert rows[0] == ["known_on", "code", "eps_ttm"]
    return rows[1:]


def test_earnings_layout_and_missing(eps_raw: list[list[str]]) -> None:
    values = [r[2] for r in eps_raw]
    numeric = [v for v in values if re.fullmatch(r"-?\d+,\d{2}", v)]
    assert len(numeric) > 0.99 * len(values)
    assert values.count("n.m.") >= 3 and values.count("") >= 3
    assert all(dt.date.fromisoformat(r[0]).day >= 28 for r in eps_raw)
    eps = [float(v.replace(",", ".")) for v in numeric]
    assert sum(e < 0 for e in eps) > 50


def test_near_zero_eps_makes_pe_explode(
    eps_raw: list[list[str]], price_series: PriceSeries, market: DemoMarket
) -> None:
    code = market.roles.near_zero_eps
    prices = {d: v for d, v in price_series[code] if v is not None}
    eps = [(dt.date.fromisoformat(s), float(v.replace(",", "."))) for s, c, v in eps_raw
           if c == code and re.fullmatch(r"-?\d+,\d{2}", v)]
    assert eps[0][1] > 0 and eps[-1][1] < 0                    # from profit to loss
    pe = [abs(prices[d] / e) for d, e in eps if d in prices]
    assert max(pe) > 10_000                                     # P/E explodes near the crossing
    assert all(e != 0 for _, e in eps)


def test_split_company_eps_on_one_basis(eps_raw: list[list[str]], market: DemoMarket) -> None:
    code = market.roles.split
    series = {
        dt.date.fromisoformat(s): float(v.replace(",", ".")) for s, c, v in eps_raw if c == code and v not in ("", "n.m.")
    }
    k = market.roles.split_month
    before, at = series[market.dates[k - 1]], series[market.dates[k]]
    assert not 0.4 < at / before < 0.6          # no halving at the split: EPS is on the adjusted basis


# -- dividends, sectors, holdings, benchmark ----------------------------------------------------
@pytest.fixture(scope="module")
def dividends(texts: dict[str, str]) -> pd.DataFrame:
    df = pd.read_csv(io.StringIO(texts["dividends.csv"]), dtype={"code": str, "ex_date": str})
    assert list(df.columns) == ["code", "ex_date", "amount"]
    df["date"] = pd.to_datetime(df["ex_date"], format="%m/%d/%Y")
    return df


def test_dividend_dates_month_first(dividends: pd.DataFrame) -> None:
    assert (dividends["date"].dt.day > 12).any()
    assert (dividends["amount"] > 0).all()


def test_dividend_payer_kinds(dividends: pd.DataFrame, texts: dict[str, str]) -> None:
    codes = set(pd.read_csv(io.StringIO(texts["sectors.csv"]), dtype=str)["code"])
    never = codes - set(dividends["code"])
    assert len(never) >= 10
    per_year = dividends.groupby(["code", dividends["date"].dt.year]).size().groupby("code").median()
    assert (per_year == 4).sum() >= 10 and (per_year == 1).sum() >= 10


def test_one_dividend_cutter(dividends: pd.DataFrame, market: DemoMarket) -> None:
    cutters = []
    for code, g in dividends.sort_values("date").groupby("code"):
        a = g["amount"].to_numpy()
        for k in range(1, len(a)):
            if a[k] <= 0.5 * a[k - 1] and (a[k:] < a[k - 1] * 0.75).all():
                cutters.append(code)
                break
    assert cutters == [market.roles.dividend_cutter]


def test_one_dividend_before_price_history(dividends: pd.DataFrame, price_rows: PriceRows) -> None:
    _, rows = price_rows
    first = min(dt.datetime.strptime(r[0], "%d/%m/%Y") for r in rows)
    assert (dividends["date"] < first).sum() == 1


def test_sectors(texts: dict[str, str], price_rows: PriceRows) -> None:
    header, _ = price_rows
    s = pd.read_csv(io.StringIO(texts["sectors.csv"]), dtype=str)
    assert list(s.columns) == ["code", "sector"]
    assert s["sector"].nunique() == 9
    assert set(s["code"]) == set(header[1:]) - {INDEX_COLUMN}


def test_holdings_about_thirty_names_summing_to_100(texts: dict[str, str], price_series: PriceSeries) -> None:
    rows = list(csv.reader(io.StringIO(texts["holdings.csv"])))
    assert rows[0] == ["code", "weight"]
    assert 25 <= len(rows) - 1 <= 35
    assert all(re.fullmatch(r"\d+\.\d{2}%", w) for _, w in rows[1:])
    assert sum(round(float(w[:-1]) * 100) for _, w in rows[1:]) == 10_000
    for code, _ in rows[1:]:
        assert price_series[code][-1][1] is not None or price_series[code][-2][1] is not None


def test_benchmark(texts: dict[str, str], market: DemoMarket) -> None:
    b = pd.read_csv(io.StringIO(texts["benchmark.csv"]), dtype={"date": str})
    assert list(b.columns) == ["date", "level"]
    assert [dt.date.fromisoformat(d) for d in b["date"]] == list(market.dates)
    assert b["level"].iloc[0] == 100.0 and (b["level"] > 0).all()


def test_invented_names_and_codes(market: DemoMarket) -> None:
    assert all(CODE_RE.fullmatch(c) for c in market.codes)
    assert all(n[:3].upper() == c[:3] for n, c in zip(market.names, market.codes))
    assert len(set(market.names)) == len(market.names)


# -- the files carry the clean values --------------------------------------------------------------
def test_files_hold_the_simulated_values(texts: dict[str, str], market: DemoMarket) -> None:
    """Where not deliberately missing, the files equal the clean arrays (split undone by hand)."""
    px = pd.read_csv(io.StringIO(texts["prices.csv"]), skiprows=3, dtype=str, keep_default_na=False)
    px = px.drop_duplicates("Date", keep="last").set_index("Date")
    codes = list(market.codes)
    cells = px[codes].to_numpy()
    numeric = np.vectorize(lambda c: PRICE_RE.fullmatch(c) is not None)(cells)
    values = np.vectorize(lambda c: _price_value(c) if PRICE_RE.fullmatch(c) else np.nan)(cells).astype(float)
    j = codes.index(market.roles.split)
    values[: market.roles.split_month, j] /= 2.0
    assert numeric.sum() >= market.listed.sum() - 50
    np.testing.assert_allclose(values[numeric], market.price[numeric], rtol=0, atol=1e-9)
    assert not numeric[~market.listed].any()

    eps = pd.read_csv(io.StringIO(texts["earnings.csv"]), sep=";", decimal=",", na_values=["n.m."])
    wide = eps.pivot(index="known_on", columns="code", values="eps_ttm")[codes].to_numpy()
    ok = np.isfinite(wide)
    assert ok.sum() >= market.listed.sum() - 20
    np.testing.assert_allclose(wide[ok], market.eps[ok], rtol=0, atol=1e-9)


# -- the planted relation ------------------------------------------------------------------------
def test_signal_is_the_zscore_of_earnings_yield(market: DemoMarket) -> None:
    # scipy.stats.zscore uses ddof 0 (REFERENCE_CHECKS.md case 13)
    for t in range(len(market.dates)):
        ok = market.listed[t]
        z = stats.zscore(market.eps[t, ok] / market.price[t, ok])
        np.testing.assert_allclose(market.signal_z[t, ok], z, rtol=0, atol=1e-12)
        assert np.isnan(market.signal_z[t, ~ok]).all()


def test_return_model_has_no_look_ahead(market: DemoMarket) -> None:
    """r[t] = market[t] + sector[t] + gamma * z[t-1] + idio[t]: the month-t return uses z at t-1 only."""
    r = market.model_return
    expect = (
        market.market_return[1:, None]
        + market.sector_effect[1:][:, market.sector_index]
        + DEMO_TRUTH["gamma"] * market.signal_z[:-1]
        + market.idio[1:]
    )
    ok = np.isfinite(r[1:])
    assert ok.sum() > 0.95 * ok.size
    np.testing.assert_allclose(r[1:][ok], expect[ok], rtol=0, atol=1e-15)
    # total return from the rounded written values: holding-period return with a dividend
    # (Bodie, Kane & Marcus, Investments, ch. 5: (P1 + D) / P0 - 1), off by price rounding only
    hpr = (market.price[1:] + market.dividend[1:]) / market.price[:-1] - 1.0
    np.testing.assert_allclose(market.total_return[1:][ok], hpr[ok], rtol=0, atol=1e-15)
    assert (np.abs(market.total_return[1:] - r[1:])[ok] <= 0.005 / market.price[:-1][ok] + 1e-12).all()


def test_returns_are_realistic_and_signal_persistent(market: DemoMarket) -> None:
    vol = np.nanstd(market.total_return, axis=0)
    assert 0.06 < np.median(vol) < 0.10
    assert np.nanmean(market.market_return) > 0
    lag1 = []
    for t in range(len(market.dates) - 1):
        ok = np.isfinite(market.signal_z[t]) & np.isfinite(market.signal_z[t + 1])
        lag1.append(np.corrcoef(market.signal_z[t, ok], market.signal_z[t + 1, ok])[0, 1])
    assert np.mean(lag1) > 0.9


def _monthly_ics(m: DemoMarket) -> tuple[np.ndarray, np.ndarray, float]:
    sp, pe, n = [], [], []
    for t in range(len(m.dates) - 1):
        ok = np.isfinite(m.signal_z[t]) & np.isfinite(m.total_return[t + 1])
        sp.append(stats.spearmanr(m.signal_z[t, ok], m.total_return[t + 1, ok]).statistic)
        pe.append(stats.pearsonr(m.signal_z[t, ok], m.total_return[t + 1, ok]).statistic)
        n.append(ok.sum())
    return np.array(sp), np.array(pe), float(np.mean(n))


def test_planted_relation_is_recovered(market: DemoMarket) -> None:
    """Mean monthly Spearman IC (scipy.stats.spearmanr) within 4 standard errors of the truth."""
    sp, pe, n = _monthly_ics(market)
    se = ic_standard_error(n, len(sp))
    assert abs(sp.mean() - DEMO_TRUTH["spearman_ic"]) < 4 * se
    assert abs(pe.mean() - DEMO_TRUTH["rho_pearson"]) < 4 * se
    # the documented standard error is the right size: the spread of the monthly ICs
    assert 0.7 < sp.std(ddof=1) / math.sqrt(len(sp)) / se < 1.4


@pytest.mark.slow
def test_planted_relation_over_many_seeds() -> None:
    """Pooled over 8 seeds the mean IC is within 4 pooled standard errors of the truth."""
    sp_means, pe_means, ns = [], [], []
    for seed in range(8):
        sp, pe, n = _monthly_ics(simulate_demo(seed))
        sp_means.append(sp.mean())
        pe_means.append(pe.mean())
        ns.append(n)
    se = ic_standard_error(float(np.mean(ns)), 179) / math.sqrt(8)
    assert abs(np.mean(sp_means) - DEMO_TRUTH["spearman_ic"]) < 4 * se
    assert abs(np.mean(pe_means) - DEMO_TRUTH["rho_pearson"]) < 4 * se


# -- the truth formulas against outside checks ---------------------------------------------------
def test_truth_is_consistent_and_read_only() -> None:
    t = DEMO_TRUTH
    rho = t["gamma"] / math.sqrt(t["gamma"] ** 2 + t["sector_sd"] ** 2 + t["idio_sd"] ** 2)
    assert rho == pytest.approx(t["rho_pearson"], abs=1e-12)
    assert t["spearman_ic"] == pytest.approx(6 / math.pi * math.asin(0.05), abs=1e-12)
    with pytest.raises(TypeError):
        DEMO_TRUTH["gamma"] = 0.0  # type: ignore[index]


def test_spearman_of_bivariate_normal_against_scipy() -> None:
    # (6/pi) asin(rho/2) (Pearson 1907, from memory) checked on a large simulated sample with scipy.stats.spearmanr
    rng = np.random.default_rng(11)
    x = rng.standard_normal(200_000)
    y = 0.5 * x + math.sqrt(1 - 0.25) * rng.standard_normal(200_000)
    assert stats.spearmanr(x, y).statistic == pytest.approx(spearman_from_pearson(0.5), abs=0.005)
    assert spearman_from_pearson(1.0) == pytest.approx(1.0, abs=1e-12)
    with pytest.raises(ConfigError, match="must lie in"):
        spearman_from_pearson(1.5)


def test_expected_small_sample_spearman_against_simulation() -> None:
    # Moran (1948) finite-n mean (from memory) checked by simulation with scipy.stats.spearmanr
    rng = np.random.default_rng(12)
    n, reps, rho = 10, 20_000, 0.6
    x = rng.standard_normal((reps, n))
    y = rho * x + math.sqrt(1 - rho**2) * rng.standard_normal((reps, n))
    # Spearman = Pearson on the ranks (REFERENCE_CHECKS.md case 2); scipy.stats.rankdata per row, no ties here
    rx, ry = stats.rankdata(x, axis=1), stats.rankdata(y, axis=1)
    rx, ry = rx - rx.mean(axis=1, keepdims=True), ry - ry.mean(axis=1, keepdims=True)
    rs = (rx * ry).sum(axis=1) / np.sqrt((rx**2).sum(axis=1) * (ry**2).sum(axis=1))
    assert rs[0] == pytest.approx(stats.spearmanr(x[0], y[0]).statistic, abs=1e-12)
    assert abs(rs.mean() - expected_spearman_ic(rho, n)) < 4 * rs.std(ddof=1) / math.sqrt(reps)
    assert abs(expected_spearman_ic(rho, n) - spearman_from_pearson(rho)) > 0.01   # the bias is real at n = 10
    with pytest.raises(ConfigError, match="at least 3 names"):
        expected_spearman_ic(0.1, 2)


def test_ic_standard_error_against_simulation() -> None:
    # sd of a null sample correlation ~ 1/sqrt(n-1) (common practice), checked with scipy.stats.spearmanr
    rng = np.random.default_rng(13)
    n, reps = 50, 4000
    rs = np.array([stats.spearmanr(rng.standard_normal(n), rng.standard_normal(n)).statistic for _ in range(reps)])
    assert rs.std(ddof=1) == pytest.approx(ic_standard_error(n, 1), rel=0.05)
    assert ic_standard_error(50, 4) == pytest.approx(ic_standard_error(50, 1) / 2)
    with pytest.raises(ConfigError, match="more than 1 name"):
        ic_standard_error(1, 10)


def test_horizon_ic_approx() -> None:
    assert horizon_ic_approx(1, []) == pytest.approx(DEMO_TRUTH["rho_pearson"])
    # a signal that never changes: IC(h) = rho h / sqrt(h (1 - rho^2) + rho^2 h^2) (hand calculation)
    h, rho = 4, 0.1
    assert horizon_ic_approx(h, [1.0] * 3) == pytest.approx(rho * h / math.sqrt(h * (1 - rho**2) + rho**2 * h**2))
    with pytest.raises(ConfigError, match="needs 2 autocorrelations"):
        horizon_ic_approx(3, [0.9])
    with pytest.raises(ConfigError, match="at least 1 month"):
        horizon_ic_approx(0, [])


def test_docstring_examples_run() -> None:
    for module in (simulate_module, truth_module, write_module):
        result = doctest.testmod(module)
        assert result.failed == 0 and result.attempted > 0, module.__name__
