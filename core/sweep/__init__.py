"""Signal sweeps across many study configurations, and the partitioned study for very large universes.

Public API::

    read_grid(path) / parse_grid(data) -> SweepGrid      grid files (TOML)
    grid_from_controls(values, base=, name=) -> SweepGrid the dashboard's sweep form
    run_sweep(panel, grid, client=, cache_dir=, progress=) -> SweepResult
    save_sweep(result, dir) / load_sweep(dir)             the sweep folder
    run_partitioned_study(panel, config, client, ...)     -> PartitionedResult

Dask (``dask`` and ``distributed``, the ``cluster`` extra) is imported only
inside the functions that use a cluster.
"""

from __future__ import annotations

from valuesift.core.sweep.grid import (
    DIMENSIONS,
    MAX_IN_PROCESS_POINTS,
    MAX_POINTS,
    GridPoint,
    SweepGrid,
    config_id,
    parse_grid,
    read_grid,
)
from valuesift.core.sweep.controls import FORM_DIMENSIONS, count_configurations, grid_from_controls
from valuesift.core.sweep.partitioned import PartitionedResult, run_partitioned_study
from valuesift.core.sweep.run import SweepResult, evaluate_point, panel_fingerprint, run_sweep
from valuesift.core.sweep.store import load_sweep, save_sweep
from valuesift.core.multiple_testing.adjust import adjust_pvalues, two_sided_p
from valuesift.core.sweep.table import comparison_table, heatmap_cells

__all__ = [
    "DIMENSIONS", "MAX_POINTS", "MAX_IN_PROCESS_POINTS", "FORM_DIMENSIONS", "count_configurations",
    "grid_from_controls", "heatmap_cells", "GridPoint", "SweepGrid", "config_id", "parse_grid", "read_grid",
    "SweepResult", "run_sweep", "evaluate_point", "panel_fingerprint",
    "save_sweep", "load_sweep",
    "adjust_pvalues", "comparison_table", "two_sided_p",
    "PartitionedResult", "run_partitioned_study",
]
