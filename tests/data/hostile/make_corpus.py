"""Writes the hostile-file corpus: files built to break a reader (run at test time into a temporary folder).

``python tests/data/hostile/make_corpus.py OUTDIR`` writes every case; the
tests call :func:`write_corpus` themselves, so nothing large is committed.
``cases.json`` beside this script lists each case's expected outcome: an
IntakeError with a reason code (and row/column where there is one), or a
documented handling (the figures the report must show).  Every expectation
was worked out by hand from the bytes written below; the invented codes
(QZ...) belong to no real market.
"""

from __future__ import annotations

import io
import pathlib
import sys
import zipfile

import numpy as np

__all__ = ["write_corpus", "xlsx_bytes", "BOMB_MAX_BYTES", "WIDE_COLUMNS"]

HERE = pathlib.Path(__file__).parent
#: max_bytes the bomb case is read with (its members unpack to far more than 4x this)
BOMB_MAX_BYTES = 1024 * 1024
WIDE_COLUMNS = 100_000

_PRICES = "date,QZA01,QZB02\n2020-01-31,10,20\n2020-02-29,11,21\n2020-03-31,12,22\n2020-04-30,13,23\n"


def _sheet_xml(rows: list[list[str]], doctype: str = "", entity_cell: str | None = None) -> bytes:
    body = []
    for i, r in enumerate(rows, start=1):
        cells = []
        for j, v in enumerate(r):
            ref = f"{chr(65 + j)}{i}"
            try:
                float(v)
                cells.append(f'<c r="{ref}"><v>{v}</v></c>')
            except ValueError:
                cells.append(f'<c r="{ref}" t="inlineStr"><is><t>{v}</t></is></c>')
        body.append(f'<row r="{i}">{"".join(cells)}</row>')
    if entity_cell is not None:
        n = len(rows) + 1
        body.append(f'<row r="{n}"><c r="A{n}" t="inlineStr"><is><t>{entity_cell}</t></is></c></row>')
    return (f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>{doctype}'
            '<worksheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">'
            f'<sheetData>{"".join(body)}</sheetData></worksheet>').encode()


def xlsx_bytes(rows: list[list[str]], *, doctype: str = "", entity_cell: str | None = None,
               extra: dict[str, bytes] | None = None) -> bytes:
    """A minimal hand-built workbook (one sheet of inline strings and numbers), ECMA-376 part names."""
    parts = {
        "[Content_Types].xml": (b'<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
                                b'<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
                                b'<Default Extension="xml" ContentType="application/xml"/>'
                                b'<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>'
                                b'<Override PartName="/xl/worksheets/sheet1.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>'
                                b'</Types>'),
        "_rels/.rels": (b'<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
                        b'<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/>'
                        b'</Relationships>'),
        "xl/workbook.xml": (b'<?xml version="1.0" encoding="UTF-8"?><workbook xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" '
                            b'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships">'
                            b'<sheets><sheet name="data" sheetId="1" r:id="rId1"/></sheets></workbook>'),
        "xl/_rels/workbook.xml.rels": (b'<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">'
                                       b'<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet" Target="worksheets/sheet1.xml"/>'
                                       b'</Relationships>'),
        "xl/worksheets/sheet1.xml": _sheet_xml(rows, doctype, entity_cell),
    }
    parts.update(extra or {})
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        for name, data in parts.items():
            zf.writestr(name, data)
    return buf.getvalue()


def _bomb() -> bytes:
    """A workbook whose extra member is 64 MiB of zeros (deflates to about 64 KiB)."""
    zeros = b"\0" * (64 * 1024 * 1024)
    return xlsx_bytes([["date", "QZA01"], ["2020-01-31", "10"]], extra={"xl/media/padding.bin": zeros})


_LAUGHS = ('<!DOCTYPE lolz [<!ENTITY lol "lol">'
           + "".join(f'<!ENTITY lol{i} "{("&lol" + (str(i - 1) if i > 1 else "") + ";") * 10}">' for i in range(1, 10))
           + "]>")
