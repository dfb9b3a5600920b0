"""Property tests (hypothesis, derandomised): layouts, delimiters and decimal styles read back equal;
column order does not matter; arbitrary bytes raise nothing but IntakeError."""

from __future__ import annotations

import csv
import io

import numpy as np
import pandas as pd
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from valuesift.core.errors import IntakeError
from valuesift.core.intake import ReadOptions, read_table

SETTINGS = settings(max_examples=30, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])

codes = st.lists(st.from_regex(r"[A-Z]{3}[0-9]{2}", fullmatch=True), min_size=1, max_size=5, unique=True)
cents = st.one_of(st.none(), st.integers(min_value=1, max_value=10_000_000))


@st.composite
def frames(draw: st.DrawFn) -> pd.DataFrame:
    cols = draw(codes)
    n = draw(st.integers(min_value=1, max_value=8))
    start = draw(st.integers(min_value=0, max_value=300))
    dates = pd.date_range("1995-01-31", periods=start + n, freq="ME")[start:]
    vals = [[draw(cents) for _ in cols] for _ in range(n)]
    arr = np.array([[np.nan if v is None else v / 100 for v in row] for row in vals], dtype=float)
    return pd.DataFrame(arr, index=dates, columns=cols)


def _fmt(v: float, decimal: str, thousands: bool) -> str:
    if np.isnan(v):
        return ""
    s = f"{v:,.2f}" if thousands else f"{v:.2f}"
    if decimal == "comma":
        s = s.replace(",", "_").replace(".", ",").replace("_", ".")
    return s


def _write(df: pd.DataFrame, layout: str, delim: str, decimal: str, thousands: bool) -> bytes:
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=delim, lineterminator="\n")
    if layout == "wide":
        w.writerow(["date", *df.columns])
        for d, row in df.iterrows():
            w.writerow([d.strftime("%Y-%m-%d"), *(_fmt(v, decimal, thousands) for v in row)])
    else:
        w.writerow(["date", "code", "price"])
        for sec in df.columns:
            for d, v in df[sec].items():
                w.writerow([d.strftime("%Y-%m-%d"), sec, _fmt(v, decimal, thousands)])
    return buf.getvalue().encode()


def _back(data: pd.DataFrame, like: pd.DataFrame) -> pd.DataFrame:
    wide = data.pivot(index="date", columns="security", values="value") if len(data) else pd.DataFrame()
    return wide.reindex(index=like.index, columns=like.columns).astype(float)


@SETTINGS
@given(df=frames(), layout=st.sampled_from(["wide", "long"]), delim=st.sampled_from([",", ";", "\t", "|"]),
       decimal=st.sampled_from(["point", "comma"]), thousands=st.booleans())
def test_any_frame_reads_back_equal(df: pd.DataFrame, layout: str, delim: str, decimal: str, thousands: bool) -> None:
    raw = _write(df, layout, delim, decimal, thousands)
    # the decimal style is stated: a column of values such as "1,234" is ambiguous by nature
    pf = read_table(raw, name="prices.csv", options=ReadOptions(kind="prices", decimal=decimal, delimiter=delim, layout=layout))  # type: ignore[arg-type]
    got = _back(pf.data, df)
    np.testing.assert_allclose(got.to_numpy(), df.to_numpy(), rtol=0, atol=1e-9)
    rep = pf.report
    assert rep.cells_total == rep.cells_parsed + rep.cells_blank + rep.cells_unparseable + rep.cells_dropped
    assert rep.cells_blank == int(df.isna().to_numpy().sum())


@SETTINGS
@given(df=frames(), layout=st.sampled_from(["wide", "long"]), delim=st.sampled_from([",", ";", "\t"]))
def test_auto_detection_reads_back_equal(df: pd.DataFrame, layout: str, delim: str) -> None:
    # values with two decimals and a point: delimiter, layout and decimal style are all detected
    raw = _write(df, layout, delim, "point", False)
    pf = read_table(raw, name="prices.csv")
    if df.notna().to_numpy().any():
        assert pf.report.layout == layout
    np.testing.assert_allclose(_back(pf.data, df).to_numpy(), df.to_numpy(), rtol=0, atol=1e-9)


@SETTINGS
@given(df=frames(), seed=st.integers(min_value=0, max_value=2**16))
def test_column_order_does_not_matter(df: pd.DataFrame, seed: int) -> None:
    perm = np.random.default_rng(seed).permutation(df.shape[1])
    a = read_table(_write(df, "wide", ",", "point", True), name="prices.csv", options=ReadOptions(kind="prices"))
    b = read_table(_write(df.iloc[:, perm], "wide", ",", "point", True), name="prices.csv", options=ReadOptions(kind="prices"))
    pd.testing.assert_frame_equal(a.data, b.data)
    assert a.report.cells_parsed == b.report.cells_parsed and a.report.cells_blank == b.report.cells_blank


@settings(max_examples=200, deadline=None, derandomize=True)
@given(raw=st.binary(max_size=600), name=st.sampled_from(["prices.csv", "x.xlsx", "p.parquet", "data.txt", "earnings.tsv"]))
def test_random_bytes_raise_only_intake_error(raw: bytes, name: str) -> None:
    try:
        read_table(raw, name=name)
    except IntakeError as err:
        assert err.file == name and err.reason is not None


@settings(max_examples=150, deadline=None, derandomize=True)
@given(text=st.lists(st.sampled_from(list("0123456789,;.\t\n\"-/%$ ()abcNA#") + ["2019-01-31", "TOR14", "\u2014", "date,"]),
                    max_size=120).map("".join),
       kind=st.sampled_from(["prices", "earnings", "dividends", "sectors", "holdings", "benchmark"]))
def test_random_text_raises_only_intake_error(text: str, kind: str) -> None:
    try:
        pf = read_table(text.encode(), name="f.csv", options=ReadOptions(kind=kind))  # type: ignore[arg-type]
    except IntakeError:
        return
    rep = pf.report
    assert rep.cells_total == rep.cells_parsed + rep.cells_blank + rep.cells_unparseable + rep.cells_dropped


def _valid_files() -> dict[str, bytes]:
    import openpyxl
    import pyarrow as pa
    import pyarrow.parquet as pq

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["date", "TOR14", "VEL22"])
    for m in range(1, 7):
        ws.append([f"2019-{m:02d}-28", 10.0 + m, 20.0 - m])
    xb = io.BytesIO()
    wb.save(xb)
    pb = io.BytesIO()
    pq.write_table(pa.table({"date": pd.date_range("2019-01-31", periods=6, freq="ME"), "TOR14": np.arange(6.0) + 1}), pb)
    csv_b = b"Title\nDate,TOR14,VEL22\n31/01/2019,\"1,234.50\",n.a.\n28/02/2019,12,(3)\n"
    return {"prices.xlsx": xb.getvalue(), "prices.parquet": pb.getvalue(), "prices.csv": csv_b}


def test_mutated_files_raise_only_intake_error() -> None:
    rng = np.random.default_rng(11)
    for name, good in _valid_files().items():
        for k in range(60):
            raw = bytearray(good)
            if k % 3 == 0:
                raw = raw[: int(rng.integers(1, len(raw)))]  # truncated
            else:
                for pos in rng.integers(0, len(raw), int(rng.integers(1, 12))):
                    raw[int(pos)] = int(rng.integers(0, 256))  # flipped bytes
            try:
                pf = read_table(bytes(raw), name=name)
            except IntakeError as err:
                assert err.file == name
                continue
            rep = pf.report
            assert rep.cells_total == rep.cells_parsed + rep.cells_blank + rep.cells_unparseable + rep.cells_dropped
