"""The demo bundle: every listed file exists, is valid, reads back equal to the result, and the manifest holds."""

from __future__ import annotations

import hashlib
import io
import json
import re
import zipfile
from typing import Any
from xml.etree import ElementTree

import numpy as np
import pandas as pd
import pytest

from valuesift.app.bundle import CHART_KEYS, TABLE_KEYS, bundle_name, find_browser
from valuesift.app.bundle.charts import plotly_js_path
from valuesift.app.bundle.tables import SETTINGS_SHEET, result_tables
from valuesift.app.words import SIGNAL_WORDS
from valuesift.core.settings import SETTING_BY_NAME, SETTINGS, describe_value
from valuesift.core.reporting.summary import ic_by_date_frame, summary_dict

needs_browser = pytest.mark.skipif(find_browser() is None, reason="no Chrome/Chromium: images are not rendered "
                                                                  "(the no-browser path is tested separately)")


def _sha(b: bytes) -> str:
    return hashlib.sha256(b).hexdigest()


@pytest.fixture(scope="module")
def zipped(built: Any) -> dict[str, bytes]:
    paths, _ = built
    with zipfile.ZipFile(paths.zip) as z:
        assert z.testzip() is None
        return {n: z.read(n) for n in z.namelist()}


def _root(paths: Any) -> str:
    return paths.zip.stem


def test_zip_name_is_safe_and_names_the_study(built: Any, demo_result: Any) -> None:
    paths, _ = built
    assert re.fullmatch(r"[A-Za-z0-9._-]+\.zip", paths.zip.name)
    assert paths.zip.name == "Committee-demo_earnings_yield_all_2024-12-31.zip"
    odd = bundle_name("Q1 / board: 'value' <test> ünïcode", demo_result)
    assert re.fullmatch(r"[A-Za-z0-9._-]+", odd) and odd.startswith("Q1-board-value-test")


def test_zip_holds_exactly_the_listed_files_under_one_folder(built: Any, zipped: dict[str, bytes]) -> None:
    paths, _ = built
    root = _root(paths)
    assert sorted(zipped) == sorted(f"{root}/{f}" for f in paths.files)
    for rel in paths.files:
        assert zipped[f"{root}/{rel}"] == (paths.folder / rel).read_bytes(), rel
    for must in ("report.pdf", "manifest.json", "README.txt", "summary.json", "tables/ic_by_date.csv",
                 "tables/tables.xlsx", "charts/plotly.min.js"):
        assert must in paths.files


