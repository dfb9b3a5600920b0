"""Round trips: a known frame written in each format and layout reads back equal, with exact counts.

Files are written with the standard csv module, openpyxl and pyarrow (outside
intake); the expected counts follow from the frame written.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import string

import numpy as np
import pandas as pd
import pytest

import valuesift.core.intake.readers as readers
from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake import ReadOptions, read_table


def make_frame(seed: int, n_dates: int = 14, n_secs: int = 6, blank_share: float = 0.15) -> pd.DataFrame:
    """Invented month-end prices (dates x codes of three letters and two digits) with NaN holes."""
    rng = np.random.default_rng(seed)
    letters = np.array(list(string.ascii_uppercase))
    codes: list[str] = []
    while len(codes) < n_secs:
        c = "".join(rng.choice(letters, 3)) + f"{rng.integers(10, 100)}"
        if c not in codes:
            codes.append(c)
    dates = pd.date_range("2015-01-31", periods=n_dates, freq="ME")
    vals = np.round(np.exp(rng.normal(3.0, 1.5, (n_dates, n_secs))), 2)
    vals[rng.random(vals.shape) < blank_share] = np.nan
    return pd.DataFrame(vals, index=pd.Index(dates, name="date"), columns=codes)


def _fmt(v: float, decimal: str) -> str:
    if np.isnan(v):
        return ""
    s = f"{v:.2f}"
    return s.replace(".", ",") if decimal == "comma" else s


def write_text(df: pd.DataFrame, layout: str, delimiter: str, decimal: str, preamble: int = 0) -> bytes:
    buf = io.StringIO()
    for k in range(preamble):
        buf.write(f"Export of the Maren exchange, part {k + 1}\n")
    w = csv.writer(buf, delimiter=delimiter, lineterminator="\n")
    if layout == "wide":
        w.writerow(["date", *df.columns])
        for d, row in df.iterrows():
            w.writerow([d.strftime("%Y-%m-%d"), *(_fmt(v, decimal) for v in row)])
    else:
        w.writerow(["date", "code", "price"])
        for sec in df.columns:
            for d, v in df[sec].items():
                w.writerow([d.strftime("%Y-%m-%d"), sec, _fmt(v, decimal)])
    return buf.getvalue().encode("utf-8")


def write_xlsx(df: pd.DataFrame, layout: str, preamble: int = 0) -> bytes:
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Prices"
    for k in range(preamble):
        ws.append([f"Export of the Maren exchange, part {k + 1}"])
    if layout == "wide":
        ws.append(["date", *df.columns])
        for d, row in df.iterrows():
            ws.append([d.to_pydatetime(), *(None if np.isnan(v) else float(v) for v in row)])
    else:
        ws.append(["date", "code", "price"])
        for sec in df.columns:
            for d, v in df[sec].items():
                ws.append([d.to_pydatetime(), sec, None if np.isnan(v) else float(v)])
    out = io.BytesIO()
    wb.save(out)
    return out.getvalue()


def write_parquet(df: pd.DataFrame, layout: str) -> bytes:
    import pyarrow as pa
    import pyarrow.parquet as pq

    if layout == "wide":
        t = pa.table({"date": pa.array(df.index.to_numpy()), **{c: pa.array(df[c].to_numpy()) for c in df.columns}})
    else:
        long = df.melt(ignore_index=False, var_name="code", value_name="price")
        t = pa.table({"date": pa.array(long.index.to_numpy()), "code": pa.array(long["code"].tolist()),
                      "price": pa.array(long["price"].to_numpy())})
    out = io.BytesIO()
    pq.write_table(t, out)
    return out.getvalue()


CASES = [
    ("csv", "wide", ",", "point", 0),
    ("csv", "long", ",", "point", 0),
    ("tsv", "wide", "\t", "point", 2),
    ("tsv", "long", "\t", "point", 0),
    ("semicolon-comma", "wide", ";", "comma", 1),
    ("semicolon-comma", "long", ";", "comma", 0),
    ("xlsx", "wide", None, None, 0),
    ("xlsx", "long", None, None, 2),
    ("parquet", "wide", None, None, 0),
    ("parquet", "long", None, None, 0),
]


def _write(df: pd.DataFrame, fmt: str, layout: str, delim: str | None, decimal: str | None, pre: int) -> tuple[bytes, str]:
    if fmt == "xlsx":
        return write_xlsx(df, layout, pre), "prices.xlsx"
    if fmt == "parquet":
        return write_parquet(df, layout), "prices.parquet"
    return write_text(df, layout, delim or ",", decimal or "point", pre), "prices.csv" if fmt != "tsv" else "prices.tsv"


def _wide(data: pd.DataFrame) -> pd.DataFrame:
    return data.pivot(index="date", columns="security", values="value")


@pytest.mark.parametrize("fmt,layout,delim,decimal,pre", CASES, ids=[f"{c[0]}-{c[1]}" + (f"-preamble{c[4]}" if c[4] else "") for c in CASES])
@pytest.mark.parametrize("seed", [1, 2], ids=["seed1", "seed2"])
def test_round_trip(fmt: str, layout: str, delim: str | None, decimal: str | None, pre: int, seed: int) -> None:
    df = make_frame(seed)
    raw, name = _write(df, fmt, layout, delim, decimal, pre)
    pf = read_table(raw, name=name)
    rep = pf.report
    n_d, n_s = df.shape
    n_valid = int(df.notna().to_numpy().sum())
    assert pf.kind == "prices"
    assert rep.layout == layout
    assert rep.format == ("csv" if fmt in ("csv", "tsv", "semicolon-comma") else fmt)
    if delim:
        assert rep.delimiter == delim and rep.decimal == decimal
        assert rep.header_row == pre + 1
    if layout == "wide":
        assert rep.cells_total == n_d * (n_s + 1)
        assert rep.cells_parsed == n_d + n_valid
    else:
        assert rep.cells_total == 3 * n_d * n_s
        assert rep.cells_parsed == 2 * n_d * n_s + n_valid
    assert rep.cells_blank == n_d * n_s - n_valid
    assert rep.cells_unparseable == 0 and rep.cells_dropped == 0
    assert rep.n_securities == n_s and rep.frequency == "monthly"
    back = _wide(pf.data).reindex(index=df.index, columns=df.columns)
    pd.testing.assert_frame_equal(back, df, check_names=False, check_freq=False, check_column_type=False, check_index_type=False)


def test_fast_reader_matches_python_reader(monkeypatch: pytest.MonkeyPatch) -> None:
    df = make_frame(5, n_dates=40, n_secs=12)
    raw = write_text(df, "wide", ",", "point", preamble=2)
    slow = read_table(raw, name="prices.csv")
    monkeypatch.setattr(readers, "FAST_PATH_MIN_CHARS", 0)
    fast = read_table(raw, name="prices.csv")
    pd.testing.assert_frame_equal(fast.data, slow.data)
    assert fast.report.cells_parsed == slow.report.cells_parsed
    assert fast.report.examples.equals(slow.report.examples)


def test_fast_reader_falls_back_on_ragged_rows(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(readers, "FAST_PATH_MIN_CHARS", 0)
    pf = read_table(b"date,AAB10,AAC11\n2019-01-31,1,2\n2019-02-28,3\n", name="prices.csv")
    assert pf.report.cells_blank == 1 and pf.report.cells_parsed == 5


def test_xlsx_openpyxl_fallback(monkeypatch: pytest.MonkeyPatch) -> None:
    import python_calamine

    df = make_frame(3)
    raw = write_xlsx(df, "wide", preamble=1)
    want = read_table(raw, name="prices.xlsx")

    def boom(*a: object, **k: object) -> None:
        raise RuntimeError("calamine unavailable")

    monkeypatch.setattr(python_calamine.CalamineWorkbook, "from_filelike", boom)
    got = read_table(raw, name="prices.xlsx")
    pd.testing.assert_frame_equal(got.data, want.data)
    assert got.report.header_row == 2


def _two_sheets() -> bytes:
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "About"
    ws.append(["Invented data of the Maren exchange"])
    ws2 = wb.create_sheet("Prices")
    ws2.append(["date", "TOR14"])
    ws2.append([dt.datetime(2019, 1, 31), 10.0])
    ws2.append([dt.datetime(2019, 2, 28), 11.0])
    out = io.BytesIO()
    wb.save(out)
    return out.getvalue()


@pytest.mark.parametrize("sheet", ["Prices", 1], ids=["by-name", "by-position"])
def test_xlsx_sheet_choice(sheet: str | int) -> None:
    pf = read_table(_two_sheets(), name="book.xlsx", options=ReadOptions(kind="prices", sheet=sheet))
    assert pf.report.sheet == "Prices" and len(pf.data) == 2


@pytest.mark.parametrize("sheet", ["Nope", 5], ids=["bad-name", "bad-position"])
def test_xlsx_bad_sheet(sheet: str | int) -> None:
    with pytest.raises(IntakeError, match="does not exist") as info:
        read_table(_two_sheets(), name="book.xlsx", options=ReadOptions(kind="prices", sheet=sheet))
    assert info.value.reason is Reason.BAD_OPTION


def test_xlsx_damaged_zip() -> None:
    raw = _two_sheets()
    with pytest.raises(IntakeError) as info:
        read_table(raw[: len(raw) // 2], name="book.xlsx", options=ReadOptions(kind="prices"))
    assert info.value.reason in (Reason.UNREADABLE,)


def test_parquet_with_date_index() -> None:
    df = make_frame(4)
    out = io.BytesIO()
    df.to_parquet(out)
    pf = read_table(out.getvalue(), name="prices.parquet")
    back = _wide(pf.data).reindex(index=df.index, columns=df.columns)
    pd.testing.assert_frame_equal(back, df, check_names=False, check_freq=False, check_column_type=False, check_index_type=False)


def test_damaged_parquet() -> None:
    with pytest.raises(IntakeError) as info:
        read_table(b"PAR1 this is not really parquet", name="prices.parquet")
    assert info.value.reason is Reason.UNREADABLE
    with pytest.raises(IntakeError) as info:
        read_table(b"date,TOR14\n", name="prices.parquet")
    assert info.value.reason is Reason.UNSUPPORTED_FORMAT


@pytest.mark.parametrize("ending", ["\r\n", "\r"], ids=["crlf", "cr-only"])
@pytest.mark.parametrize("fast", [False, True], ids=["python-reader", "arrow-reader"])
def test_line_endings(ending: str, fast: bool, monkeypatch: pytest.MonkeyPatch) -> None:
    if fast:
        monkeypatch.setattr(readers, "FAST_PATH_MIN_CHARS", 0)
    df = make_frame(8, n_dates=5, n_secs=3)
    raw = write_text(df, "wide", ",", "point", preamble=1).decode().replace("\n", ending).encode()
    pf = read_table(raw, name="prices.csv")
    assert pf.report.header_row == 2
    back = _wide(pf.data).reindex(index=df.index, columns=df.columns)
    pd.testing.assert_frame_equal(back, df, check_names=False, check_freq=False, check_column_type=False, check_index_type=False)
    # examples point at the real file rows
    blank_rows = pf.report.examples[pf.report.examples["reason"] == "blank"]["row"].tolist()
    want = [i + 3 for i, row in enumerate(df.to_numpy()) for j in range(df.shape[1]) if np.isnan(row[j])]
    assert set(blank_rows) <= set(want) and len(blank_rows) == min(5, len(want))
