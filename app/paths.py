"""Where ValueSift keeps its files on this computer (standard library only, so the command line's help is quick)."""

from __future__ import annotations

import os
import sys
from pathlib import Path

__all__ = ["user_data_dir"]


def user_data_dir(environ: dict[str, str] | None = None, platform: str | None = None) -> Path:
    """The user's data folder for ValueSift: ``$XDG_DATA_HOME/valuesift`` (default ``~/.local/share/valuesift``)
    on Linux, ``~/Library/Application Support/ValueSift`` on macOS, ``%LOCALAPPDATA%\\ValueSift`` on Windows."""
    env = os.environ if environ is None else environ
    plat = sys.platform if platform is None else platform
    if plat.startswith("win"):
        base = env.get("LOCALAPPDATA") or str(Path.home() / "AppData" / "Local")
        return Path(base) / "ValueSift"
    if plat == "darwin":
        return Path.home() / "Library" / "Application Support" / "ValueSift"
    base = env.get("XDG_DATA_HOME") or str(Path.home() / ".local" / "share")
    return Path(base) / "valuesift"
