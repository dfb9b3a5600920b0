"""The report layer: the committee bundle (PDF report, slide images, interactive charts, tables, manifest).

Public API::

    write_bundle(result, panel, inputs, out_dir, *, study_name, title=None, note=None, include=None,
                 progress=None, horizon=None, created=None, zip_path=None) -> BundlePaths
    BundlePaths          folder, zip, files, images_rendered, note, pages
    INCLUDE_CHOICES      "chart:<key>" and "table:<key>" items for ``include``
    find_browser()       the Chrome/Chromium the images would be rendered with (None: no images)
    NO_BROWSER_HINT      what to do when there is none
"""

from __future__ import annotations

import importlib
from typing import Any

# The names load on first use (PEP 562), so `valuesift study --no-bundle` can import bundle.tables without
# the charts (plotly) and the PDF (reportlab): measured with `python -X importtime`, about 0.4 s of start-up.
_HOME = {"write_bundle": "build", "BundlePaths": "build", "INCLUDE_CHOICES": "build", "bundle_name": "build",
         "default_horizon": "build", "find_browser": "charts", "NO_BROWSER_HINT": "charts", "CHARTS": "charts",
         "CHART_KEYS": "charts", "TABLES": "tables", "TABLE_KEYS": "tables"}


def __getattr__(name: str) -> Any:
    if name not in _HOME:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    return getattr(importlib.import_module(f"{__name__}.{_HOME[name]}"), name)


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_HOME))

__all__ = ["write_bundle", "BundlePaths", "INCLUDE_CHOICES", "bundle_name", "default_horizon", "find_browser",
           "NO_BROWSER_HINT", "CHARTS", "CHART_KEYS", "TABLES", "TABLE_KEYS"]
