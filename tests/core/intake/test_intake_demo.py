"""The demo universe (sample_data/) through intake, with exact report counts.

Expected counts are computed here from the raw text with the csv module and
plain Python (independently of intake's parsers).
"""

from __future__ import annotations

import csv
import datetime as dt
import pathlib
from collections import defaultdict

import numpy as np
import pandas as pd
import pytest

from valuesift.core.intake import PanelOptions, ReadOptions, build_panel, read_table

DEMO = pathlib.Path(__file__).resolve().parents[3] / "sample_data"
MISSING = {"#N/A", "n.a.", "--", "NA", "n.m."}
PRICE_OPTS = ReadOptions(exclude_columns=("Maren All-Share",))

pytestmark = pytest.mark.skipif(not (DEMO / "prices.csv").exists(), reason="demo files not written yet")


def _rows(name: str, delimiter: str = ",", skip: int = 0) -> tuple[list[str], list[list[str]]]:
    with open(DEMO / name, newline="", encoding="utf-8") as fh:
        lines = list(csv.reader(fh, delimiter=delimiter))
    lines = lines[skip:]
    header, body = lines[0], [r for r in lines[1:] if r]
    return header, body


def _dmy(s: str) -> dt.date:
    d, m, y = s.split("/")
    return dt.date(int(y), int(m), int(d))


@pytest.fixture(scope="module")
def parsed() -> dict:
    files = {n: read_table(DEMO / n, options=PRICE_OPTS if n == "prices.csv" else ReadOptions())
             for n in ("prices.csv", "earnings.csv", "dividends.csv", "sectors.csv", "holdings.csv", "benchmark.csv")}
    return files


def test_prices_counts(parsed: dict) -> None:
    header, body = _rows("prices.csv", skip=3)  # three preamble lines (title, stamp, blank)
    idx = header.index("Maren All-Share")
    secs = [j for j in range(1, len(header)) if j != idx]
    blank = missing = 0
    seen: dict[tuple[dt.date, str], list[float]] = defaultdict(list)
    for r in body:
        for j in secs:
            c = r[j].strip()
            if c == "":
                blank += 1
            elif c in MISSING:
                missing += 1
            else:
                v = float(c.replace(",", ""))
                assert v > 0
                seen[(_dmy(r[0]), header[j])].append(v)
    n_valid = sum(len(v) for v in seen.values())
    n_dup = sum(len(v) - 1 for v in seen.values())
    rep = parsed["prices.csv"].report
    assert rep.header_row == 4
    assert rep.layout == "wide" and rep.date_order == "dmy" and rep.decimal == "point"
    assert rep.n_rows == len(body) and rep.n_columns == len(header)
    assert rep.cells_total == len(body) * len(header)
    assert rep.count("excluded_column") == len(body)
    assert rep.count("blank") == blank
    assert rep.count("missing_marker") == missing
    assert rep.count("duplicate_entry") == n_dup
    assert rep.cells_parsed == len(body) + n_valid - n_dup
    assert rep.cells_unparseable == 0
    assert rep.n_securities == len(secs)
    # last row of a repeated date wins
    data = parsed["prices.csv"].data.set_index(["security", "date"])["value"]
    for (d, s), vals in seen.items():
        if len(vals) > 1:
            assert data[(s, pd.Timestamp(d))] == pytest.approx(vals[-1])


def test_earnings_counts(parsed: dict) -> None:
    header, body = _rows("earnings.csv", delimiter=";")
    assert header == ["known_on", "code", "eps_ttm"]
    blank = sum(1 for r in body if r[2].strip() == "")
    nm = sum(1 for r in body if r[2].strip() == "n.m.")
    rep = parsed["earnings.csv"].report
    assert (rep.layout, rep.decimal, rep.delimiter, rep.value_form) == ("long", "comma", ";", "eps")
    assert rep.cells_total == 3 * len(body)
    assert rep.count("blank") == blank and rep.count("missing_marker") == nm
    assert rep.cells_parsed == 3 * len(body) - blank - nm
    vals = [float(r[2].replace(".", "").replace(",", ".")) for r in body if r[2].strip() not in ("", "n.m.")]
    assert parsed["earnings.csv"].data["value"].sum() == pytest.approx(sum(vals), rel=1e-12)