_XXE = '<!DOCTYPE x [<!ENTITY secret SYSTEM "file:///etc/hostname">]>'


def _wide() -> bytes:
    head = "date," + ",".join(f"QW{i:06d}" for i in range(WIDE_COLUMNS))
    row1 = "2020-01-31," + ",".join("10" for _ in range(WIDE_COLUMNS))
    row2 = "2020-02-29," + ",".join("11" for _ in range(WIDE_COLUMNS))
    return (head + "\n" + row1 + "\n" + row2 + "\n").encode()


def _garbage(seed: int, n: int) -> bytes:
    return np.random.default_rng(seed).integers(0, 256, size=n, dtype=np.uint8).tobytes()


def _files() -> dict[str, bytes]:
    long_id = "QZ" + "L" * 5000
    f: dict[str, bytes] = {
        "empty.csv": b"",
        "whitespace_only.csv": b"  \n\n \t \r\n\n",
        "header_only.csv": b"date,QZA01,QZB02\n",
        "only_delimiters.csv": b",,,\n,,,\n,,,\n",
        "binary_garbage.csv": _garbage(11, 4096),
        "png_named_csv.csv": b"\x89PNG\r\n\x1a\n" + _garbage(12, 2000),
        "text_named_xlsx.xlsx": _PRICES.encode(),
        "truncated_zip.xlsx": xlsx_bytes([["date", "QZA01"], ["2020-01-31", "10"]])[:300],
        "zip_without_workbook.xlsx": _zip_plain(),
        "decompression_bomb.xlsx": _bomb(),
        "entity_expansion.xlsx": xlsx_bytes([["date", "QZA01"], ["2020-01-31", "10"], ["2020-02-29", "11"]],
                                            doctype=_LAUGHS, entity_cell="&lol9;"),
        "external_entity.xlsx": xlsx_bytes([["date", "QZA01"], ["2020-01-31", "10"], ["2020-02-29", "11"]],
                                           doctype=_XXE, entity_cell="&secret;"),
        "over_size_limit.csv": (_PRICES + "".join(f"2021-{m:02d}-28,1{m},2{m}\n" for m in range(1, 13))).encode(),
        "wide_100k_columns.csv": _wide(),
        "nul_bytes.csv": b"date,QZA01\n2020-01-31,1\x000\n2020-02-29,11\n\x00\x00\x00\n2020-03-31,12\n",
        "mixed_encodings.csv": "date,QZA01,QZB02\n".encode() + "2020-01-31,10,20\n".encode()
                               + "sector note caf\u00e9,1,2\n".encode("utf-8") + "sector note caf\u00e9,3,4\n".encode("cp1252")
                               + b"2020-02-29,11,21\n",
        "utf16_no_bom.csv": _PRICES.encode("utf-16-le"),
        "duplicate_names.csv": b"date,QZA01,QZB02,QZA01\n2020-01-31,10,20,10\n2020-02-29,11,21,11\n",
        "all_missing.csv": b"date,QZA01,QZB02\n2020-01-31,,n.a.\n2020-02-29,#N/A,\n2020-03-31,,\n",
        "one_date.csv": b"date,QZA01,QZB02\n2020-01-31,10,20\n",
        "one_security.csv": b"date,QZA01\n2020-01-31,10\n2020-02-29,11\n2020-03-31,12\n",
        "dates_out_of_order.csv": b"date,QZA01\n2020-03-31,12\n2020-01-31,10\n2020-02-29,11\n",
        "dates_repeated.csv": b"date,QZA01\n2020-01-31,10\n2020-01-31,10.5\n2020-02-29,11\n",
        "dates_in_future.csv": b"date,QZA01\n2020-01-31,10\n2199-12-31,11\n",
        "dates_far_past.csv": b"date,QZA01\n0001-01-31,10\n2020-01-31,11\n",
        "negative_prices.csv": b"date,QZA01,QZB02\n2020-01-31,-10,20\n2020-02-29,11,-0.01\n",
        "zero_prices.csv": b"date,QZA01,QZB02\n2020-01-31,0,20\n2020-02-29,11,0.0\n",
        "infinite_prices.csv": b"date,QZA01,QZB02\n2020-01-31,inf,20\n2020-02-29,11,-Infinity\n2020-03-31,1e400,22\n",
        "huge_1e308.csv": b"date,QZA01,QZB02\n2020-01-31,1e308,20\n2020-02-29,1.7976931348623157e308,21\n",
        "nan_text.csv": b"date,QZA01\n2020-01-31,NaN\n2020-02-29,nan\n2020-03-31,12\n",
        "eps_text_units.csv": "date,code,eps\n2020-01-31,QZA01,1.25 MRN per share\n2020-01-31,QZB02,2.1m\n"
                              "2020-02-29,QZA01,about 3\n2020-02-29,QZB02,0.50\n".encode(),
        "ids_path_separators.csv": b"date,../../etc/passwd,..\\..\\boot.ini,/abs/QZC03\n2020-01-31,10,20,30\n2020-02-29,11,21,31\n",
        "ids_markup.csv": b'date,code,price\n2020-01-31,<script>alert(1)</script>,10\n2020-01-31,<b>QZB02</b>,20\n'
                          b'2020-01-31,[link](javascript:x),30\n2020-02-29,<script>alert(1)</script>,11\n',
        "ids_formula.csv": b'date,code,price\n2020-01-31,"=HYPERLINK(""http://127.0.0.1/x"",""go"")",10\n'
                           b"2020-01-31,+QZB02,20\n2020-01-31,-QZC03,30\n2020-01-31,@SUM(A1),40\n",
        "ids_extremely_long.csv": f"date,code,price\n2020-01-31,{long_id},10\n2020-01-31,QZB02,20\n".encode(),
        "ids_invisible.csv": "date,QZ\u200bA01,QZ\u202eB02\n2020-01-31,10,20\n".encode(),
        "unterminated_quote.csv": b'date,QZA01\n2020-01-31,"10\n2020-02-29,11\n',
        "huge_cell.csv": b"date,QZA01\n2020-01-31," + b"9" * 300_000 + b"\n2020-02-29,11\n",
        "no_value_column.csv": b"date\n2020-01-31\n2020-02-29\n",
        "dates_unparseable.csv": b"when,QZA01\nsoon,10\nlater,11\n",
        "xlsx_formula_ids.xlsx": xlsx_bytes([["date", "code", "price"], ["2020-01-31", "=cmd|' /C calc'!A0", "10"],
                                              ["2020-01-31", "QZB02", "20"]]),
        "xlsx_empty_sheet.xlsx": xlsx_bytes([]),
        "parquet_truncated.parquet": b"PAR1" + _garbage(13, 500),
        # panel-level cases: read with the price file prices_base.csv
        "prices_base.csv": _PRICES.encode(),
        "dividends_outside_history.csv": b"code,ex_date,amount\nQZA01,2019-06-15,0.5\nQZA01,2020-02-14,0.4\nQZB02,2030-06-15,0.3\n",
        "sectors_unknown_names.csv": b"code,sector\nQZA01,Mills\nQZB02,Ports\nQZX98,Farms\nQZX99,Looms\n",
        "holdings_not_one.csv": b"code,weight\nQZA01,0.3\nQZB02,0.3\n",
        "holdings_unknown_and_negative.csv": b"code,weight\nQZA01,0.7\nQZX99,0.5\nQZB02,-0.2\n",
    }
    return f


def _zip_plain() -> bytes:
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        zf.writestr("readme.txt", "not a workbook")
    return buf.getvalue()


def write_corpus(out: str | pathlib.Path) -> pathlib.Path:
    """Write every hostile file into ``out`` (created); returns the folder."""
    out = pathlib.Path(out)
    out.mkdir(parents=True, exist_ok=True)
    for name, data in _files().items():
        (out / name).write_bytes(data)
    return out


if __name__ == "__main__":  # pragma: no cover
    print(write_corpus(sys.argv[1] if len(sys.argv) > 1 else HERE / "out"))
