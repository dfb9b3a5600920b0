"""Property-based fuzzing of intake: random bytes and random tables; only IntakeError may escape.

DEVELOPERS.md ("Conventions"): "Only ``IntakeError`` may escape intake".  The
examples are derandomised (the same ones in every CI run) and counted into
``FUZZ_COUNTS`` for the README figures.
"""

from __future__ import annotations

import importlib.util
import io
import zipfile

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from valuesift.core.errors import IntakeError
from valuesift.core.intake import PanelOptions, ReadOptions, build_panel, read_table
from tests.robustness.conftest import HOSTILE

_spec = importlib.util.spec_from_file_location("hostile_make_corpus_fuzz", HOSTILE / "make_corpus.py")
assert _spec and _spec.loader
_corpus = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(_corpus)

FUZZ_COUNTS: dict[str, int] = {}
_FAST = dict(deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
_NAMES = ["prices.csv", "eps.csv", "dividends.csv", "sectors.csv", "holdings.csv", "benchmark.csv", "data.tsv",
          "book.xlsx", "table.parquet", "x.txt"]
_KINDS = [None, "prices", "earnings", "dividends", "sectors", "holdings", "benchmark", "signal"]


def _read(raw: bytes, name: str, kind: str | None = None) -> None:
    try:
        pf = read_table(raw, name=name, options=ReadOptions(kind=kind))  # type: ignore[arg-type]
    except IntakeError as err:
        assert err.file == name and err.reason is not None
        return
    rep = pf.report
    assert rep.cells_total == rep.cells_parsed + rep.cells_blank + rep.cells_unparseable + rep.cells_dropped
    if pf.kind == "prices":
        try:
            build_panel([pf], PanelOptions())
        except IntakeError:
            pass


@settings(max_examples=1200, **_FAST)
@given(raw=st.binary(max_size=600), name=st.sampled_from(_NAMES))
def test_random_bytes(raw: bytes, name: str) -> None:
    FUZZ_COUNTS["random_bytes"] = FUZZ_COUNTS.get("random_bytes", 0) + 1
    _read(raw, name)


_cell = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-10**20, 10**20).map(str),
    st.sampled_from(["", " ", "n.a.", "#N/A", "-", "(1.5)", "1,234.5", "1.234,5", "12%", "$3", "1e308", "inf",
                     "2020-01-31", "31/01/2020", "01/31/2020", "Jan 2020", "2020-13-45", "43861", "\"", "\"\"",
                     "=1+1", "<b>x</b>", "\x00", "\ufeff", "\u202e", "QZA01", "qzb02 ", "é", "\r"]),
    st.text(max_size=12),
)
_header = st.one_of(st.sampled_from(["date", "Date", "code", "security", "price", "eps", "pe", "weight", "sector",
                                     "ex_date", "amount", "QZA01", "QZB02", "", "date", "value"]),
                    st.text(max_size=8))


@st.composite
def _table(draw: st.DrawFn) -> tuple[bytes, str, str | None]:
    ncol = draw(st.integers(1, 6))
    nrow = draw(st.integers(0, 8))
    header = [draw(_header) for _ in range(ncol)]
    rows = [[draw(_cell) for _ in range(draw(st.integers(0, ncol + 1)))] for _ in range(nrow)]
    delim = draw(st.sampled_from([",", ";", "\t", "|"]))
    quote = draw(st.booleans())
    lines = [delim.join((f'"{c}"' if quote else c) for c in r) for r in [header, *rows]]
    text = draw(st.sampled_from(["\n", "\r\n", "\r"])).join(lines)
    enc = draw(st.sampled_from(["utf-8", "utf-8-sig", "utf-16", "cp1252", "latin-1"]))
    raw = text.encode(enc, errors="replace")
    return raw, draw(st.sampled_from(_NAMES[:7])), draw(st.sampled_from(_KINDS))


@settings(max_examples=1500, **_FAST)
@given(t=_table())
def test_random_delimited_tables(t: tuple[bytes, str, str | None]) -> None:
    FUZZ_COUNTS["random_tables"] = FUZZ_COUNTS.get("random_tables", 0) + 1
    raw, name, kind = t
    _read(raw, name, kind)


_xml_text = st.text(alphabet=st.characters(blacklist_categories=("Cs",), blacklist_characters="<>&\x00"), max_size=10)


@settings(max_examples=250, **_FAST)
@given(rows=st.lists(st.lists(st.one_of(_xml_text, st.floats(-1e9, 1e9).map(repr)), min_size=0, max_size=4),
                     min_size=0, max_size=6),
       kind=st.sampled_from(_KINDS), cut=st.one_of(st.none(), st.integers(0, 4000)))
def test_random_workbooks(rows: list[list[str]], kind: str | None, cut: int | None) -> None:
    FUZZ_COUNTS["random_workbooks"] = FUZZ_COUNTS.get("random_workbooks", 0) + 1
    try:
        raw = _corpus.xlsx_bytes(rows)
    except ValueError:  # a control character XML cannot hold; not an intake input
        return
    if cut is not None:
        raw = raw[:cut]                      # truncated archives too
    _read(raw, "book.xlsx", kind)


@settings(max_examples=150, **_FAST)
@given(members=st.dictionaries(st.sampled_from(["xl/workbook.xml", "[Content_Types].xml", "xl/worksheets/sheet1.xml",
                                                 "_rels/.rels", "xl/sharedStrings.xml"]),
                               st.binary(max_size=200), max_size=5))
def test_random_zip_members(members: dict[str, bytes]) -> None:
    FUZZ_COUNTS["random_zips"] = FUZZ_COUNTS.get("random_zips", 0) + 1
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        for k, v in members.items():
            zf.writestr(k, v)
    _read(buf.getvalue(), "book.xlsx")


def test_print_fuzz_counts() -> None:
    """Prints how many examples ran (figures for the README)."""
    if not FUZZ_COUNTS:
        pytest.skip("no fuzz test ran in this session")
    print(f"\nfuzz examples run: {sum(FUZZ_COUNTS.values())} {FUZZ_COUNTS}")



