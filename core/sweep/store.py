"""Write a finished sweep to a folder and read it back (the dashboard and the chart bundle read it).

Folder layout::

    comparison.csv       the comparison table (one row per grid point and horizon)
    comparison.parquet   the same table with its column types
    sweep.json           name, dimensions, horizons, input fingerprint, counts,
                         the statement of how many configurations were tried,
                         and the study settings of every point (by point id)
    cache/               finished points, reused by a re-run (see core.sweep.run)
"""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Any

import pandas as pd

from valuesift.core.errors import ConfigError
from valuesift.core.sweep.run import SweepResult

__all__ = ["save_sweep", "load_sweep", "TABLE_CSV", "TABLE_PARQUET", "META_JSON"]

TABLE_CSV = "comparison.csv"
TABLE_PARQUET = "comparison.parquet"
META_JSON = "sweep.json"


def save_sweep(result: SweepResult, out_dir: str | os.PathLike[str]) -> list[Path]:
    """Write the table (CSV and Parquet) and ``sweep.json``; returns the paths written."""
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    csv, pq, meta = out / TABLE_CSV, out / TABLE_PARQUET, out / META_JSON
    result.table.to_csv(csv, index=False, lineterminator="\n")
    result.table.to_parquet(pq, index=False)
    doc: dict[str, Any] = {
        "name": result.name, "dimensions": list(result.dimensions), "horizons": list(result.horizons),
        "input_key": result.input_key, "n_points": result.n_points, "n_failed": result.n_failed,
        "n_tests": result.n_tests, "computed": result.computed, "reused": result.reused,
        "statement": result.statement, "configs": result.configs,
        "duplicates": result.duplicates, "holdout": result.holdout,
    }
    meta.write_text(json.dumps(doc, indent=2, sort_keys=True, default=str) + "\n", encoding="utf-8")
    return [csv, pq, meta]


def load_sweep(directory: str | os.PathLike[str]) -> SweepResult:
    """Read a sweep folder written by :func:`save_sweep`.

    Raises
    ------
    ConfigError
        The folder lacks ``sweep.json`` or ``comparison.parquet`` or they cannot be read.
    """
    d = Path(directory)
    try:
        doc = json.loads((d / META_JSON).read_text(encoding="utf-8"))
        table = pd.read_parquet(d / TABLE_PARQUET)
    except (OSError, ValueError) as err:
        raise ConfigError(f"{d}: not a finished sweep folder ({err}).",
                          hint=f"Point to the --out folder of 'valuesift sweep' (it holds {META_JSON} "
                               f"and {TABLE_PARQUET}).") from err
    return SweepResult(str(doc["name"]), tuple(doc["dimensions"]), tuple(int(h) for h in doc["horizons"]), table,
                       dict(doc["configs"]), str(doc["input_key"]), int(doc["computed"]), int(doc["reused"]),
                       duplicates=int(doc.get("duplicates", 0)), holdout=doc.get("holdout"))
