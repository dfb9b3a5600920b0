"""`valuesift study ... --out DIR` writes the same bundle, unzipped in DIR and as a ZIP."""

from __future__ import annotations

import json
import zipfile
from pathlib import Path

import pandas as pd
import pytest

from valuesift.app.cli import main

from tests.app.cli.test_cli import DEMO_ARGS as _DEMO_FILES

DEMO_ARGS = [*_DEMO_FILES, "--horizons", "1,3,12", "--quiet"]


def test_study_command_writes_the_bundle_beside_summary(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "out"
    assert main(["study", *DEMO_ARGS, "--name", "board q3", "--note", "From the command line.",
                 "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    zips = list(out.glob("*.zip"))
    assert [z.name for z in zips] == ["board-q3_earnings_yield_all_2024-12-31.zip"]
    assert "committee bundle" in printed
    manifest = json.loads((out / "manifest.json").read_text(encoding="utf-8"))
    assert manifest["study_name"] == "board q3" and manifest["note"] == "From the command line."
    assert {i["name"] for i in manifest["inputs"]} == {"prices.csv", "earnings.csv", "dividends.csv", "sectors.csv",
                                                      "holdings.csv", "benchmark.csv"}
    with zipfile.ZipFile(zips[0]) as z:
        root = zips[0].stem
        assert json.loads(z.read(f"{root}/summary.json")) == json.loads((out / "summary.json").read_text("utf-8"))
        ic = pd.read_csv(z.open(f"{root}/tables/ic_by_date.csv"))
    assert list(ic.columns) == ["date", "horizon", "rank_ic", "pearson_ic", "breadth"]
    assert (out / "report.pdf").read_bytes().startswith(b"%PDF-")


def test_study_command_without_bundle(tmp_path: Path) -> None:
    assert main(["study", *DEMO_ARGS, "--no-bundle", "--out", str(tmp_path)]) == 0
    assert (tmp_path / "summary.json").exists() and (tmp_path / "tables" / "ic_by_date.csv").exists()
    assert not (tmp_path / "report.pdf").exists() and not list(tmp_path.glob("*.zip"))
