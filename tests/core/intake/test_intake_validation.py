"""Every validation branch of intake: ConfigError for bad settings, IntakeError (by reason code) for bad files."""

from __future__ import annotations

import io

import pytest

import valuesift.core.intake.files as files_mod
from valuesift.core.errors import ConfigError, IntakeError, Reason
from valuesift.core.intake import ReadOptions, read_table


@pytest.mark.parametrize(
    "kwargs,match",
    [
        (dict(kind="quotes"), "'File holds'"), (dict(layout="tall"), "'Layout'"),
        (dict(date_order="ydm"), "'Date order'"), (dict(decimal="dot"), "'Decimal style'"),
        (dict(id_cleanup="lower"), "'Identifier clean-up'"), (dict(earnings_form="ey"), "'Earnings read as'"),
        (dict(duplicate_rule="mean"), "'Repeated date and security'"), (dict(header_row=0), "'Header row'"),
        (dict(delimiter=";;"), "'Delimiter'"), (dict(encoding="klingon-8"), "'Text encoding'"),
        (dict(id_cleanup="regex"), "'Identifier pattern'"),
        (dict(id_cleanup="regex", id_regex="(["), "regular expression"),
        (dict(exclude_columns="Maren All-Share"), "'Columns to leave out'"),
        (dict(max_bytes=0), "largest file size"),
    ],
)
def test_read_options_validated(kwargs: dict, match: str) -> None:
    # The message names the choice as the Data page and the command line show it, never a field name.
    with pytest.raises(ConfigError, match=match) as err:
        ReadOptions(**kwargs)
    for field in ("date_order", "id_cleanup", "duplicate_rule", "header_row", "exclude_columns", "id_regex",
                  "earnings_form", "max_bytes", "Setting "):
        assert field not in str(err.value) + str(err.value.hint or ""), err.value


def _err(raw: bytes, name: str = "prices.csv", **opts: object) -> IntakeError:
    with pytest.raises(IntakeError) as info:
        read_table(raw, name=name, options=ReadOptions(**opts))  # type: ignore[arg-type]
    assert info.value.hint, "an error must say what to change"
    return info.value


def test_bytes_need_a_name() -> None:
    with pytest.raises(IntakeError, match="needs a name") as info:
        read_table(b"date,A\n2019-01-31,1\n")
    assert info.value.reason is Reason.BAD_OPTION


def test_size_limits(tmp_path: pytest.TempPathFactory) -> None:
    raw = b"date,TOR14\n2019-01-31,1\n"
    assert _err(raw, max_bytes=10).reason is Reason.TOO_LARGE
    path = tmp_path / "prices.csv"  # type: ignore[operator]
    path.write_bytes(raw)
    with pytest.raises(IntakeError, match="above the limit") as info:
        read_table(path, options=ReadOptions(max_bytes=10))
    assert info.value.reason is Reason.TOO_LARGE and info.value.file == "prices.csv"
    assert read_table(path).report.cells_parsed == 2
    assert read_table(str(path), name="My prices").name == "My prices"


def test_missing_path(tmp_path: pytest.TempPathFactory) -> None:
    with pytest.raises(IntakeError, match="cannot be opened") as info:
        read_table(tmp_path / "nope.csv")  # type: ignore[operator]
    assert info.value.reason is Reason.UNREADABLE and info.value.file == "nope.csv"


def test_blank_lines_only() -> None:
    assert _err(b"\n\n  \n").reason is Reason.EMPTY_FILE
    assert _err("\n\n".encode("utf-16")).reason is Reason.EMPTY_FILE


def test_header_row_setting() -> None:
    raw = b"junk,junk,junk\nDate,TOR14,VEL22\n2019-01-31,1,2\n"
    pf = read_table(raw, name="prices.csv", options=ReadOptions(header_row=2))
    assert pf.report.header_row == 2 and pf.report.n_securities == 2
    e = _err(raw, header_row=9)
    assert e.reason is Reason.BAD_OPTION
    assert _err(b"\n\nDate,A\n2019-01-31,1\n", header_row=1).reason is Reason.NO_HEADER


@pytest.mark.parametrize("setting", ["security_column", "value_column", "date_column"])
def test_named_column_missing(setting: str) -> None:
    e = _err(b"date,code,price\n2019-01-31,TOR14,1\n", **{setting: "nope"})
    assert e.reason is Reason.COLUMN_NOT_FOUND and e.column == "nope" and e.row == 1


def test_long_layout_without_codes() -> None:
    e = _err(b"date,TOR14\n2019-01-31,1\n", layout="long")
    assert e.reason is Reason.AMBIGUOUS_LAYOUT


def test_all_columns_excluded_and_no_values() -> None:
    assert _err(b"date,TOR14\n2019-01-31,1\n", exclude_columns=("date", "TOR14")).reason is Reason.NO_VALUE_COLUMN
    assert _err(b"date,x\n2019-01-31,\n", exclude_columns=("x",)).reason is Reason.NO_VALUE_COLUMN
    assert _err(b"code\nTOR14\n", name="sectors.csv", kind="sectors").reason is Reason.NO_VALUE_COLUMN
    assert _err(b"code,name\nTOR14,abc\n", name="holdings.csv", kind="holdings").reason is Reason.NO_VALUE_COLUMN
    assert _err(b"date,code,note\n2019-01-31,TOR14,abc\n", kind="prices").reason is Reason.NO_VALUE_COLUMN


