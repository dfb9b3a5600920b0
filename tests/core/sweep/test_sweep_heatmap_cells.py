"""The heat map's cells come from the core: per signal and horizon, the best adjusted t of the sweep's table."""

from __future__ import annotations

from typing import Any

import numpy as np

from valuesift.core.sweep import heatmap_cells, parse_grid, run_sweep


def test_each_cell_is_the_largest_adjusted_t_of_its_configurations(panel: Any) -> None:
    grid = parse_grid({"study": {"min_breadth": 5},
                       "vary": {"signal": ["earnings_yield", "dividend_yield"], "horizons": [1, 3],
                                "sector_neutral": [False, True]}})
    res = run_sweep(panel, grid)
    cells = heatmap_cells(res.table, res.configs)
    assert len(cells) == 4 and set(cells["signal"]) == {"earnings_yield", "dividend_yield"}
    t = res.table.assign(signal=[res.configs[p]["signal"] for p in res.table["point_id"]])
    for _, c in cells.iterrows():   # checked by hand against the table (two configurations per cell)
        mine = t[(t["signal"] == c["signal"]) & (t["horizon"] == c["horizon"])]
        assert c["best_t_bh"] == mine["ic_t_bh"].max() and c["n_configs"] == 2
        assert c["raw_t"] == mine.loc[mine["ic_t_bh"].idxmax(), "ic_t"]


def test_a_sweep_without_a_signal_dimension_uses_its_points_signal(panel: Any) -> None:
    res = run_sweep(panel, parse_grid({"study": {"min_breadth": 5, "signal": "dividend_yield"},
                                       "vary": {"n_quantiles": [3, 4], "horizons": [1]}}))
    cells = heatmap_cells(res.table, res.configs)
    assert list(cells["signal"]) == ["dividend_yield"] and int(cells["n_configs"].iloc[0]) == 2
    assert np.isfinite(cells["best_t_bh"]).all()
