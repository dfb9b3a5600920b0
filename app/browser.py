"""Finding the local Chrome or Chromium that the chart images (app/render.py) are drawn in."""

from __future__ import annotations

import os
import shutil
from pathlib import Path

__all__ = ["find_browser"]

_NAMES = ("chromium", "chromium-browser", "google-chrome", "google-chrome-stable", "chrome")


def find_browser() -> str | None:
    """The Chrome/Chromium the images are drawn in: ``BROWSER_PATH`` if set (it must exist), else one on PATH."""
    env = os.environ.get("BROWSER_PATH")
    if env:
        return env if Path(env).is_file() and os.access(env, os.X_OK) else None
    for name in _NAMES:
        hit = shutil.which(name)
        if hit:
            return hit
    return None
