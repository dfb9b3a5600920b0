"""Writes the awkward-file corpus (run once; the files are kept beside this script).

Every file is small and written by hand below; tests/data/awkward/cases.json
lists the expected report figures or errors, counted by hand from these texts.
"""

from __future__ import annotations

import datetime as dt
import io
import pathlib
import zipfile

import numpy as np

HERE = pathlib.Path(__file__).parent

TEXT = {
    "preamble.csv": "Closing prices of the Maren exchange\nExported 2025-01-03\n\nDate,TOR14,VEL22\n"
                    "31/01/2019,10.50,20.00\n28/02/2019,11.00,\n31/03/2019,11.25,21.50\n",
    "decimal_comma.csv": "Date;TOR14;VEL22\n31.01.2019;1.234,50;12,5\n28.02.2019;1.240,00;13\n",
    "paren_negative.csv": "date,code,eps\n2019-01-31,TOR14,(1.25)\n2019-01-31,VEL22,2.50\n2019-02-28,TOR14,-0.75\n",
    "percent.csv": "date,code,signal\n2019-01-31,TOR14,12.5%\n2019-01-31,VEL22,-3%\n2019-02-28,TOR14, 7.25 %\n",
    "currency.csv": 'Date,TOR14,VEL22,KAM33\n2019-01-31,"$1,234.50",\u20ac12.30,12.5 EUR\n2019-02-28,$1.00,\u00a30.5,USD 7\n',
    "missing_spellings.csv": "date,TOR14\n2019-01-31,#N/A\n2019-02-28,N/A\n2019-03-31,NA\n2019-04-30,n.a.\n"
                             "2019-05-31,n.m.\n2019-06-30,NM\n2019-07-31,--\n2019-08-31,\u2014\n2019-09-30,null\n"
                             "2019-10-31,\n2019-11-30,10\n2019-12-31,\u2013\n",
    "ambiguous_dates.csv": "date,TOR14\n01/02/2019,10\n03/04/2019,11\n",
    "excel_serial.csv": "Date,TOR14\n43496,10\n43524,11\n",
    "mon_yyyy.csv": "Month,TOR14\nJan 2019,10\nFeb 2019,11\nMar 2019,12\n",
    "yyyy_mm.csv": "period,TOR14,VEL22\n2019-01,10,20\n2019-02,11,21\n",
    "duplicate_dates.csv": "date,TOR14,VEL22\n2019-01-31,10,20\n2019-02-28,11,21\n2019-02-28,11.5,\n2019-03-31,12,22\n",
    "duplicate_columns.csv": "date,TOR14,TOR14,VEL22\n2019-01-31,10,10.1,20\n2019-02-28,,11,21\n",
    "index_column.csv": 'Date,Maren All-Share,TOR14,VEL22\n2019-01-31,"1,000.00",10,20\n2019-02-28,"1,010.50",11,21\n',
    "header_only.csv": "date,TOR14\n",
    "empty.csv": "",
    "long_extra_columns.csv": "date,code,name,currency,close,volume\n2019-01-31,TOR14,Torvell Mining,MRN,10.5,1200\n"
                              "2019-01-31,VEL22,Velmora Foods,MRN,20,800\n2019-02-28,TOR14,Torvell Mining,MRN,11,1500\n",
    "sectors_unknown.csv": "code,sector\nTOR14,Mining\nVEL22,Food\nXAN77,Utilities\nYUL55,Banks\n",
    "holdings_not_one.csv": "code,weight\nTOR14,0.5\nVEL22,0.4\n",
    "holdings_percent.csv": "code,weight\nTOR14,60\nVEL22,40\n",
    "nonpositive_prices.csv": "date,TOR14,VEL22\n2019-01-31,10,-5\n2019-02-28,0,inf\n2019-03-31,1e308,12\n2019-04-30,abc,13\n",
    "ragged_rows.csv": "date,TOR14,VEL22\n2019-01-31,10,20\n2019-02-28,11\n2019-03-31,12,22,extra\n2019-04-30,13,23,,\n",
    "tab_mdy.tsv": "date\tTOR14\tVEL22\n01/31/2019\t10\t20\n02/28/2019\t11\t21\n",
    "no_header.csv": "2019-01-31,10,20\n2019-02-28,11,21\n",
    "data.csv": "a,b\nx,2\n",
    "ambiguous_values.csv": "date,code,open,high\n2019-01-31,TOR14,10,11\n2019-02-28,TOR14,10.5,11.5\n",
    "no_date.csv": "code,TOR14\nabc,1\ndef,2\n",
    "pe_ratio.csv": "date,code,pe_ratio\n2019-01-31,TOR14,12.5\n2019-01-31,VEL22,8\n",
    "bad_dates.csv": "date,TOR14\n2019-01-31,10\nnot a date,11\n,12\n2019-03-31,\n",
    "blank_security.csv": "date,code,price\n2019-01-31,TOR14,10\n2019-01-31,,11\n",
    "first_token.csv": "date,TOR14 (Torvell),VEL22 (Velmora)\n2019-01-31,10,20\n",
    "regex_ids.csv": "date,Torvell Mining [TOR14],Velmora Foods [VEL22]\n2019-01-31,10,20\n",
    "lower_codes.csv": "date,code,price\n2019-01-31,tor14,10\n2019-01-31, vel22 ,20\n",
    "not_a_zip.xlsx": "date,TOR14\n2019-01-31,10\n",
}


def _daily_stale() -> str:
    lines = ["date,TOR14,VEL22"]
    day = dt.date(2019, 1, 1)
    k = 0
    while day <= dt.date(2019, 3, 31):
        if day.weekday() < 5:
            vel = "" if dt.date(2019, 2, 9) <= day <= dt.date(2019, 2, 28) else f"{20 + k * 0.05:.2f}"
            lines.append(f"{day.isoformat()},{10 + k * 0.01:.2f},{vel}")
            k += 1
        day += dt.timedelta(days=1)
    return "\n".join(lines) + "\n"


def main() -> None:
    for name, text in TEXT.items():
        (HERE / name).write_bytes(text.encode("utf-8"))
    (HERE / "daily_stale.csv").write_bytes(_daily_stale().encode("utf-8"))
    (HERE / "bom_utf8.csv").write_bytes(b"\xef\xbb\xbf" + "date,TOR14\n2019-01-31,1\n2019-02-28,2\n".encode("utf-8"))
    (HERE / "utf16_bom.tsv").write_bytes("date\tcode\tprice\n2019-01-31\tTOR14\t10.5\n2019-01-31\tVEL22\t20\n2019-02-28\tTOR14\t11\n".encode("utf-16"))
    (HERE / "cp1252.csv").write_bytes("code,sector\nTOR14,Mat\u00e9riaux\nVEL22,T\u00e9l\u00e9coms\n".encode("cp1252"))
    rng = np.random.default_rng(7)
    (HERE / "garbage.csv").write_bytes(rng.integers(0, 256, 2048, dtype=np.uint8).tobytes())
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", compression=zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("[Content_Types].xml", "<Types/>")
        zf.writestr("xl/worksheets/sheet1.xml", b"0" * 8_000_000)
    (HERE / "bomb.xlsx").write_bytes(buf.getvalue())


if __name__ == "__main__":
    main()
