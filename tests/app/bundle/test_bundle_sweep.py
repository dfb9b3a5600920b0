"""A finished sweep goes into the bundle: heat map chart, report page, comparison table."""

from __future__ import annotations

import json
import zipfile
from pathlib import Path
from typing import Any

import pandas as pd
import pytest

from tests.app.bundle.conftest import CREATED


@pytest.fixture(scope="module")
def small_sweep(demo_panel: Any) -> Any:
    from valuesift.core.sweep import parse_grid, run_sweep

    grid = parse_grid({"sweep": {"name": "bundle-check"},
                       "study": {"horizons": [1, 3]},
                       "vary": {"signal": ["earnings_yield", "dividend_yield"], "quantiles": [3, 5]}},
                      source="inline grid")
    return run_sweep(demo_panel, grid)  # in-process: no cluster needed for this check


def test_bundle_includes_the_sweep(demo_result: Any, demo_panel: Any, small_sweep: Any, tmp_path: Path) -> None:
    from valuesift.app.bundle import write_bundle

    paths = write_bundle(demo_result, demo_panel, None, tmp_path / "b", study_name="with sweep",
                         created=CREATED, include=["chart:ic_by_horizon", "table:ic_by_date"],
                         sweep=small_sweep)
    assert "charts/sweep_heatmap.html" in paths.files
    assert "tables/sweep_comparison.csv" in paths.files
    if paths.images_rendered:
        assert (tmp_path / "b" / "charts" / "sweep_heatmap.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    table = pd.read_csv(tmp_path / "b" / "tables" / "sweep_comparison.csv")
    assert len(table) == len(small_sweep.table) == 4 * 2  # 4 configurations x 2 horizons
    assert {"ic_p_bh", "ic_p_bonferroni"} <= set(table.columns)
    manifest = json.loads((tmp_path / "b" / "manifest.json").read_text("utf-8"))
    assert "sweep_heatmap" in manifest["bundle"]["charts"]
    with zipfile.ZipFile(paths.zip) as z:
        assert any(n.endswith("tables/sweep_comparison.csv") for n in z.namelist())
    readme = (tmp_path / "b" / "README.txt").read_text("utf-8")
    assert "multiple-testing" in readme


def test_sweep_reading_comes_from_the_numbers(small_sweep: Any) -> None:
    from valuesift.app.bundle.text import sweep_reading

    lines = sweep_reading(small_sweep)
    assert len(lines) == 2
    assert "4 study configurations were tried" in lines[0]
    best = small_sweep.table.loc[small_sweep.table["ic_t_bh"].abs().idxmax()]
    assert f"{best['ic_t_bh']:.2f}" in lines[1]
