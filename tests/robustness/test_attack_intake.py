"""Attacks of the review (issue 14) whose surface is an intake or table function: bombs, slow patterns, misread headers.

Each test reproduces the attack as reported and fails on the code before the
fix.  The pattern tests use the original regular expression as the outside
reference (the new one-pass test must accept exactly the same cells); the
decompression bomb is a Parquet file generated here (never committed).
"""

from __future__ import annotations

import io
import re
import threading
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from valuesift.app.screen_table import MAX_FILTER_CHARS, apply_filter, neutralise, to_csv_bytes
from valuesift.core.errors import ConfigError, IntakeError, Reason
from valuesift.core.intake import ReadOptions, read_table
from valuesift.core.intake.readers import MAX_ROWS
from valuesift.core.intake.sniff import MAX_CELL_CHARS, is_value

#: the number test as it was (the reference language; it backtracks on long runs of dashes)
_OLD_VALUE = re.compile(r"[-+($€£]*[\d.,\s/:%-]+[)%]*")


def bomb_parquet(path: Path, rows: int = 50_000_000, group: int = 1_000_000) -> Path:
    """A Parquet file of ``rows`` constant rows (dictionary/RLE encoded, zstd): a few hundred KB on disk."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    part = pa.table({"date": pa.array(np.full(group, np.datetime64("2020-01-31"), dtype="datetime64[ms]")),
                     "QZA01": pa.array(np.ones(group))})
    with pq.ParquetWriter(path, part.schema, compression="zstd", use_dictionary=True) as w:
        for _ in range(rows // group):
            w.write_table(part, row_group_size=group)
    return path


def _finishes(fn, limit: float = 60.0) -> object:  # type: ignore[no-untyped-def]
    """Run ``fn`` in a thread; fail (instead of hanging the suite) when it has not returned after ``limit`` s."""
    out: dict[str, object] = {}

    def run() -> None:
        try:
            out["value"] = fn()
        except BaseException as err:  # noqa: BLE001 - handed back to the test
            out["error"] = err

    t = threading.Thread(target=run, daemon=True)
    t.start()
    t.join(limit)
    assert not t.is_alive(), f"still running after {limit:.0f} s"
    if "error" in out:
        raise out["error"]  # type: ignore[misc]
    return out.get("value")


# -- 1. decompression bomb -----------------------------------------------------------------
def test_parquet_bomb_is_refused_from_its_footer(tmp_path: Path) -> None:
    path = bomb_parquet(tmp_path / "bomb.parquet")
    raw = path.read_bytes()
    assert len(raw) < 2_000_000                        # the reviewed file was 548 KB
    with pytest.raises(IntakeError) as info:
        _finishes(lambda: read_table(raw, name="bomb.parquet"))
    err = info.value
    assert err.reason is Reason.TOO_LARGE and "50,000,000 data rows" in str(err) and f"{MAX_ROWS:,}" in str(err)


def test_parquet_decoded_size_is_held_to_the_budget(tmp_path: Path) -> None:
    """Below the row limit but above 4x the upload limit once decoded: refused before (or while) decoding."""
    path = bomb_parquet(tmp_path / "small-bomb.parquet", rows=2_000_000, group=500_000)
    raw = path.read_bytes()
    with pytest.raises(IntakeError, match="upload limit") as info:
        read_table(raw, name="b.parquet", options=ReadOptions(max_bytes=4_000_000))   # 32 MB decoded > 16 MB
    assert info.value.reason is Reason.TOO_LARGE


def test_ordinary_parquet_still_reads(tmp_path: Path) -> None:
    dates = pd.date_range("2019-01-31", periods=6, freq="ME")
    df = pd.DataFrame({"date": dates, "QZA01": np.arange(6.0) + 10, "QZB02": np.arange(6.0) + 20})
    buf = io.BytesIO()
    df.to_parquet(buf, index=False)
    pf = read_table(buf.getvalue(), name="prices.parquet")
    assert pf.kind == "prices" and len(pf.data) == 12 and set(pf.data["security"]) == {"QZA01", "QZB02"}


# -- 2. one cell freezes the server ----------------------------------------------------------
def test_dash_run_header_cell_is_refused_at_once() -> None:
    raw = ("date," + "-" * 60_000 + "x,QZB02\n2020-01-31,1,2\n").encode()     # 63 s before the fix
    with pytest.raises(IntakeError) as info:
        _finishes(lambda: read_table(raw, name="prices.csv"))
    assert info.value.reason is Reason.TOO_LARGE and f"{MAX_CELL_CHARS:,}" in str(info.value)


def test_number_test_is_one_pass_on_the_longest_allowed_cell() -> None:
    cell = "-" * (MAX_CELL_CHARS - 1) + "x"
    assert _finishes(lambda: [is_value(cell) for _ in range(50)]) == [False] * 50


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_number_test_accepts_exactly_the_old_language(seed: int) -> None:
    rng = np.random.default_rng(seed)
    alphabet = list("-+($€£0123456789.,/:% )a\t٣²x")
    for _ in range(20_000):
        cell = "".join(rng.choice(alphabet, size=int(rng.integers(0, 9))))
        old = bool(_OLD_VALUE.fullmatch(cell.strip())) and any(ch.isdigit() for ch in cell.strip())
        assert is_value(cell) == old, repr(cell)


def test_a_long_filter_is_refused_with_a_message() -> None:
    df = pd.DataFrame({"security": ["QZA01", "QZB02"], "sector": ["Mills", "Ports"], "zscore": [1.5, -0.5]})
    attack = "{sector} contains " + "a" + " " * 100_000 + "b"                    # froze the server for 13 s
    with pytest.raises(ConfigError, match="above the limit"):
        _finishes(lambda: apply_filter(df, attack))
    near = "{sector} contains M" + " " * (MAX_FILTER_CHARS - 40) + "s"
    assert _finishes(lambda: len(apply_filter(df, near))) == 0
    assert list(apply_filter(df, "{zscore} > 1 && {sector} contains Mil")["security"]) == ["QZA01"]
    assert list(apply_filter(df, "{sector} icontains ports")["security"]) == ["QZB02"]


def test_nested_quantifier_identifier_pattern_is_refused() -> None:
    with pytest.raises(ConfigError, match="repeats a group"):
        ReadOptions(id_cleanup="regex", id_regex="(Q+)+$")
    ReadOptions(id_cleanup="regex", id_regex="([A-Z]{2}[0-9]+)")      # an ordinary pattern stays allowed


# -- 12. a misread header ------------------------------------------------------------------------
@pytest.mark.parametrize("sep", ["\r", "\u2028", "\n"], ids=["carriage-return", "line-separator", "line-feed"])
def test_line_break_inside_a_quoted_header_cell_is_data(sep: str) -> None:
    text = ("Prices exported for the committee\nsource: invented\n"
            f'date,"QZA01{sep}class A",QZB02\n2020-01-31,12,32\n2020-02-29,13,33\n')
    pf = read_table(text.encode(), name="prices.csv", options=ReadOptions(kind="prices"))
    secs = sorted(set(pf.data["security"]))
    assert secs == sorted([f"QZA01{sep}class A", "QZB02"]), secs          # before the fix: '12', '32'
    assert pf.report.header_row == 3


def test_a_numeric_header_row_is_warned_about() -> None:
    text = "date,QZA01,QZB02\n2020-01-31,12,32\n2020-02-29,13,33\n2020-03-31,14,34\n"
    pf = read_table(text.encode(), name="prices.csv", options=ReadOptions(kind="prices", header_row=2))
    assert any("mostly numbers" in n for n in pf.report.notes)
    clean = read_table(text.encode(), name="prices.csv", options=ReadOptions(kind="prices"))
    assert not any("mostly numbers" in n for n in clean.report.notes)


# -- full-width formula characters -----------------------------------------------------------------
@pytest.mark.parametrize("text", ["＝1+1", "＋QZ", "－QZ", "＠SUM(A1)", "﹦1", "﹢1", "﹣1", "﹫x"])
def test_compatibility_forms_of_formula_characters_are_neutralised(text: str) -> None:
    out = neutralise(pd.DataFrame({"security": [text, "QZA01"], "signal": [1.0, -1.0]}))
    assert list(out["security"]) == ["'" + text, "QZA01"]
    assert list(out["signal"]) == [1.0, -1.0]                     # numbers stay numbers
    csv = to_csv_bytes(pd.DataFrame({"security": [text]})).decode()
    assert "'" + text in csv
