"""Finished sweeps in the workspace: where they live, which exist, saving one, its table in words, and a sweep
point as Study-page settings.

Shared by the Sweep, Study and Export pages (no page imports another).  A sweep started from the Sweep
page is saved like a command-line one (``<workspace>/sweeps/<name>/``), so it is offered by the page's
picker and by the Export page, and it survives a restart.
"""

from __future__ import annotations

import datetime as dt
import os
import re
import shutil
import tempfile
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from valuesift.app.settings import study_settings
from valuesift.core.errors import ConfigError
from valuesift.core.settings import SETTING_BY_NAME, SETTINGS, Setting, describe_value
from valuesift.core.sweep import load_sweep, save_sweep
from valuesift.core.sweep.controls import NAME_LABEL

__all__ = ["sweep_root", "list_sweeps", "load_named_sweep", "settings_from_query", "opened_from_query", "judged_best", "sweep_name",
           "save_named_sweep", "dimension_settings", "dimension_words", "configuration_words", "CACHE_FOLDER"]

#: Finished points of sweeps run from the page, shared by them (keyed by data and configuration; no sweep.json,
#: so never offered as a sweep).
CACHE_FOLDER = ".cache"
_NAME_OK = re.compile(r"[A-Za-z0-9][A-Za-z0-9 ._-]{0,59}")


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
    opened = opened_from_query(workspace_root, query)
    return None if opened is None else opened[0]


def opened_from_query(workspace_root: Path, query: dict[str, Any]) -> tuple[dict[str, Any], list[str]] | None:
    """The Study-page settings of a sweep point and the labels of its settings the Study page has no control for."""
    name, point = query.get("sweep"), query.get("point")
    if not name or not point:
        return None
    try:
        res = load_named_sweep(workspace_root, name)
    except Exception:  # a damaged folder: open the study page with its usual settings
        return None
    if res is None or point not in res.configs:
        return None
    return study_settings(res.configs[point])


def sweep_name(raw: Any, workspace_root: Path) -> str:
    """The folder name for a new sweep (a time stamp when left empty); ConfigError naming the control otherwise."""
    name = "" if raw is None else str(raw).strip()
    if not name:
        name = "sweep " + dt.datetime.now().strftime("%Y-%m-%d %H.%M.%S")
    if not _NAME_OK.fullmatch(name) or name.endswith("."):
        raise ConfigError(f"{NAME_LABEL}: {name[:80]!r} cannot be a folder name.",
                          hint="Use letters, digits, spaces, dots, dashes and underscores (up to 60), starting with a "
                               "letter or digit.", setting="name")
    if (sweep_root(workspace_root) / name).exists():
        raise ConfigError(f"{NAME_LABEL}: a sweep called {name!r} is already in the workspace.",
                          hint="Choose another name.", setting="name")
    return name


def save_named_sweep(workspace_root: Path, name: str, result: Any) -> Path:
    """Write a finished sweep to ``<workspace>/sweeps/<name>`` whole or not at all (a folder renamed into place)."""
    root = sweep_root(workspace_root)
    root.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(dir=root, prefix=".partial-"))
    try:
        save_sweep(result, tmp)
        os.rename(tmp, root / name)          # fails when the name was taken meanwhile: nothing is overwritten
    except OSError as err:
        shutil.rmtree(tmp, ignore_errors=True)
        if (root / name).exists():
            raise ConfigError(f"{NAME_LABEL}: a sweep called {name!r} was saved meanwhile.",
                              hint="Run it again with another name.", setting="name") from err
        raise
    return root / name


def dimension_settings(dim: str) -> list[Setting]:
    """The settings a grid dimension sets (the settings table's rows with that grid name, or the field itself)."""
    rows = [st for st in SETTINGS if st.grid == dim]
    if not rows and dim in SETTING_BY_NAME:
        rows = [SETTING_BY_NAME[dim]]
    return rows


def dimension_words(dim: str, config: dict[str, Any]) -> Any:
    """A point's value on a dimension as a person reads it (a number stays a number, so it sorts as one)."""
    rows = dimension_settings(dim)
    if not rows:
        return str(config.get(dim, ""))
    main = rows[0]
    value = config.get(main.name, main.default)
    if main.kind in ("int", "float") and isinstance(value, (int, float)) and not isinstance(value, bool):
        return value
    if dim == "outliers" and value == "winsorise":
        pair = config.get("winsor_percentiles", SETTING_BY_NAME["winsor_percentiles"].default)
        return f"{main.words(value)} {describe_value(SETTING_BY_NAME['winsor_percentiles'], pair)}"
    if dim == "universe" and value == "sectors":
        return f"{main.words(value)}: {describe_value(SETTING_BY_NAME['universe_sectors'], config.get('universe_sectors'))}"
    return describe_value(main, value)


def configuration_words(res: Any, point_id: Any) -> str:
    """A sweep point in words: its values on the varied dimensions (the sweep's one configuration without any)."""
    cfg = res.configs.get(point_id)
    if cfg is None:
        return "a configuration no longer in the sweep"
    dims = [d for d in res.dimensions if d != "horizons"]
    if not dims:
        return "the sweep's one configuration"
    parts = []
    for d in dims:
        rows = dimension_settings(d)
        lab = rows[0].label if rows else d.replace("_", " ")
        parts.append(f"{lab.lower() if rows else lab} {dimension_words(d, cfg)}")
    return ", ".join(parts)


def judged_best(res: Any) -> tuple[str, str, list[dict[str, Any]]]:
    """The deflated-Sharpe sentence, the hold-out sentence and the hold-out rows of a finished sweep (words only;
    the figures come from :mod:`valuesift.core.sweep.selection`)."""
    from valuesift.core.sweep.selection import deflated_best, holdout_report, holdout_sentence

    d = deflated_best(res.table)
    if d["n_trials"]:
        when = f", on the dates before {res.holdout}" if res.holdout else ""
        deflated = (f"Highest long-short Sharpe ratio {d['sharpe']:.2f} ({configuration_words(res, d['point_id'])}, "
                    f"{d['horizon']} month{'s' if d['horizon'] != 1 else ''}{when}, gross of costs unless the configuration sets one): probabilistic "
                    f"Sharpe ratio {d['psr']:.2f}; deflated for {d['n_trials']} distinct trials {d['dsr']:.2f} "
                    f"(the chance it beats the best of that many trials with no skill).")
    else:
        deflated = "No configuration has a long-short Sharpe ratio."
    if not res.holdout:
        return deflated, ("This sweep was run without a hold-out: every figure is in-sample. Run it with a hold-out "
                          "month (the Hold-out from control above, or --holdout-from YYYY-MM on the command line) to "
                          "see the chosen configuration on dates it was not chosen on."), []
    rep = holdout_report(res.table, tuple(res.dimensions), top=10)
    n = int(np.isfinite(pd.to_numeric(res.table["ic_t"], errors="coerce").to_numpy(dtype=float)).sum())
    rows = rep.astype(object).where(rep.notna(), None)
    if "point_id" in rows:
        rows["point_id"] = [configuration_words(res, p) for p in rows["point_id"]]
    for c in ("ic_t", "mean_ic", "sharpe", "oos_ic_t", "oos_mean_ic", "oos_sharpe"):
        if c in rows:
            rows[c] = [None if v is None else round(float(v), 3) for v in rows[c]]
    return deflated, holdout_sentence(rep, res.holdout, n), rows.to_dict("records")