def test_dividends_holdings_sectors_benchmark(parsed: dict) -> None:
    _, div = _rows("dividends.csv")
    rep = parsed["dividends.csv"].report
    assert rep.date_order == "mdy" and rep.cells_parsed == 3 * len(div)
    first = parsed["dividends.csv"].data.iloc[0]
    m, d, y = div[0][1].split("/")
    assert first["security"] == div[0][0] and first["ex_date"] == pd.Timestamp(int(y), int(m), int(d))
    _, hold = _rows("holdings.csv")
    w = parsed["holdings.csv"].data["weight"]
    assert len(w) == len(hold)
    assert w.sum() == pytest.approx(sum(float(r[1].rstrip("%")) for r in hold) / 100)
    _, sec = _rows("sectors.csv")
    assert parsed["sectors.csv"].data["sector"].nunique() == len({r[1] for r in sec})
    _, bench = _rows("benchmark.csv")
    assert len(parsed["benchmark.csv"].data) == len(bench)


def test_demo_panel(parsed: dict) -> None:
    files = list(parsed.values())
    panel = build_panel(files, PanelOptions(confirmed_splits=frozenset({"LUD24"})))
    rep = panel.report
    header, body = _rows("prices.csv", skip=3)
    months = sorted({_dmy(r[0]) for r in body})
    assert panel.prices.shape == (len(months), len(header) - 2)
    assert "CAS18" in rep.flagged("late_listing") and "PEL33" in rep.flagged("delisted")
    assert rep.securities.loc["CAS18", "first_valid"] == pd.Timestamp("2015-01-31")
    assert rep.securities.loc["PEL33", "last_valid"] == pd.Timestamp("2021-09-30")
    sp = rep.suspected_splits
    assert sp["security"].tolist() == ["LUD24"]
    assert sp["date"].iloc[0] == pd.Timestamp("2018-05-31") and sp["ratio"].iloc[0] == 2.0 and bool(sp["applied"].iloc[0])
    assert not bool(sp["eps_adjusted"].iloc[0])  # the demo's EPS is already on the post-split basis
    j = header.index("LUD24")
    raw = {_dmy(r[0]): float(r[j].replace(",", "")) for r in body if r[j].strip() not in MISSING | {""}}
    assert panel.prices.loc[pd.Timestamp("2018-04-30"), "LUD24"] == pytest.approx(raw[dt.date(2018, 4, 30)] / 2)
    assert panel.prices.loc[pd.Timestamp("2018-05-31"), "LUD24"] == pytest.approx(raw[dt.date(2018, 5, 31)])
    # the dividend event before the price history is kept and reported
    al = rep.alignment
    assert int(al[(al["file"] == "dividends.csv") & (al["reason"] == "outside_history")]["count"].sum()) == 1
    assert "QUE99" in rep.flagged("extreme_pe")
    assert rep.holdings_total == pytest.approx(1.0)
    assert len(panel.sectors) == panel.prices.shape[1]
    assert panel.benchmark.notna().all()
    assert "Maren All-Share" not in panel.prices.columns
    assert "LUD24" in rep.flagged("split_adjusted") and rep.file("prices.csv").kind == "prices"
    # without confirmation the split is only suspected and prices are untouched
    p2 = build_panel(files, PanelOptions())
    assert "LUD24" in p2.report.flagged("suspected_split")
    assert p2.prices.loc[pd.Timestamp("2018-04-30"), "LUD24"] == pytest.approx(raw[dt.date(2018, 4, 30)])
    assert np.isfinite(panel.eps.to_numpy()).sum() > 0


def test_index_column_flagged_when_not_excluded() -> None:
    pf = read_table(DEMO / "prices.csv")
    assert pf.report.suspect_columns == ("Maren All-Share",)
    panel = build_panel([pf])
    assert "Maren All-Share" in panel.report.flagged("looks_like_index")
