"""`valuesift compare` and the new study outputs on the demo files: every column, and the numbers equal to each
signal's own `valuesift study`."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from valuesift.app.cli import main

from tests.app.cli.test_cli import DEMO_ARGS

SIGNALS = ("earnings_yield", "dividend_yield", "composite")


@pytest.fixture(scope="module")
def outputs(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:
    root = tmp_path_factory.mktemp("compare")
    assert main(["compare", "--signals", ",".join(SIGNALS), *DEMO_ARGS, "--out", str(root / "cmp"), "--quiet"]) == 0
    studies = {}
    for s in SIGNALS:
        d = root / s
        assert main(["study", *DEMO_ARGS, "--signal-kind", s, "--out", str(d), "--no-bundle", "--quiet"]) == 0
        studies[s] = d
    return {"cmp": root / "cmp", **studies}


def test_three_files_with_every_column(outputs: dict[str, Path]) -> None:
    c = pd.read_csv(outputs["cmp"] / "compare.csv")
    assert {"signal", "horizon", "mean_ic", "ic_t", "spread", "spread_t", "sharpe", "max_drawdown", "turnover",
            "mean_breadth", "n_dates"} <= set(c.columns)
    m = pd.read_csv(outputs["cmp"] / "signal_correlation.csv", index_col=0)
    assert list(m.index) == list(SIGNALS) == list(m.columns)
    assert np.allclose(np.diag(m.to_numpy()), 1.0) and np.allclose(m.to_numpy(), m.to_numpy().T)
    j = pd.read_csv(outputs["cmp"] / "joint_fm.csv")
    assert {"signal", "horizon", "mean_slope", "t"} <= set(j.columns) and "composite" not in set(j["signal"])
    assert (outputs["cmp"] / "comparison_bundle" / "comparison_report.pdf").read_bytes().startswith(b"%PDF-")


def test_numbers_equal_each_signals_own_study(outputs: dict[str, Path]) -> None:
    c = pd.read_csv(outputs["cmp"] / "compare.csv")
    for s in SIGNALS:
        summ = json.loads((outputs[s] / "summary.json").read_text())
        rows = c[c["signal"] == s].set_index("horizon")
        for h, block in summ["horizons"].items():
            for col in ("mean_ic", "ic_t", "spread"):
                assert rows.at[int(h), col] == pytest.approx(block[col], rel=1e-12, abs=1e-15), (s, h, col)
            assert rows.at[int(h), "n_dates"] == block["n_dates"]


def test_study_writes_the_relative_block_and_new_tables_without_the_bundle(outputs: dict[str, Path]) -> None:
    d = outputs["earnings_yield"]
    summ = json.loads((d / "summary.json").read_text())
    for p in ("cheapest", "long_short"):
        rel = summ["backtest"]["portfolios"][p]["relative"]
        assert {"active_return_ann", "tracking_error_ann", "information_ratio", "beta", "alpha_ann", "alpha_t",
                "comparison", "information_ratio_residual"} <= set(rel)
        assert rel["comparison"] == "benchmark"  # a benchmark file was given
    cols = {"ic_by_period": ["period", "horizon", "mean_ic", "ic_t", "spread", "spread_t", "n_dates"],
            "ic_by_regime": ["regime", "state", "horizon", "mean_ic", "ic_t", "spread", "spread_t", "n_dates"],
            "ic_by_sector": ["sector", "horizon", "mean_ic", "ic_t", "mean_breadth", "n_dates"],
            "ic_decay": ["month_ahead", "marginal_ic", "t", "cumulative_ic"]}
    for name, want in cols.items():
        t = pd.read_csv(d / "tables" / f"{name}.csv")
        assert list(t.columns[:len(want)]) == want, name
    per = pd.read_csv(d / "tables" / "ic_by_period.csv")
    assert per["period"].astype(str).str.fullmatch(r"\d{4}|before \d{4}-\d{2}|from \d{4}-\d{2}").all()
    assert len(pd.read_csv(d / "tables" / "ic_decay.csv")) == 24
    assert not (d / "report.pdf").exists()


def test_bad_signal_names_exit_with_a_message(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["compare", "--signals", "earnings_yield,book_value", *DEMO_ARGS, "--out", str(tmp_path),
                 "--quiet", "--no-bundle"]) == 2
    assert "Unknown signal" in capsys.readouterr().err
