"""Sweeps on a 2-worker local cluster: same numbers as run_study one by one, failures kept, re-runs reuse."""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pytest

from valuesift.core.config import StudyConfig
from valuesift.core.study import run_study
from valuesift.core.reporting.summary import summary_dict
from valuesift.core.sweep import load_sweep, parse_grid, run_sweep, save_sweep
from valuesift.core.sweep import run as run_mod

GRID = {"study": {"min_breadth": 5, "n_quantiles": 4},
        "vary": {"signal": ["earnings_yield", "composite"], "universe": ["all", "Nowhere", ["Kilns", "Quays"]],
                 "horizons": [1, 3], "cost_bps": [0, 20]}}


@pytest.fixture(scope="module")
def grid() -> Any:
    return parse_grid(GRID, "test-grid")


class _Spy:
    """Wraps a distributed Client and counts scatters and what each task receives."""

    def __init__(self, client: Any) -> None:
        self.client, self.scatters, self.first_args = client, 0, []

    def scatter(self, *a: Any, **k: Any) -> Any:
        self.scatters += 1
        return self.client.scatter(*a, **k)

    def submit(self, fn: Any, *args: Any, **k: Any) -> Any:
        self.first_args.append(args[0])
        return self.client.submit(fn, *args, **k)


def _by_hand(panel: Any, cfg: StudyConfig) -> dict[int, dict[str, float]] | str:
    """The same point run directly with run_study in this process (the reference)."""
    from valuesift.core.errors import ValueSiftError

    try:
        res = run_study(panel, cfg)
    except ValueSiftError as err:
        return str(err)
    from valuesift.core.portfolio.holding import backtest_at_holding, monthly_inputs

    s = summary_dict(res)
    inputs = monthly_inputs(panel)
    # the Sharpe ratio of each row is the long-short held for the row's horizon (issue 12: it varies by horizon)
    ls = {h: backtest_at_holding(res, inputs, h).stats.loc["long_short"] for h in cfg.horizons}
    return {h: {"mean_ic": s[str(h)]["mean_ic"], "ic_t": s[str(h)]["ic_t"], "spread": s[str(h)]["spread"],
                "spread_t": s[str(h)]["spread_t"], "sharpe": float(ls[h]["sharpe"]),
                "max_drawdown": float(ls[h]["max_drawdown"]), "breadth": float(res.ic_summary.at[h, "mean_breadth"]),
                "n_dates": int(res.ic_summary.at[h, "n_dates"])} for h in cfg.horizons}


def test_cluster_sweep_equals_run_study_point_by_point(panel: Any, grid: Any, client: Any) -> None:
    from distributed import Future

    spy = _Spy(client)
    res = run_sweep(panel, grid, client=spy)
    # the panel went to the workers once, and every task got the future, not the data
    assert spy.scatters == 1 and len(spy.first_args) == len(grid.points) == 12
    assert all(isinstance(a, Future) for a in spy.first_args)
    assert res.computed == 12 and res.reused == 0 and len(res.table) == 24
    for p in grid.points:
        ref = _by_hand(panel, p.config)
        rows = res.table[res.table["point_id"] == p.id].set_index("horizon")
        if isinstance(ref, str):
            assert (rows["status"] == "failed").all() and (rows["error"] == ref).all()
            assert rows["ic_t"].isna().all()
            continue
        assert (rows["status"] == "ok").all()
        for h, vals in ref.items():
            for k, v in vals.items():
                got = rows.at[h, k]
                assert (math.isnan(got) and (v is None or math.isnan(v))) or got == v, (p.id, h, k)
    failed = res.table[res.table["status"] == "failed"]
    # the sector that does not exist fails (both signals, both costs); the other points ran
    assert set(failed["universe"]) == {"Nowhere"} and failed["point_id"].nunique() == 4
    assert failed["error"].str.contains("Not enough data for the universe").all()
    assert res.n_failed == 4 and res.n_tests == 16
    assert "12 study configurations were tried" in res.statement and "24 signal tests" in res.statement
    # identical to the in-process run of the same grid
    local = run_sweep(panel, grid)
    pd.testing.assert_frame_equal(res.table, local.table)


def test_rerun_reuses_finished_points(panel: Any, grid: Any, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    calls: list[str] = []
    real = run_mod.evaluate_point

    def counting(pnl: Any, settings: dict[str, Any]) -> dict[str, Any]:
        calls.append(settings["signal"])
        return real(pnl, settings)

    monkeypatch.setattr(run_mod, "evaluate_point", counting)
    first = run_sweep(panel, grid, cache_dir=tmp_path / "cache")
    assert len(calls) == 12 and first.computed == 12 and first.reused == 0
    second = run_sweep(panel, grid, cache_dir=tmp_path / "cache")
    # the 8 finished points come from the cache; the 4 failed ones are tried again
    assert len(calls) == 16 and second.computed == 4 and second.reused == 8
    pd.testing.assert_frame_equal(first.table, second.table)
    # other inputs: nothing is reused
    other = panel.with_(prices=panel.prices * 1.01)
    third = run_sweep(other, grid, cache_dir=tmp_path / "cache")
    assert third.reused == 0 and len(calls) == 28
    # a damaged cache file is recomputed, not trusted
    victim = next((tmp_path / "cache" / first.input_key).glob("*.json"))
    victim.write_text("{not json", encoding="utf-8")
    fourth = run_sweep(panel, grid, cache_dir=tmp_path / "cache")
    assert fourth.reused == 7 and fourth.computed == 5


def test_save_and_load_round_trip(panel: Any, grid: Any, tmp_path: Path) -> None:
    res = run_sweep(panel, grid)
    paths = save_sweep(res, tmp_path / "out")
    assert [p.name for p in paths] == ["comparison.csv", "comparison.parquet", "sweep.json"]
    back = load_sweep(tmp_path / "out")
    pd.testing.assert_frame_equal(back.table, res.table)
    assert back.configs == res.configs and back.dimensions == res.dimensions and back.statement == res.statement
    csv = pd.read_csv(tmp_path / "out" / "comparison.csv")
    np.testing.assert_allclose(csv["ic_t_bh"].to_numpy(), res.table["ic_t_bh"].to_numpy(), rtol=1e-12,
                               equal_nan=True)
    from valuesift.core.errors import ConfigError

    with pytest.raises(ConfigError, match="not a finished sweep folder"):
        load_sweep(tmp_path)


def test_an_unexpected_error_in_a_point_is_recorded(panel: Any, monkeypatch: pytest.MonkeyPatch) -> None:
    def boom(*_a: Any, **_k: Any) -> Any:
        raise ZeroDivisionError("planted")

    monkeypatch.setattr(run_mod, "run_study", boom)  # the name evaluate_point calls
    out = run_mod.evaluate_point(panel, StudyConfig(horizons=(1,)).to_dict())
    assert out == {"status": "failed", "error": "ZeroDivisionError: planted"}
