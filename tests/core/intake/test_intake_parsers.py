"""Unit checks of number, date, decimal, delimiter, header and kind detection."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from valuesift.core.errors import IntakeError, Reason
from valuesift.core.intake import guess_kind
from valuesift.core.intake import numbers as nb
from valuesift.core.intake.dates import parse_dates
from valuesift.core.intake.kinds import infer_earnings_form
from valuesift.core.intake.numbers import detect_decimal, parse_numbers
from valuesift.core.intake.sniff import decode, find_header, looks_like_index, sniff_delimiter, split_sample


@pytest.mark.parametrize(
    "text,decimal,value",
    [
        ("1,234.5", "point", 1234.5),
        ("1.234,5", "comma", 1234.5),
        ("(12.5)", "point", -12.5),
        ("12.5%", "point", 0.125),
        ("(3,5%)", "comma", -0.035),
        ("$1,234.50", "point", 1234.5),
        ("-$3", "point", -3.0),
        ("$(4)", "point", -4.0),
        ("\u20ac12,30", "comma", 12.3),
        ("12.5 EUR", "point", 12.5),
        ("1 234 567", "point", 1234567.0),
        ("1'234.5", "point", 1234.5),
        ("\u22125", "point", -5.0),
        ("1e3", "point", 1000.0),
        ("  7 ", "point", 7.0),
    ],
)
def test_number_spellings(text: str, decimal: str, value: float) -> None:
    r = parse_numbers(pd.Series([text], dtype="str"), decimal)  # type: ignore[arg-type]
    assert r.status[0] == nb.PARSED
    assert r.values[0] == pytest.approx(value)


@pytest.mark.parametrize("text", sorted(nb.MISSING_MARKERS | {"#N/A", "N/A", "NA", "NM", "Null", "n.a.", "n.m."}))
def test_missing_spellings(text: str) -> None:
    r = parse_numbers(pd.Series([text], dtype="str"))
    assert r.status[0] == nb.MISSING and np.isnan(r.values[0])


@pytest.mark.parametrize(
    "text,decimal,status",
    [
        ("", "point", nb.BLANK),
        ("abc", "point", nb.UNPARSEABLE),
        ("12,5", "point", nb.UNPARSEABLE),  # a comma not grouping thousands under decimal point
        ("1,2,3", "point", nb.UNPARSEABLE),
        ("((1))", "point", nb.UNPARSEABLE),
        ("inf", "point", nb.NON_FINITE),
        ("-Infinity", "point", nb.NON_FINITE),
        ("1e308", "point", nb.OUT_OF_RANGE),
        ("#DIV/0!", "point", nb.UNPARSEABLE),
        ("TOR14", "point", nb.UNPARSEABLE),  # a security code is not a number
        ("1.234.567,5", "point", nb.UNPARSEABLE),
    ],
)
def test_number_failures(text: str, decimal: str, status: int) -> None:
    r = parse_numbers(pd.Series([text], dtype="str"), decimal)  # type: ignore[arg-type]
    assert r.status[0] == status


def test_numbers_already_numeric() -> None:
    r = parse_numbers(pd.Series([1.5, np.nan, np.inf, 2e300]))
    assert r.status.tolist() == [nb.PARSED, nb.BLANK, nb.NON_FINITE, nb.OUT_OF_RANGE]
    assert r.values[0] == 1.5 and np.isnan(r.values[1:]).all()


@pytest.mark.parametrize(
    "sample,delimiter,style",
    [(["1,234.50", "3"], ",", "point"), (["1.234,5", "12,5"], ";", "comma"), (["1,234", "5"], ";", "comma"),
     (["1,234", "5"], ",", "point"), ([], ",", "point"), (["12.5", "1.5", "2,25"], ",", "point")],
)
def test_detect_decimal(sample: list[str], delimiter: str, style: str) -> None:
    assert detect_decimal(sample, delimiter)[0] == style


@pytest.mark.parametrize(
    "text,expected",
    [
        ("2019-03-31", "2019-03-31"), ("2019/03/31", "2019-03-31"), ("2019-03-31 17:30:00", "2019-03-31"),
        ("2019-03-31T00:00:00Z", "2019-03-31"), ("20190331", "2019-03-31"), ("2019-03", "2019-03-31"),
        ("03/2019", "2019-03-31"), ("Mar 2019", "2019-03-31"), ("March 2019", "2019-03-31"), ("Mar-19", "2019-03-31"),
        ("31 Mar 2019", "2019-03-31"), ("31-Mar-19", "2019-03-31"), ("Mar 31, 2019", "2019-03-31"),
        ("Feb 2020", "2020-02-29"),
    ],
)
def test_date_spellings(text: str, expected: str) -> None:
    r = parse_dates(pd.Series([text], dtype="str"))
    assert r.status[0] == 0
    assert str(r.dates[0])[:10] == expected


def test_date_order_decided_from_data() -> None:
    # a first part above 12 can only be a day (common practice)
    assert parse_dates(pd.Series(["01/02/2019", "13/02/2019"])).order == "dmy"
    assert parse_dates(pd.Series(["01/02/2019", "02/13/2019"])).order == "mdy"
    amb = parse_dates(pd.Series(["01/02/2019", "03/04/2019"]))
    assert amb.ambiguous and amb.order == "dmy" and str(amb.dates[0])[:10] == "2019-02-01"
    set_ = parse_dates(pd.Series(["01/02/2019"]), "mdy")
    assert not set_.ambiguous and str(set_.dates[0])[:10] == "2019-01-02"
    mixed = parse_dates(pd.Series(["13/01/2019", "14/01/2019", "01/13/2019"]))
    assert mixed.order == "dmy" and mixed.status.tolist() == [0, 0, 3]


def test_excel_serial_dates() -> None:
    # Excel 1900 date system: serial 43466 is 2019-01-01 (common practice)
    r = parse_dates(pd.Series(["43466", "43496.0"]), allow_serial=True)
    assert [str(d)[:10] for d in r.dates] == ["2019-01-01", "2019-01-31"]
    assert parse_dates(pd.Series(["43466"])).status[0] == 3  # not read as a serial unless allowed


def test_excel_serial_beyond_nanosecond_dates_is_unparseable_not_a_crash() -> None:
    # 132320 is 2262-04-11, the last day a nanosecond timestamp holds (numpy datetime64[ns] range);
    # 2958465 is Excel's last serial, 9999-12-31 (common practice). The larger ones once stopped the read.
    r = parse_dates(pd.Series(["43466", "132320", "132321", "2958465"]), allow_serial=True)
    assert r.status.tolist() == [0, 0, 3, 3]
    assert str(r.dates[1])[:10] == "2262-04-11"


def test_month_only_and_mixed_forms_in_one_column() -> None:
    # one column mixing ISO days, compact days, months and named months: each read by its own form, the
    # month forms stamped at the month's end; 29 February only in a leap year (Gregorian calendar)
    r = parse_dates(pd.Series(["2019-03-31", "20190430", "2019-05", "06/2019", "Jul 2019", "2020-02-29", "2019-02-29", ""]))
    assert [str(d)[:10] for d in r.dates[:6]] == ["2019-03-31", "2019-04-30", "2019-05-31", "2019-06-30", "2019-07-31", "2020-02-29"]
    assert r.status.tolist() == [0, 0, 0, 0, 0, 0, 3, 1]
    assert r.month_only.tolist() == [False, False, True, True, True, False, False, False]


def test_bad_dates() -> None:
    r = parse_dates(pd.Series(["2019-02-30", "31/04/2019", "", "soon", "Foo 2019"]))
    assert r.status.tolist() == [3, 3, 1, 3, 3]


def test_datetime_input() -> None:
    s = pd.Series(pd.to_datetime(["2019-01-31", None]))
    r = parse_dates(s)
    assert r.status.tolist() == [0, 1]
    tz = pd.Series(pd.to_datetime(["2019-01-31"]).tz_localize("UTC"))
    assert parse_dates(tz).status.tolist() == [0]


@pytest.mark.parametrize(
    "text,delim",
    [("a,b,c\n1,2,3\n", ","), ("a;b;c\n1,5;2;3\n4;5,5;6\n", ";"), ("a\tb\n1\t2\n", "\t"), ("a|b\n1|2\n", "|"),
     ('a,b\n"1,234.5",2\n"2,000",3\n', ",")],
)
def test_sniff_delimiter(text: str, delim: str) -> None:
    assert sniff_delimiter(text) == delim


def test_find_header_skips_preamble() -> None:
    rows = split_sample("Title line\nExported 2025-01-03\n\nDate,A,B\n31/01/2019,1,2\n", ",")
    assert find_header(rows, "x.csv") == 3
    with pytest.raises(IntakeError, match="no header") as info:
        find_header(split_sample("2019-01-31,1,2\n2019-02-28,3,4\n", ","), "x.csv")
    assert info.value.reason is Reason.NO_HEADER


def test_decode_variants() -> None:
    assert decode("a,b".encode("utf-16-le"), "x.csv")[1] == "UTF-16-LE without BOM"
    assert decode("a,\u00e9".encode("cp1252"), "x.csv") == ("a,\u00e9", "cp1252")
    assert decode(b"a,b", "x.csv", "latin-1") == ("a,b", "latin-1")
    with pytest.raises(IntakeError) as info:
        decode(b"\xff\xfe\x00", "x.csv")  # a UTF-16 mark followed by half a character
    assert info.value.reason is Reason.BAD_ENCODING
    with pytest.raises(IntakeError) as info:
        decode("a,\u00e9".encode("utf-8"), "x.csv", "ascii")
    assert info.value.reason is Reason.BAD_ENCODING
    with pytest.raises(IntakeError) as info:
        decode(b"\x81\x8d\x8f\x90\x9d", "x.csv")  # bytes undefined in cp1252 and invalid UTF-8
    assert info.value.reason is Reason.BAD_ENCODING
    with pytest.raises(IntakeError) as info:
        decode(bytes(range(1, 9)) * 50, "x.csv")  # control characters
    assert info.value.reason is Reason.UNREADABLE


@pytest.mark.parametrize(
    "name,header,kind",
    [("maren_prices.csv", (), "prices"), ("x.csv", ("code", "sector"), "sectors"), ("x.csv", ("code", "weight"), "holdings"),
     ("x.csv", ("code", "ex_date", "amount"), "dividends"), ("x.csv", ("date", "code", "eps"), "earnings"),
     ("x.csv", ("date", "code", "mcap"), "market_cap"), ("bench.csv", (), "benchmark"), ("my_signal.csv", (), "signal"),
     ("x.csv", ("date", "level"), "benchmark"), ("x.csv", ("date", "code", "close"), "prices"), ("x.csv", ("a", "b"), None)],
)
def test_guess_kind(name: str, header: tuple[str, ...], kind: str | None) -> None:
    assert guess_kind(name, header) == kind


def test_earnings_form_and_index_headers() -> None:
    assert infer_earnings_form("P/E") == "pe" and infer_earnings_form("pe_ratio") == "pe"
    assert infer_earnings_form("eps_ttm") == "eps" and infer_earnings_form("close") is None
    assert looks_like_index("Maren All-Share") and looks_like_index("Composite Index")
    assert not looks_like_index("TOR14")


@pytest.mark.parametrize("cells", [
    ["A1", " A1", "A1 ", "B2", "", None, " ", "C3", "B2"],
    ["B2", "A1", "B2", "A1"],
    [None, "A1", None],
    ["  ", "x", " x", "X"],
])
def test_security_codes_strip_only_the_distinct_ids(cells: list) -> None:
    # the long-file reader strips each distinct id once; the result must be pandas' own factorize of the
    # stripped column (codes in order of first appearance; a missing id reads as blank)
    from valuesift.core.intake._common import Ctx
    from valuesift.core.intake.tidy import _stripped_codes

    class One:
        def __init__(self, s: pd.Series) -> None:
            self.grid = type("G", (), {"columns": [s]})()

        def col(self, j: int) -> pd.Series:
            return self.grid.columns[j]

        text = Ctx.text

    for s in (pd.Series(cells, dtype="str"), pd.Series(cells, dtype=object)):
        want_codes, want_ids = pd.factorize(Ctx.text(One(s), 0))  # type: ignore[arg-type]
        codes, ids = _stripped_codes(One(s), 0)  # type: ignore[arg-type]
        assert codes.tolist() == want_codes.tolist()
        assert list(np.asarray(ids, dtype=object)) == list(np.asarray(want_ids, dtype=object))


def test_stripped_codes_equal_pandas_factorize_of_the_stripped_column() -> None:
    # parse_dates and the long-file ids strip each distinct cell once; the reference is pandas' own
    # factorize of the column as text with every cell stripped (what both read before)
    from valuesift.core.intake.dates import stripped_codes

    rng = np.random.default_rng(7)
    pool = np.array(["2019-01-31", " 2019-01-31", "2019-01-31 ", "31/01/2019", "", " ", "x", " X", None], dtype=object)
    for _ in range(200):
        cells = pool[rng.integers(0, len(pool), rng.integers(0, 40))].tolist()
        s = pd.Series(cells, dtype="str")
        want_codes, want = pd.factorize(s.astype("str").fillna("").str.strip())
        codes, uniq = stripped_codes(s)
        assert codes.tolist() == want_codes.tolist()
        assert uniq.tolist() == list(np.asarray(want, dtype=object))
    # Python objects are read through their text: 1, 1.0 and True are three texts (pandas' factorize of the
    # objects themselves would hold them as one value)
    codes, uniq = stripped_codes(pd.Series([1, 1.0, True, " 1.0"], dtype=object))
    assert codes.tolist() == [0, 1, 2, 1] and uniq.tolist() == ["1", "1.0", "True"]


def test_dates_of_a_long_column_read_the_same_as_each_cell_alone() -> None:
    # the parse is done once per distinct stripped text; each cell's result must be that of the cell read
    # alone (a padded copy of a date, a blank, a missing cell)
    cells = ["2019-01-31", " 2019-01-31", "", None, "2019-02-28 ", "31/01/2019", "soon", " "] * 3
    r = parse_dates(pd.Series(cells, dtype="str"))
    for k, c in enumerate(cells):
        one = parse_dates(pd.Series([c], dtype="str"), "dmy")
        assert r.status[k] == one.status[0], c
        assert (np.isnat(r.dates[k]) and np.isnat(one.dates[0])) or r.dates[k] == one.dates[0], c


def test_number_cast_in_slices_equals_one_cast(monkeypatch: pytest.MonkeyPatch) -> None:
    # a long file's value column is cast slice by slice; the numbers, statuses and the fall-back to the
    # careful parser (a cell it must classify, in any slice) are those of one cast of the whole column
    rng = np.random.default_rng(11)
    for trial in range(30):
        n = int(rng.integers(1, 60))
        cells = [f"{x:.4f}" for x in rng.normal(size=n)]
        for k in rng.integers(0, n, int(rng.integers(0, 4))):
            cells[int(k)] = str(rng.choice(["", "1,234.5", "n/a", "(3)", "1e5", "inf"]))
        s = pd.Series(cells, dtype="str")
        whole = parse_numbers(s)
        cols = [pd.Series(cells[:n // 2], dtype="str"), pd.Series(cells[n // 2:n // 2 * 2], dtype="str")]
        whole_cols = nb.parse_text_columns(cols) if n >= 2 else None
        monkeypatch.setattr(nb, "_CAST_ROWS", int(rng.integers(1, 8)))
        sliced = parse_numbers(s)
        np.testing.assert_array_equal(sliced.values, whole.values)
        np.testing.assert_array_equal(sliced.status, whole.status)
        if whole_cols is not None:
            sliced_cols = nb.parse_text_columns(cols)
            np.testing.assert_array_equal(sliced_cols.values, whole_cols.values)
            np.testing.assert_array_equal(sliced_cols.status, whole_cols.status)
        monkeypatch.undo()


def test_numbers_already_numeric_keep_the_numbers_and_blank_the_rest() -> None:
    # the typed path sets every unusable cell to NaN in place of a second array; the input is not changed
    v = np.array([1.5, -0.0, np.nan, -np.inf, 3e300, -2.0])
    s = pd.Series(v.copy())
    r = parse_numbers(s)
    assert r.status.tolist() == [nb.PARSED, nb.PARSED, nb.BLANK, nb.NON_FINITE, nb.OUT_OF_RANGE, nb.PARSED]
    np.testing.assert_array_equal(r.values, [1.5, -0.0, np.nan, np.nan, np.nan, -2.0])
    np.testing.assert_array_equal(s.to_numpy(), v)
