"""Screen table: display columns, server-side filter/sort/page, and formula-safe exports."""

from __future__ import annotations

import io

import numpy as np
import openpyxl
import pandas as pd
import pytest

from valuesift.app.screen_table import (COLUMNS, NUMBER_FORMATS, apply_filter, apply_grid_filter, apply_grid_sort,
                                       apply_sort, display_frame, excel_format, grid_rows, neutralise, page,
                                       to_csv_bytes, to_xlsx_bytes)
from valuesift.core.errors import ConfigError


@pytest.fixture()
def frame(small_result) -> pd.DataFrame:  # type: ignore[no-untyped-def]
    return display_frame(small_result.screen)


def test_display_frame_has_every_column_and_all_rows(frame: pd.DataFrame, small_result) -> None:  # type: ignore[no-untyped-def]
    assert list(frame.columns) == [c for c, _, _ in COLUMNS]
    assert len(frame) == len(small_result.screen)
    assert frame["security"].tolist() == small_result.screen.index.astype(str).tolist()


def test_negative_earnings_read_not_meaningful(frame: pd.DataFrame) -> None:
    # QZX03 was built with negative EPS throughout (see conftest).
    row = frame[frame["security"] == "QZX03"]
    assert row["pe_note"].iloc[0] == "not meaningful"
    assert np.isnan(row["pe"].iloc[0])            # the number column stays a number (missing here)


def test_holdings_only_keeps_the_held_names(small_result) -> None:  # type: ignore[no-untyped-def]
    df = display_frame(small_result.screen, holdings_only=True)
    assert set(df["security"]) <= {f"QZX{i:02d}" for i in range(12)}
    assert len(df) > 0 and np.isfinite(df["holding_weight"]).all()


def test_filter_text_and_numbers_with_masks(frame: pd.DataFrame) -> None:
    ports = apply_filter(frame, "{sector} contains Ports")
    assert len(ports) > 0 and (ports["sector"] == "Ports").all()
    hi = apply_filter(frame, "{zscore} > 0.5 && {sector} icontains \"mills\"")
    assert (hi["zscore"] > 0.5).all() and (hi["sector"] == "Mills").all()
    # A filter is data, never code: this matches nothing and runs nothing.
    assert len(apply_filter(frame, "{sector} contains __import__('os').system('x')")) == 0
    assert len(apply_filter(frame, "{unknown} > 1")) == len(frame)


def test_sort_and_page(frame: pd.DataFrame) -> None:
    s = apply_sort(frame, [{"column_id": "zscore", "direction": "asc"}])
    z = s["zscore"].to_numpy(dtype=float)
    z = z[np.isfinite(z)]
    assert (np.diff(z) >= 0).all()
    rows, n = page(s, 1, 10)
    assert n == int(np.ceil(len(frame) / 10))
    assert [r["security"] for r in rows] == s["security"].iloc[10:20].tolist()
    assert all(r["id"] == r["security"] for r in rows)


@pytest.mark.parametrize("bad", ["=1+2", "+cmd", "-2+3", "@SUM(A1)", "\tx", "\rx"])
def test_formula_injection_is_neutralised(bad: str) -> None:
    # OWASP "CSV Injection": cells starting with = + - @ tab or CR are prefixed with a single quote.
    df = pd.DataFrame({"security": [bad, "PLAIN1"], "zscore": [-1.5, 2.0]})
    out = neutralise(df)
    assert out["security"].tolist() == ["'" + bad, "PLAIN1"]
    assert out["zscore"].tolist() == [-1.5, 2.0]          # numbers stay numbers
    assert df["security"].tolist() == [bad, "PLAIN1"]      # the caller's frame is not changed


def test_csv_and_xlsx_exports_are_formula_safe(frame: pd.DataFrame) -> None:
    df = frame.copy()
    df.loc[df.index[0], "flags"] = "=HYPERLINK(\"x\")"
    csv = pd.read_csv(io.BytesIO(to_csv_bytes(df)), keep_default_na=False)
    assert list(csv.columns) == [h for _, h, _ in COLUMNS]
    assert csv["Flags"].iloc[0] == "'=HYPERLINK(\"x\")"
    assert csv["Security"].tolist() == df["security"].tolist()
    wb = openpyxl.load_workbook(io.BytesIO(to_xlsx_bytes(df)))
    ws = wb["screen"]
    header = [c.value for c in ws[1]]
    col = header.index("Flags") + 1
    cell = ws.cell(row=2, column=col)
    assert cell.data_type == "s" and cell.value == "'=HYPERLINK(\"x\")"   # text, not a formula
    assert ws.max_row == len(df) + 1


