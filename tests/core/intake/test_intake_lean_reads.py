"""A lean read (``read_table(..., lean=True)``, the dashboard's uploads) gives the same account and table.

The lean read keeps less in memory at once: a large delimited UTF-8 file is read
from disk in pieces (its head decoded for the delimiter and header, the body
handed to pyarrow from the file), a wide file's text is let go column block by
column block as its numbers are made, and the security (and, for a wide file,
the date) column is a categorical of the same values.  Every count, first
location, note and value must stay what the plain read gives.

References: the plain read itself (``read_table`` without ``lean``), whose
account is pinned to the code before issue 15 by ``intake_reports.json``
(``test_intake_snapshot.py``); the corpus cases come from the same snapshot.
Invented files (seeded) for the large cases.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from tests.core.intake.report_snapshot import SNAPSHOT, _file, snapshot
from valuesift.core.intake import ReadOptions, read_table
from valuesift.core.intake import readers, sniff

OLD = json.loads(SNAPSHOT.read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def lean_snapshot() -> dict:
    return snapshot(lean=True)


@pytest.mark.parametrize("case", sorted(OLD))
def test_lean_read_keeps_the_pinned_account(case: str, lean_snapshot: dict) -> None:
    assert lean_snapshot[case] == OLD[case]


# -- large files through the head-and-body path -------------------------------------------------------------
def _wide_text(n_rows: int, n_cols: int, seed: int = 4) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    dates = pd.bdate_range("1990-01-01", periods=n_rows).strftime("%Y-%m-%d")
    vals = np.round(40 * np.exp(np.cumsum(rng.normal(0, 0.01, size=(n_rows, n_cols)), axis=0)), 3)
    text = vals.astype(str).astype(object)
    text[rng.random((n_rows, n_cols)) < 0.01] = ""        # blanks (their examples are empty text)
    frame = pd.DataFrame(text, columns=[f"QL{j:04d}" for j in range(n_cols)])
    frame.insert(0, "date", dates)
    return frame


def _csv(frame: pd.DataFrame) -> bytes:
    return frame.to_csv(index=False).encode()


def _cases() -> dict[str, tuple[bytes, ReadOptions]]:
    base = _wide_text(2_000, 120)
    out: dict[str, tuple[bytes, ReadOptions]] = {"clean": (_csv(base), ReadOptions(kind="prices"))}
    nonpos = base.copy()
    nonpos.iloc[700, 50], nonpos.iloc[701, 50], nonpos.iloc[1500, 3] = "-3.25", "0", "-0.50"
    out["non-positive prices (their text kept for the examples)"] = (_csv(nonpos), ReadOptions(kind="prices"))
    dirty = base.copy()
    dirty.iloc[1900, 100], dirty.iloc[10, 7] = "n.a.", "1,234.5"  # late dirty cells: the careful parser for all
    out["dirty cells late in the file"] = (_csv(dirty), ReadOptions(kind="prices"))
    undated = base.copy()
    undated.iloc[1200, 0] = "not a date"
    out["a row without a date"] = (_csv(undated), ReadOptions(kind="prices"))
    out["earnings (negative values kept)"] = (_csv(nonpos), ReadOptions(kind="earnings"))
    divs = nonpos.copy()
    out["dividends (a negative amount)"] = (_csv(divs), ReadOptions(kind="dividends"))
    raw = _csv(base)
    out["a preamble and the header row given"] = (b"exported by hand\nsecond line of notes\n" + raw,
                                                  ReadOptions(kind="prices", header_row=3))
    cut = raw.rfind(b"\n", 0, len(raw) - 2000)
    out["a blank line late in the body"] = (raw[:cut] + b"\n" + raw[cut:], ReadOptions(kind="prices"))
    out["a quoted line end late in the body"] = (raw + b'2040-01-02,"1\n2",' + b",".join([b"3"] * 119) + b"\n",
                                                 ReadOptions(kind="prices"))
    out["a cp1252 byte near the end"] = (raw[:-40] + b"\xe9" + raw[-39:], ReadOptions(kind="prices"))
    out["CRLF line ends"] = (raw.replace(b"\n", b"\r\n"), ReadOptions(kind="prices"))
    out["a byte-order mark"] = (b"\xef\xbb\xbf" + raw, ReadOptions(kind="prices"))
    long = base.melt(id_vars="date", var_name="security", value_name="price")
    out["long layout"] = (_csv(long), ReadOptions(kind="prices"))
    twice = base.copy()
    twice.columns = [*twice.columns[:-1], "QL0001"]
    out["a security with two columns"] = (_csv(twice), ReadOptions(kind="prices", duplicate_rule="last"))
    return out


CASES = _cases()


@pytest.fixture()
def small_head(monkeypatch: pytest.MonkeyPatch) -> None:
    """The head path for files of about a megabyte (the real thresholds are 8 MB files and 4 MB heads)."""
    for mod in (sniff, readers):
        monkeypatch.setattr(mod, "HEAD_FROM_BYTES", 400_000)
        monkeypatch.setattr(mod, "HEAD_BYTES", 200_000)
    monkeypatch.setattr(readers, "FAST_PATH_MIN_CHARS", 50_000)


@pytest.mark.parametrize("case", sorted(CASES))
def test_lean_read_of_a_large_file_is_the_plain_read(case: str, small_head: None, tmp_path: Path) -> None:
    raw, options = CASES[case]
    path = tmp_path / "prices.csv"
    path.write_bytes(raw)
    assert len(raw) > readers.HEAD_FROM_BYTES
    plain = _file(path, options)
    assert _file(path, options, lean=True) == plain
    # the bytes given in memory take the head path too (decoded head, body from the bytes)
    got = read_table(raw, name="prices.csv", options=options, lean=True)
    ref = read_table(path, options=options)
    data = got.data.astype({c: got.data[c].cat.categories.dtype for c in got.data.columns
                            if isinstance(got.data[c].dtype, pd.CategoricalDtype)})
    pd.testing.assert_frame_equal(data, ref.data)


def test_the_head_path_is_taken_and_gives_up_where_it_must(small_head: None, tmp_path: Path) -> None:
    """Which files the disk reader reads itself (the others are read from their bytes, as before)."""
    def grid(case: str) -> object:
        path = tmp_path / "prices.csv"
        path.write_bytes(CASES[case][0])
        return readers.read_text_file(str(path), "prices.csv", CASES[case][1])

    assert grid("clean") is not None and grid("long layout") is not None
    assert grid("a cp1252 byte near the end") is None      # not all UTF-8: decoded whole
    assert grid("a byte-order mark") is None                 # a mark: decoded whole
    assert grid("a blank line late in the body") is None     # row numbers would drift in pyarrow's reader
    assert grid("a quoted line end late in the body") is None


def test_real_thresholds_on_a_file_above_eight_megabytes(tmp_path: Path) -> None:
    frame = _wide_text(9_500, 140, seed=11)
    raw = _csv(frame)
    assert len(raw) > sniff.HEAD_FROM_BYTES
    path = tmp_path / "prices.csv"
    path.write_bytes(raw)
    assert readers.read_text_file(str(path), "prices.csv", ReadOptions(kind="prices")) is not None
    assert _file(path, ReadOptions(kind="prices"), lean=True) == _file(path, ReadOptions(kind="prices"))


def test_lean_read_lets_a_wide_files_text_go_as_its_numbers_are_made(tmp_path: Path, small_head: None,
                                                                     monkeypatch: pytest.MonkeyPatch) -> None:
    """The question asked after each block of columns is answered yes for clean blocks and no for a block
    holding a price below zero (whose text an example shows)."""
    from valuesift.core.intake import numbers

    answers: list[bool] = []
    real = numbers.parse_text_columns

    def spy(columns, decimal="point", *, spare=None):  # type: ignore[no-untyped-def]
        if spare is None:
            return real(columns, decimal)

        def asked(k0: int, k1: int, values: np.ndarray) -> bool:
            answers.append(spare(k0, k1, values))
            return answers[-1]
        return real(columns, decimal, spare=asked)

    monkeypatch.setattr("valuesift.core.intake.tidy.parse_text_columns", spy)
    raw, options = CASES["non-positive prices (their text kept for the examples)"]
    path = tmp_path / "prices.csv"
    path.write_bytes(raw)
    pf = read_table(path, options=options, lean=True)
    assert answers == [False, True]   # 65 columns a block: the first holds the three, the second none
    assert pf.report.cells_total == pf.report.cells_parsed + pf.report.cells_blank + pf.report.cells_unparseable + pf.report.cells_dropped
    examples = pf.report.examples
    assert {"-3.25", "0", "-0.50"} <= set(examples["value"].astype(str))
