"""Finished sweeps in the workspace: where they live, which exist, and a sweep point as Study-page settings.

Shared by the Sweep, Study and Export pages (no page imports another).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from valuesift.app.settings import study_settings
from valuesift.core.sweep import load_sweep

__all__ = ["sweep_root", "list_sweeps", "load_named_sweep", "settings_from_query", "judged_best"]


def sweep_root(workspace_root: Path) -> Path:
    """The folder of finished sweeps inside a workspace."""
    return Path(workspace_root) / "sweeps"


def list_sweeps(workspace_root: Path) -> list[str]:
    """Names of the finished sweep folders (newest first)."""
    root = sweep_root(workspace_root)
    if not root.is_dir():
        return []
    found = [d for d in root.iterdir() if (d / "sweep.json").is_file() and (d / "comparison.parquet").is_file()]
    return [d.name for d in sorted(found, key=lambda d: (d / "sweep.json").stat().st_mtime, reverse=True)]


def load_named_sweep(workspace_root: Path, name: Any) -> Any:
    """The finished sweep called ``name`` (only a folder :func:`list_sweeps` lists; None otherwise)."""
    names = list_sweeps(workspace_root)
    if not isinstance(name, str) or name not in names:  # only folders we listed: no path from the browser
        return None
    return load_sweep(sweep_root(workspace_root) / name)


def settings_from_query(workspace_root: Path, query: dict[str, Any]) -> dict[str, Any] | None:
    """Study settings for ``/study?sweep=NAME&point=ID`` (None when the query names no sweep point)."""
    name, point = query.get("sweep"), query.get("point")
    if not name or not point:
        return None
    try:
        res = load_named_sweep(workspace_root, name)
    except Exception:  # a damaged folder: open the study page with its usual settings
        return None
    if res is None or point not in res.configs:
        return None
    return study_settings(res.configs[point])[0]


def judged_best(res: Any) -> tuple[str, str, list[dict[str, Any]]]:
    """The deflated-Sharpe sentence, the hold-out sentence and the hold-out rows of a finished sweep (words only;
    the figures come from :mod:`valuesift.core.sweep.selection`)."""
    from valuesift.core.sweep.selection import deflated_best, holdout_report, holdout_sentence

    d = deflated_best(res.table)
    if d["n_trials"]:
        when = f", on the dates before {res.holdout}" if res.holdout else ""
        deflated = (f"Highest long-short Sharpe ratio {d['sharpe']:.2f} (configuration {d['point_id']}, "
                    f"{d['horizon']} months{when}, gross of costs unless the configuration sets one): probabilistic "
                    f"Sharpe ratio {d['psr']:.2f}; deflated for {d['n_trials']} distinct trials {d['dsr']:.2f} "
                    f"(the chance it beats the best of that many trials with no skill).")
    else:
        deflated = "No configuration has a long-short Sharpe ratio."
    if not res.holdout:
        return deflated, ("This sweep was run without a hold-out: every figure is in-sample. Run it with "
                          "--holdout-from YYYY-MM to see the chosen configuration on dates it was not chosen on."), []
    rep = holdout_report(res.table, tuple(res.dimensions), top=10)
    n = int(np.isfinite(pd.to_numeric(res.table["ic_t"], errors="coerce").to_numpy(dtype=float)).sum())
    rows = rep.astype(object).where(rep.notna(), None)
    for c in ("ic_t", "mean_ic", "sharpe", "oos_ic_t", "oos_mean_ic", "oos_sharpe"):
        if c in rows:
            rows[c] = [None if v is None else round(float(v), 3) for v in rows[c]]
    return deflated, holdout_sentence(rep, res.holdout, n), rows.to_dict("records")
