"""Finished sweeps in the workspace: where they live, which exist, and a sweep point as Study-page settings.

Shared by the Sweep, Study and Export pages (no page imports another).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from valuesift.app.settings import study_settings
from valuesift.core.sweep import load_sweep

__all__ = ["sweep_root", "list_sweeps", "load_named_sweep", "settings_from_query"]


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
