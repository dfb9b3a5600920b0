"""``valuesift sweep`` end to end through app.cli.main on the invented demo files (local cluster)."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pandas as pd
import pytest

from valuesift.app.cli import main

pytest.importorskip("distributed", reason="the cluster extra (dask, distributed) is not installed")

GRID = """
[sweep]
name = "tiny"

[study]
min_breadth = 10

[vary]
signal = ["earnings_yield", "dividend_yield"]
universe = ["all", "No Such Sector"]
horizons = [1, 3]
"""


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Path:
    from valuesift.core.demo import write_demo

    out = tmp_path_factory.mktemp("demo")
    write_demo(out)
    return out


def _args(demo: Path, grid: Path, out: Path) -> list[str]:
    return ["sweep", "--grid", str(grid), "--out", str(out), "--in-process", "--workers", "2",
            "--prices", str(demo / "prices.csv"), "--earnings", str(demo / "earnings.csv"),
            "--dividends", str(demo / "dividends.csv"), "--sectors", str(demo / "sectors.csv"),
            "--exclude", "Maren All-Share", "--confirm-split", "LUD24"]


def test_sweep_command_writes_table_chart_and_reuses_on_rerun(demo: Path, tmp_path: Path,
                                                               capsys: pytest.CaptureFixture[str]) -> None:
    grid = tmp_path / "grid.toml"
    grid.write_text(GRID, encoding="utf-8")
    out = tmp_path / "sweep"
    assert main(_args(demo, grid, out)) == 0
    cap = capsys.readouterr()
    assert "4 study configurations were tried, each at 2 horizon(s): 8 signal tests" in cap.out
    assert "Computed 4 configuration(s), reused 0" in cap.out
    assert "4/4 points" in cap.err                      # the progress bar reached the end
    for name in ("comparison.csv", "comparison.parquet", "sweep.json", "heatmap.html"):
        assert (out / name).is_file(), name
    assert "plotly" in (out / "heatmap.html").read_text(encoding="utf-8")[:4_000_000].lower()
    csv, pq = pd.read_csv(out / "comparison.csv"), pd.read_parquet(out / "comparison.parquet")
    assert len(csv) == len(pq) == 8 and list(csv.columns) == list(pq.columns)
    failed = pq[pq["status"] == "failed"]
    assert set(failed["universe"]) == {"No Such Sector"} and len(failed) == 4
    assert (pq[pq["status"] == "ok"]["ic_p_bh"].notna()).all()
    # PNG when a browser is found, otherwise a note saying the chart is HTML only
    assert (out / "heatmap.png").is_file() or "HTML only" in cap.out
    # a second run reuses the two finished points and tries the two failures again
    assert main(_args(demo, grid, out)) == 0
    assert "Computed 2 configuration(s), reused 2" in capsys.readouterr().out


def test_bad_grid_exits_2_with_the_dimension_named(demo: Path, tmp_path: Path,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    grid = tmp_path / "grid.toml"
    grid.write_text('[vary]\nflavour = ["sweet"]\n', encoding="utf-8")
    assert main(_args(demo, grid, tmp_path / "o")) == 2
    err = capsys.readouterr().err
    assert "'flavour'" in err and "unknown dimension" in err and "Traceback" not in err


def test_unreachable_scheduler_is_a_plain_error(demo: Path, tmp_path: Path, capsys: pytest.CaptureFixture[str],
                                                monkeypatch: pytest.MonkeyPatch) -> None:
    import distributed

    def refuse(*_a: Any, **_k: Any) -> Any:
        raise OSError("Timed out trying to connect")

    monkeypatch.setattr(distributed, "Client", refuse)
    grid = tmp_path / "grid.toml"
    grid.write_text(GRID, encoding="utf-8")
    args = _args(demo, grid, tmp_path / "o") + ["--scheduler", "tcp://127.0.0.1:9"]
    assert main(args) == 2
    assert "No Dask scheduler answered" in capsys.readouterr().err