def test_manifest_hashes_every_other_file_and_records_the_study(built: Any, zipped: dict[str, bytes],
                                                                demo_result: Any, demo_panel: Any) -> None:
    paths, _ = built
    root = _root(paths)
    m = json.loads(zipped[f"{root}/manifest.json"])
    listed = {f["path"]: f for f in m["files"]}
    assert set(listed) == set(paths.files) - {"manifest.json"}
    for rel, f in listed.items():
        body = zipped[f"{root}/{rel}"]
        assert f["sha256"] == _sha(body) and f["bytes"] == len(body), rel
    from valuesift import core

    assert m["tool_version"] == core.__version__
    assert re.fullmatch(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ", m["created_utc"])
    assert m["configuration"] == demo_result.config.to_dict()
    for key in ("python", "pandas", "numpy", "statsmodels", "plotly"):
        assert m["software"][key]
    by_name = {s["name"]: s for s in demo_panel.sources}
    assert {i["name"] for i in m["inputs"]} == set(by_name)
    for i in m["inputs"]:
        src = by_name[i["name"]]
        assert (i["size"], i["sha256"], i["rows"], i["securities"]) == (src["size"], src["sha256"], src["rows"],
                                                                      src["securities"])
    readme = zipped[f"{root}/README.txt"].decode("utf-8")
    assert all(f in readme for f in paths.files)
    assert "not investment advice" in readme


@needs_browser
def test_images_are_valid_png_at_slide_size_and_svg(built: Any, zipped: dict[str, bytes]) -> None:
    from PIL import Image

    paths, _ = built
    root = _root(paths)
    assert paths.images_rendered and paths.note is None
    for key in CHART_KEYS:
        png = zipped[f"{root}/charts/{key}.png"]
        assert png[:8] == b"\x89PNG\r\n\x1a\n"
        im = Image.open(io.BytesIO(png))
        # 16:9 slide at 2x: 1280 x 720 layout pixels rendered at scale 2.
        assert im.size == (2560, 1440), key
        grey = np.asarray(im.convert("L"), dtype=float)
        assert (grey < 200).mean() > 0.005, f"{key}.png looks blank"
        svg = zipped[f"{root}/charts/{key}.svg"]
        tree = ElementTree.fromstring(svg)
        assert tree.tag.endswith("svg"), key


def test_html_charts_open_offline_with_the_shared_plotly(built: Any, zipped: dict[str, bytes]) -> None:
    paths, _ = built
    root = _root(paths)
    assert zipped[f"{root}/charts/plotly.min.js"] == plotly_js_path().read_bytes()
    for key in CHART_KEYS:
        html = zipped[f"{root}/charts/{key}.html"].decode("utf-8")
        srcs = re.findall(r"<script[^>]*\bsrc=\"([^\"]+)\"", html)
        assert srcs == ["plotly.min.js"], key             # one shared copy, by relative path
        assert not re.search(r"<(script|link)[^>]*(src|href)=\"(https?:)?//", html), key
        assert "Plotly.newPlot" in html


def test_pdf_header(built: Any, zipped: dict[str, bytes]) -> None:
    paths, _ = built
    pdf = zipped[f"{_root(paths)}/report.pdf"]
    assert pdf.startswith(b"%PDF-") and pdf.rstrip().endswith(b"%%EOF")
    assert paths.pages >= 6


def test_csv_tables_read_back_equal_to_the_result(built: Any, demo_result: Any, demo_panel: Any) -> None:
    paths, _ = built
    folder = paths.folder / "tables"
    # ic_by_date.csv exactly as the study command writes it (core.study.ic_by_date_frame).
    ic = pd.read_csv(folder / "ic_by_date.csv")
    pd.testing.assert_frame_equal(ic, ic_by_date_frame(demo_result).astype({"date": ic["date"].dtype}),
                                  check_exact=True)
    expected = result_tables(demo_result, demo_panel)
    assert set(expected) == set(TABLE_KEYS)
    for key in TABLE_KEYS:
        got = pd.read_csv(folder / f"{key}.csv", keep_default_na=False, na_values=[""])
        want = expected[key]
        assert list(got.columns) == [str(c) for c in want.columns], key
        assert len(got) == len(want), key
        for c in want.columns:
            w = want[c]
            if pd.api.types.is_numeric_dtype(w) and not pd.api.types.is_bool_dtype(w):
                np.testing.assert_array_equal(got[c].to_numpy(dtype=float), w.to_numpy(dtype=float), err_msg=f"{key}.{c}")


def test_xlsx_settings_sheet_holds_every_setting_in_words(built: Any, demo_result: Any) -> None:
    paths, _ = built
    sheet = pd.read_excel(paths.folder / "tables" / "tables.xlsx", sheet_name=SETTINGS_SHEET, engine="openpyxl",
                          dtype=str, keep_default_na=False)
    assert list(sheet.columns) == ["Section", "Setting", "Value"]
    # one row per row of the settings table, by its label, with the value as describe_value words it
    assert sheet["Setting"].tolist() == [s.label for s in SETTINGS]
    words = dict(zip(sheet["Setting"], sheet["Value"]))
    for s in SETTINGS:
        if s.name not in ("signal", "composite_of"):
            assert words[s.label] == describe_value(s, getattr(demo_result.config, s.name)), s.name
    assert words[SETTING_BY_NAME["signal"].label] == SIGNAL_WORDS[demo_result.config.signal]
    codes = {"overlap_or_auto", "mean_std", "set_aside", "winsorise", "hac_lag_rule", "earnings_yield"}
    assert not codes & set(sheet["Value"]) and not codes & set(sheet["Setting"])


def test_xlsx_sheets_read_back_equal_to_the_csv(built: Any) -> None:
    paths, _ = built
    book = pd.read_excel(paths.folder / "tables" / "tables.xlsx", sheet_name=None, engine="openpyxl")
    assert set(book) == set(TABLE_KEYS) | {SETTINGS_SHEET}
    assert list(book)[0] == SETTINGS_SHEET
    book.pop(SETTINGS_SHEET)
    for key, sheet in book.items():
        csv = pd.read_csv(paths.folder / "tables" / f"{key}.csv")
        assert list(sheet.columns) == list(csv.columns), key
        assert len(sheet) == len(csv), key
        for c in csv.columns:
            if pd.api.types.is_float_dtype(csv[c]) or pd.api.types.is_integer_dtype(csv[c]):
                np.testing.assert_allclose(sheet[c].to_numpy(dtype=float), csv[c].to_numpy(dtype=float),
                                           rtol=1e-15, atol=0, equal_nan=True, err_msg=f"{key}.{c}")


def test_summary_json_equals_the_study_summary(built: Any, demo_result: Any) -> None:
    paths, _ = built
    got = json.loads((paths.folder / "summary.json").read_text(encoding="utf-8"))
    want = json.loads(json.dumps(summary_dict(demo_result), allow_nan=False))
    for key, value in want.items():
        assert got[key] == value, key
    assert got["study_name"] == "Committee demo"


def test_progress_runs_from_start_to_done(built: Any) -> None:
    _, stages = built
    fracs = [f for _, f in stages]
    assert fracs[-1] == 1.0 and stages[-1][0] == "done"
    assert all(0.0 <= f <= 1.0 for f in fracs)
    assert fracs == sorted(fracs)


def test_bundle_size_stays_under_20_mb(built: Any) -> None:
    paths, _ = built
    assert paths.zip.stat().st_size < 20 * 1024 * 1024


def test_text_cells_are_neutralised_and_numbers_stay_numbers(tmp_path: Any) -> None:
    from valuesift.app.bundle.tables import write_csv, xlsx_bytes

    # OWASP "CSV Injection": prefix ' to cells beginning with =, +, -, @, tab or carriage return.
    df = pd.DataFrame({"security": ["=HYPERLINK(1)", "+SUM(A1)", "-2+3", "@cmd", "\tx", "\rx", "plain"],
                       "value": [-3.5, 1.0, -2.0, 0.0, 4.0, 5.0, 6.0]})
    write_csv(df, tmp_path / "t.csv")
    back = pd.read_csv(tmp_path / "t.csv", keep_default_na=False)
    assert back["security"].tolist()[:4] == ["'=HYPERLINK(1)", "'+SUM(A1)", "'-2+3", "'@cmd"]
    assert back["security"].tolist()[-1] == "plain"
    assert back["value"].tolist() == df["value"].tolist()          # numeric cells keep their sign, unquoted
    import openpyxl

    book = openpyxl.load_workbook(io.BytesIO(xlsx_bytes({"t": df}, stamp="2024-12-31")))
    ws = book["t"]
    assert ws.cell(row=2, column=1).value == "'=HYPERLINK(1)" and ws.cell(row=2, column=1).data_type == "s"
    assert ws.cell(row=2, column=2).value == -3.5 and ws.cell(row=2, column=2).data_type == "n"
    # fixed document dates and zip entry times: the same tables give the same bytes
    assert xlsx_bytes({"t": df}, stamp="2024-12-31") == xlsx_bytes({"t": df}, stamp="2024-12-31")


def test_ic_t_in_the_tables_matches_statsmodels_hac(built: Any) -> None:
    import statsmodels.api as sm

    paths, _ = built
    ic = pd.read_csv(paths.folder / "tables" / "ic_by_date.csv")
    summ = pd.read_csv(paths.folder / "tables" / "ic_summary.csv").set_index("horizon")
    for h, row in summ.iterrows():
        x = ic.loc[ic["horizon"] == h, "rank_ic"].dropna().to_numpy()
        # Outside check: statsmodels OLS on a constant with a HAC covariance at the reported lag count: the
        # uniform kernel (Hansen & Hodrick 1980) for h > 1, Bartlett (Newey & West 1987) for h = 1
        # (shared/REFERENCE_CHECKS.md, cases 5 and 17).
        kernel = "uniform" if h > 1 else "bartlett"
        fit = sm.OLS(x, np.ones_like(x)).fit(cov_type="HAC", cov_kwds={"maxlags": int(row["hac_lags"]),
                                                                      "kernel": kernel, "use_correction": False})
        assert np.isclose(fit.tvalues[0], row["t_hac"], rtol=1e-9), h
        assert np.isclose(x.mean(), row["mean_ic"], atol=1e-12), h
