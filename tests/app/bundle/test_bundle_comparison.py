"""A comparison of signals inside the study's committee bundle: charts, tables, report pages and slides."""

from __future__ import annotations

import subprocess
from dataclasses import replace
from datetime import datetime
from pathlib import Path
from typing import Any

import pandas as pd
import pytest

from valuesift.app.bundle import write_bundle
from valuesift.app.bundle.compare_bundle import compare_tables
from valuesift.core.compare import compare_results
from valuesift.core.study import run_study


@pytest.fixture(scope="module")
def with_comparison(demo_result: Any, demo_panel: Any, created: datetime,
                    tmp_path_factory: pytest.TempPathFactory) -> Any:
    cfg = demo_result.config
    results = {"earnings_yield": demo_result,
               "dividend_yield": run_study(demo_panel, replace(cfg, signal="dividend_yield"))}
    cmp = compare_results(demo_panel, results)
    out = tmp_path_factory.mktemp("cmp-bundle")
    paths = write_bundle(demo_result, demo_panel, None, out, study_name="with comparison", created=created,
                         include=["chart:ic_by_horizon", "table:summary"], comparison=cmp)
    return paths, cmp


def test_the_bundle_holds_the_comparison_tables_as_compare_writes_them(with_comparison: Any) -> None:
    paths, cmp = with_comparison
    tables = compare_tables(cmp)
    for name, key in (("comparison", "compare"), ("signal_correlation", "signal_correlation"),
                      ("joint_fm", "joint_fm")):
        assert f"tables/{name}.csv" in paths.files
        got = pd.read_csv(paths.folder / "tables" / f"{name}.csv")
        assert list(got.columns) == list(tables[key].columns)
        assert len(got) == len(tables[key])
    got = pd.read_csv(paths.folder / "tables" / "comparison.csv")
    want = tables["compare"]
    pd.testing.assert_series_equal(got["mean_ic"], want["mean_ic"].reset_index(drop=True), check_names=False,
                                   rtol=1e-12)
    assert "tables/summary.csv" in paths.files                      # the chosen study tables stay


def test_the_report_and_slides_carry_the_comparison_pages(with_comparison: Any) -> None:
    paths, cmp = with_comparison
    for key in ("compare_ic", "compare_correlation"):
        assert f"charts/{key}.html" in paths.files
    if paths.images_rendered:
        assert "charts/compare_correlation.png" in paths.files and "charts/compare_ic.svg" in paths.files
    text = subprocess.run(["pdftotext", "-layout", str(paths.folder / "report.pdf"), "-"], capture_output=True,
                          text=True, check=True).stdout
    assert "Comparison: mean rank IC of each signal" in text
    assert "Comparison: how alike the signals rank the names" in text
    assert "The most alike pair is" in text              # the reading is sentences, not characters
    from pptx import Presentation

    deck = Presentation(str(paths.folder / "slides.pptx"))
    titles = [sh.text_frame.text for s in deck.slides for sh in s.shapes if sh.has_text_frame]
    assert any("Comparison: how alike the signals rank the names" in t for t in titles)
    import json
    manifest = json.loads((paths.folder / "manifest.json").read_text())
    assert {"compare_ic", "compare_correlation"} <= set(manifest["bundle"]["charts"])
    assert {"comparison", "signal_correlation", "joint_fm"} <= set(manifest["bundle"]["tables"])
    readme = (paths.folder / "README.txt").read_text()
    assert "tables/joint_fm.csv" in readme and "Fama-MacBeth regression with all compared signals" in readme
