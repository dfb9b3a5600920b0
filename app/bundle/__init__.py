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

from valuesift.app.bundle.build import INCLUDE_CHOICES, BundlePaths, bundle_name, default_horizon, write_bundle
from valuesift.app.bundle.charts import CHART_KEYS, CHARTS, NO_BROWSER_HINT, find_browser
from valuesift.app.bundle.tables import TABLE_KEYS, TABLES

__all__ = ["write_bundle", "BundlePaths", "INCLUDE_CHOICES", "bundle_name", "default_horizon", "find_browser",
           "NO_BROWSER_HINT", "CHARTS", "CHART_KEYS", "TABLES", "TABLE_KEYS"]
