"""The lean intake paths give the cells, counts and values of the plain ones they replace.

* ``parse_text_columns`` (column by column) against ``parse_numbers`` of the stacked columns, and the
  plain numbers against Python's ``float`` (correctly rounded decimal conversion, Python language
  reference, "Floating point literals");
* the tidy entries (``by_column_entries``, ``by_key_entries``) against a sort of Python tuples written
  out here (security, date, file order; the first or last of equal keys kept);
* a UTF-8 body read from the file's own bytes against the decoded text re-encoded (the former reader).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd
import pyarrow as pa
import pytest

from valuesift.core.errors import IntakeError
from valuesift.core.intake import ReadOptions, read_table
from valuesift.core.intake import numbers as nb
from valuesift.core.intake import readers
from valuesift.core.intake._common import DUP, stack_columns
from valuesift.core.intake.entries import by_column_entries, by_key_entries
from valuesift.core.intake.numbers import parse_numbers, parse_text_columns

SPELLINGS = ["1", "-2.5", "1e3", "", " 7 ", "1,234.5", "1.234,5", "(12)", "5%", "$3", "n.a.", "-", "abc", "inf",
             "-infinity", "nan", "1e400", "9007199254740993", "12345678901234567890123", "18446744073709551615",
             "-9223372036854775809", "0.1000000000000000055511151231257827", "12.5 EUR", "1 234", "\u22125", "--",
             "0", "-0", "+4", ".5", "5.", "1_000", "0x10", "12,5", "1.234.567,8"]


def _columns(rng: np.random.Generator, n: int, m: int, pool: list[str], chunked: bool) -> list[pd.Series]:
    cols = []
    for _ in range(m):
        cells = [pool[k] for k in rng.integers(0, len(pool), n)]
        arr = pa.array(cells, pa.large_string())
        if chunked and n > 4:  # several chunks, as pyarrow's reader gives
            arr = pa.chunked_array([arr.slice(0, n // 3), arr.slice(n // 3, n // 3), arr.slice(2 * (n // 3))])
        else:
            arr = pa.chunked_array([arr])
        cols.append(pd.Series(pd.arrays.ArrowStringArray(arr, dtype=pd.StringDtype("pyarrow", na_value=np.nan))))
    return cols


def _same(a: nb.NumberResult, b: nb.NumberResult) -> None:
    np.testing.assert_array_equal(a.status, b.status)
    np.testing.assert_array_equal(a.percent, b.percent)
    np.testing.assert_array_equal(a.values.view(np.int64), b.values.view(np.int64))  # bit for bit (NaN and -0.0 too)


@pytest.mark.parametrize("decimal", ["point", "comma"])
@pytest.mark.parametrize("chunked", [False, True], ids=["one-chunk", "chunked"])
@pytest.mark.parametrize("pool", ["spelled", "plain"])
def test_columns_parse_as_the_stacked_cells(decimal: str, chunked: bool, pool: str) -> None:
    rng = np.random.default_rng(11)
    cells = SPELLINGS if pool == "spelled" else [repr(float(v)) for v in rng.normal(0, 1e3, 50)] + [""]
    for n, m in ((1, 1), (7, 3), (200, 9)):
        cols = _columns(rng, n, m, cells, chunked)
        _same(parse_text_columns(cols, decimal), parse_numbers(stack_columns(cols), decimal))  # type: ignore[arg-type]


@pytest.mark.parametrize("chunked", [False, True], ids=["one-chunk", "chunked"])
def test_columns_joined_in_blocks_parse_as_the_stacked_cells(chunked: bool, monkeypatch: pytest.MonkeyPatch) -> None:
    """Blocks of several columns in one Arrow pass (a small block size forces many blocks, a last short one and a
    dirty cell in a later block) give the stacked parse cell for cell."""
    monkeypatch.setattr(nb, "_BLOCK_CELLS", 50)
    rng = np.random.default_rng(12)
    plain = [repr(float(v)) for v in rng.normal(0, 1e3, 50)] + [""]
    cols = _columns(rng, 20, 13, plain, chunked)                 # 2 columns a block, 7 blocks
    _same(parse_text_columns(cols), parse_numbers(stack_columns(cols)))
    assert (parse_text_columns(cols).status != nb.BLANK).sum() > 0
    dirty = _columns(rng, 20, 1, ["n.a.", "3"], chunked)
    cols = cols[:9] + dirty + cols[9:]
    _same(parse_text_columns(cols), parse_numbers(stack_columns(cols)))


def test_one_dirty_column_sends_every_column_through_the_careful_parser() -> None:
    clean = pd.Series(["1.5", "2", ""], dtype="str")
    dirty = pd.Series(["n.a.", "3", "4"], dtype="str")
    _same(parse_text_columns([clean, dirty]), parse_numbers(stack_columns([clean, dirty])))
    r = parse_text_columns([clean, clean])
    assert r.status.tolist() == [nb.PARSED, nb.PARSED, nb.BLANK] * 2


def test_plain_numbers_match_python_float() -> None:
    rng = np.random.default_rng(5)
    texts = [repr(float(v)) for v in rng.normal(0, 1e6, 3000)] + ["%.25g" % v for v in rng.lognormal(0, 40, 3000)]
    texts += [str(int(v)) for v in rng.integers(2 ** 53, 2 ** 62, 500)]
    half = len(texts) // 2
    cols = [pd.Series(texts[:half], dtype="str"), pd.Series(texts[half:2 * half], dtype="str")]
    r = parse_text_columns(cols)
    assert (r.status == nb.PARSED).all()
    assert r.values.tolist() == [float(t) for t in texts[:2 * half]]
    cols[1].iloc[0] = "n.a."  # the careful parser gives the same values
    r2 = parse_text_columns(cols)
    assert r2.values[:half].tolist() == [float(t) for t in texts[:half]]


# -- entries ----------------------------------------------------------------------------------------
def _reference(final: np.ndarray, values: np.ndarray, n: int, code_of: np.ndarray, by_row: bool, dates: np.ndarray,
               rule: str) -> tuple:
    ns = dates.astype("datetime64[ns]").view(np.int64)
    keyed = []
    for k in range(final.size):
        if final[k] == nb.PARSED:
            i, j = k % n, k // n
            keyed.append((int(code_of[i] if by_row else code_of[j]), int(ns[i]), k))
    keyed.sort()  # security, date, then file order (the stacked index)
    out, dropped, first_repeat = [], [], None
    for t, (c, d, k) in enumerate(keyed):
        prev = t > 0 and keyed[t - 1][:2] == (c, d)
        nxt = t + 1 < len(keyed) and keyed[t + 1][:2] == (c, d)
        if prev and (first_repeat is None or k < first_repeat[0]):
            first_repeat = (k, c)
        if (rule == "first" and prev) or (rule != "first" and nxt):
            dropped.append(k)
        else:
            out.append((c, d, k))
    seen = sorted({d for _, d, _ in keyed})
    return out, sorted(dropped), first_repeat, seen


@pytest.mark.parametrize("rule", ["first", "last", "error"])
@pytest.mark.parametrize("layout", ["wide", "wide-repeated-ids", "long", "wide-distinct-dates", "wide-large"])
def test_entries_match_a_sort_of_tuples(rule: str, layout: str) -> None:
    """``wide-distinct-dates`` and ``wide-large`` take the one-column-per-security path (no date twice);
    ``wide-large`` has about 300,000 cells, so that path works through several blocks of columns."""
    rng = np.random.default_rng({"wide": 1, "wide-repeated-ids": 2, "long": 3, "wide-distinct-dates": 4,
                                 "wide-large": 5}[layout])
    for trial in range(2 if layout == "wide-large" else 25):
        n = 1000 if layout == "wide-large" else int(rng.integers(1, 40))
        m = 1 if layout == "long" else 300 if layout == "wide-large" else int(rng.integers(1, 6))
        if layout in ("wide-distinct-dates", "wide-large"):
            day = rng.permutation(3 * n)[:n]          # every row its own date, rows not in date order
        else:
            day = rng.integers(0, max(2, n // 2), n)  # repeated dates
        dates = (np.datetime64("2020-01-01", "D") + day).astype("datetime64[ns]")
        final = rng.choice(np.array([nb.PARSED, nb.PARSED, nb.PARSED, nb.BLANK], dtype=np.int8), n * m)
        values = rng.normal(size=n * m)
        if layout == "long":
            code_of = rng.integers(0, 4, n)
        elif layout in ("wide", "wide-distinct-dates", "wide-large"):
            code_of = rng.permutation(m)
        else:
            code_of = rng.integers(0, max(1, m - 1), m)
        want, dropped, first_repeat, seen = _reference(final, values, n, code_of, layout == "long", dates, rule)
        got_final = final.copy()
        fn = by_key_entries if layout == "long" else by_column_entries
        ent = fn(got_final, [values.copy()], n, code_of, dates, rule)
        assert ent.dates_seen.tolist() == seen
        if rule == "error" and first_repeat is not None:
            assert (ent.first_repeat, ent.first_repeat_code) == first_repeat
            continue
        assert ent.first_repeat is None
        assert np.flatnonzero(got_final == DUP).tolist() == dropped
        assert ent.codes.tolist() == [c for c, _, _ in want]
        assert ent.dates.astype("datetime64[ns]").view(np.int64).tolist() == [d for _, d, _ in want]
        assert ent.values.tolist() == [values[k] for _, _, k in want]
        assert ent.n_securities == len({c for c, _, _ in want}) and ent.n_dropped == len(dropped)


# -- reading the body from the file's bytes ----------------------------------------------------------------
def _body(rows: int = 300) -> str:
    rng = np.random.default_rng(9)
    lines = ["2020-01-%02d,%s,%s" % (1 + i % 28, round(float(rng.normal(50, 5)), 3), round(float(rng.normal(9, 1)), 2))
             for i in range(rows)]
    return "\n".join(lines)


FILES = {
    "plain": "date,QB1,QB2\n" + _body() + "\n",
    "crlf-trailing-blank-lines": ("date,QB1,QB2\n" + _body() + "\n\n\n").replace("\n", "\r\n"),
    "no-final-line-end": "date,QB1,QB2\n" + _body(),
    "bom": "\ufeffdate,QB1,QB2\n" + _body() + "\n",
    "two-boms": "\ufeff\ufeffdate,QB1,QB2\n" + _body() + "\n",
    "accented-preamble-and-header": "caf\u00e9 export \u2014 pri\u00e7es\ndate,QB\u00e91,QB\u00e92\n" + _body() + "\n",
    "accented-cells": "date,QB1,QB2\n" + _body().replace(",5", ",\u00e95") + "\n",
    "quoted-line-end": "date,QB1,QB2\n" + _body() + '\n2020-02-01,"1\n2",3\n',
    "quoted-delimiter": "date,QB1,QB2\n" + _body() + '\n2020-02-01,"1,5",3\n',
    "open-quote-at-end": "date,QB1,QB2\n" + _body() + '\n2020-02-01,4,"x5',  # an example shows the cell's text
    "open-quote-at-end-crlf": ("date,QB1,QB2\n" + _body() + '\n2020-02-01,4,"x5\n').replace("\n", "\r\n"),
    "blank-line-inside": "date,QB1,QB2\n" + _body(100) + "\n\n" + _body(100) + "\n",
    "ragged": "date,QB1,QB2\n" + _body() + "\n2020-02-01,4\n",
    "semicolon": ("date;QB1;QB2\n" + _body().replace(",", ";") + "\n"),
}


def _read(raw: bytes, name: str) -> tuple:
    try:
        pf = read_table(raw, name=name)
    except IntakeError as err:
        return ("error", err.reason, err.row, err.column, str(err), err.hint)
    rep = {f.name: getattr(pf.report, f.name) for f in dataclasses.fields(pf.report)}
    return ("read", pf.data, rep)


def _same_read(a: tuple, b: tuple) -> None:
    assert a[0] == b[0]
    if a[0] == "error":
        assert a == b
        return
    pd.testing.assert_frame_equal(a[1], b[1], check_exact=True)
    for key, value in a[2].items():
        if isinstance(value, pd.DataFrame):
            pd.testing.assert_frame_equal(value, b[2][key], check_exact=True)
        else:
            assert value == b[2][key] or (value != value and b[2][key] != b[2][key]), key


@pytest.mark.parametrize("case", sorted(FILES))
def test_body_from_the_bytes_reads_as_the_reencoded_text(case: str, monkeypatch: pytest.MonkeyPatch) -> None:
    raw = FILES[case].encode("utf-8")
    monkeypatch.setattr(readers, "FAST_PATH_MIN_CHARS", 100)  # the corpus files are small: take the fast path
    used = []
    fast_bytes = readers._fast_bytes

    def spy(*a: object, **k: object) -> object:
        used.append(True)
        return fast_bytes(*a, **k)  # type: ignore[arg-type]

    monkeypatch.setattr(readers, "_fast_bytes", spy)
    lean = _read(raw, "prices.csv")
    assert used  # the body was read from the bytes
    text_of = readers._text_of
    monkeypatch.setattr(readers, "_text_of", lambda *a: text_of(*a)[:2] + (None,))  # the former route: text
    _same_read(lean, _read(raw, "prices.csv"))