def test_benchmark_with_two_value_columns() -> None:
    e = _err(b"date,open,shut\n2019-01-31,1,2\n", name="benchmark.csv")
    assert e.reason is Reason.AMBIGUOUS_LAYOUT and e.row == 1
    pf = read_table(b"date,open,shut\n2019-01-31,1,2\n", name="benchmark.csv", options=ReadOptions(value_column="shut"))
    assert pf.data["value"].tolist() == [2.0] and pf.report.count("unused_column") == 1


def test_record_duplicates() -> None:
    raw = b"code,sector\nTOR14,Mining\nTOR14,Banks\n"
    e = _err(raw, name="sectors.csv", duplicate_rule="error")
    assert e.reason is Reason.DUPLICATE_ENTRY and e.row == 3 and e.column == "sector"
    first = read_table(raw, name="sectors.csv", options=ReadOptions(duplicate_rule="first"))
    assert first.data["sector"].tolist() == ["Mining"]


def test_excluded_name_not_found_and_regex_misses_are_noted() -> None:
    pf = read_table(b"date,TOR14,other\n2019-01-31,1,2\n", name="prices.csv",
                    options=ReadOptions(exclude_columns=("Gone",), id_cleanup="regex", id_regex=r"[A-Z]{3}\d{2}"))
    assert any("Gone" in n for n in pf.report.notes)
    assert sorted(pf.data["security"]) == ["TOR14", "other"]
    assert any("id_regex" in n for n in pf.report.notes)


def test_xlsx_branches() -> None:
    import openpyxl

    wb = openpyxl.Workbook()
    out = io.BytesIO()
    wb.save(out)
    assert _err(out.getvalue(), name="prices.xlsx").reason is Reason.NO_DATA
    ws = wb.active
    ws.append(["date", "TOR14"])
    ws.append(["2019-01-31", 1])
    out = io.BytesIO()
    wb.save(out)
    assert _err(out.getvalue(), name="prices.xlsx", header_row=7).reason is Reason.BAD_OPTION
    assert _err(out.getvalue(), name="prices.xlsx", sheet=0, header_row=None, exclude_columns=("TOR14",)).reason is Reason.NO_VALUE_COLUMN
    assert read_table(out.getvalue(), name="prices.xlsx", options=ReadOptions(header_row=1)).report.cells_parsed == 2
    wb2 = openpyxl.Workbook()
    wb2.active.title = "Empty"
    wb2.create_sheet("Data").append(["x"])
    out2 = io.BytesIO()
    wb2.save(out2)
    assert _err(out2.getvalue(), name="prices.xlsx", sheet="Empty").reason is Reason.EMPTY_FILE


def test_csv_field_too_large() -> None:
    raw = b'date,TOR14\n2019-01-31,"' + b"1" * 200_000 + b'"\n'
    e = _err(raw)
    assert e.reason is Reason.TOO_LARGE and e.row is not None  # the cell limit, before the csv module's own


def test_unexpected_errors_are_wrapped(monkeypatch: pytest.MonkeyPatch) -> None:
    def boom(*a: object, **k: object) -> None:
        raise KeyError("bug")

    monkeypatch.setattr(files_mod, "tidy_grid", boom)
    e = _err(b"date,TOR14\n2019-01-31,1\n")
    assert e.reason is Reason.UNREADABLE and isinstance(e.__cause__, KeyError)

    def oom(*a: object, **k: object) -> None:
        raise MemoryError

    monkeypatch.setattr(files_mod, "tidy_grid", oom)
    assert _err(b"date,TOR14\n2019-01-31,1\n").reason is Reason.TOO_LARGE


def test_report_rendering() -> None:
    pf = read_table(b"Title\nDate,TOR14\n31/01/2019,n.a.\n28/02/2019,2\n", name="prices.csv")
    text = pf.report.to_text()
    assert "missing_marker" in text and "row 3" in text
    frame = pf.report.to_frame()
    assert frame.loc[0, "cells_total"] == 4 and frame.loc[0, "header_row"] == 2
    assert pf.report.count("nothing_here") == 0


@pytest.mark.parametrize(
    "raw,opts,words",
    [
        (b"when,QZA01\n2020-01-31,10\n", dict(date_column="asof"), "'Date column' (--date-column) names 'asof'"),
        (b"date,QZA01\n2020-01-31,10\n", dict(header_row=9), "'Header row' (--header-row) 9 is beyond"),
        (b"label,QZA01\nx,10\ny,11\n", dict(kind="prices"), "'Date column' (--date-column)"),
        (b"date,QZA01\n2020-01-31,10\n", dict(exclude_columns=("date", "QZA01")), "'Columns to leave out' (--exclude)"),
    ],
)
def test_intake_errors_name_the_choice_as_a_person_finds_it(raw: bytes, opts: dict, words: str) -> None:
    # Each message names a reading choice by its label on the Data page and its command-line flag (one table:
    # core.intake.options.READ_CHOICES), never by a field name such as date_column.
    err = _err(raw, **opts)
    text = str(err)
    assert words in text, text
    assert not any(f in text for f in ("date_column", "header_row", "exclude_columns", "value_column")), text