def test_pe_sorts_as_a_number_not_as_text(frame: pd.DataFrame) -> None:
    # As text, "56.5" < "6.6" < "7.4"; as numbers the order is the reverse of that.
    s = apply_grid_sort(frame, [{"colId": "pe", "sort": "asc"}])
    pe = s["pe"].to_numpy(dtype=float)
    finite = pe[np.isfinite(pe)]
    assert len(finite) > 10 and (np.diff(finite) >= 0).all()
    assert not np.isfinite(pe[len(finite):]).any()          # missing values last
    assert frame["pe"].dtype.kind == "f"


def test_grid_filter_model_numbers_text_and_two_conditions(frame: pd.DataFrame) -> None:
    hi = apply_grid_filter(frame, {"zscore": {"filterType": "number", "type": "greaterThan", "filter": 0.5}})
    assert len(hi) > 0 and (hi["zscore"] > 0.5).all()
    assert len(hi) == int((frame["zscore"] > 0.5).sum())
    band = apply_grid_filter(frame, {"zscore": {"filterType": "number", "type": "inRange", "filter": -0.5,
                                                "filterTo": 0.5}})
    assert ((band["zscore"] >= -0.5) & (band["zscore"] <= 0.5)).all()
    ports = apply_grid_filter(frame, {"sector": {"filterType": "text", "type": "contains", "filter": "port"}})
    assert len(ports) > 0 and (ports["sector"] == "Ports").all()
    either = apply_grid_filter(frame, {"sector": {"filterType": "text", "operator": "OR", "conditions": [
        {"type": "equals", "filter": "ports"}, {"type": "equals", "filter": "mills"}]}})
    assert set(either["sector"]) == {"Ports", "Mills"}
    both = apply_grid_filter(frame, {"sector": {"filterType": "text", "type": "equals", "filter": "ports"},
                                     "zscore": {"filterType": "number", "type": "lessThan", "filter": -10}})
    assert len(both) == 0                                   # the page then says that no rows match
    # Data, never code; unknown columns and tests keep every row.
    assert len(apply_grid_filter(frame, {"sector": {"filterType": "text", "type": "contains",
                                                    "filter": "__import__('os')"}})) == 0
    assert len(apply_grid_filter(frame, {"nope": {"filterType": "number", "type": "lessThan", "filter": 1}})) == len(frame)
    with pytest.raises(ConfigError, match="characters long"):
        apply_grid_filter(frame, {"sector": {"filterType": "text", "type": "contains", "filter": "x" * 2000}})


def test_grid_rows_serve_one_block_of_the_sorted_filtered_frame(frame: pd.DataFrame) -> None:
    req = {"startRow": 10, "endRow": 20, "sortModel": [{"colId": "zscore", "sort": "desc"}], "filterModel": {}}
    shown, rows = grid_rows(frame, req)
    assert len(shown) == len(frame)
    assert [r["security"] for r in rows] == shown["security"].iloc[10:20].tolist()
    z = [r["zscore"] for r in rows if r["zscore"] is not None]
    assert z == sorted(z, reverse=True)


def test_xlsx_numbers_are_number_cells_with_number_formats(frame: pd.DataFrame) -> None:
    wb = openpyxl.load_workbook(io.BytesIO(to_xlsx_bytes(frame)))
    ws = wb["screen"]
    header = [c.value for c in ws[1]]
    heads = {cid: head for cid, head, _ in COLUMNS}
    for cid, (dec, pct) in NUMBER_FORMATS.items():
        col = header.index(heads[cid]) + 1
        cells = [ws.cell(row=r, column=col) for r in range(2, ws.max_row + 1)]
        filled = [c for c in cells if c.value is not None]
        assert filled, cid
        assert all(c.data_type == "n" and isinstance(c.value, (int, float)) for c in filled), cid
        assert all(c.number_format == excel_format(dec, pct) for c in filled), cid
    assert excel_format(2, True) == "#,##0.00%" and excel_format(0, False) == "#,##0"
