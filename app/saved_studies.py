"""Saved, named studies in the workspace: a finished study kept under a name, reopened after a restart and
added to a comparison.

A saved study is its data selection (dataset ids and confirmed splits) and its settings
(``StudyConfig.to_dict()``), stored in the workspace's settings table; reopening it runs (or fetches
from the study cache) the same study, so the numbers are the same as when it was saved.
"""

from __future__ import annotations

import re
from datetime import datetime, timezone
from typing import Any

from valuesift.core.config import StudyConfig
from valuesift.core.errors import ConfigError

__all__ = ["SAVED_KEY", "NAME_RULE", "save_study", "saved_studies", "saved_study", "delete_study",
           "current_settings", "keep_current_settings"]

#: Each browser session's current Study-page settings (what the Study page's controls show when it opens).
CURRENT_KEY = "study_settings"

SAVED_KEY = "saved_studies"
#: A saved study's name: 1-60 letters, digits, spaces, dots, dashes or underscores.
NAME_RULE = re.compile(r"^[A-Za-z0-9 ._-]{1,60}$")


def _key(owner: str | None) -> str:
    """Each browser session keeps its own saved studies (the shared list outside a session)."""
    return f"{SAVED_KEY}:{owner}" if owner else SAVED_KEY


def saved_studies(workspace: Any, owner: str | None = None) -> dict[str, dict[str, Any]]:
    """Every saved study of ``owner`` by name (newest first)."""
    raw = workspace.get_setting(_key(owner), {}) or {}
    items = [(k, v) for k, v in raw.items() if isinstance(v, dict)]
    return dict(sorted(items, key=lambda kv: str(kv[1].get("saved", "")), reverse=True))


def save_study(workspace: Any, name: str, selection: dict[str, Any], config: StudyConfig,
               owner: str | None = None) -> None:
    """Save (or replace) the study ``name``; ConfigError for a name that does not fit :data:`NAME_RULE`."""
    name = (name or "").strip()
    if not NAME_RULE.match(name):
        raise ConfigError(f"{name!r} cannot name a saved study.",
                          hint="Use 1 to 60 letters, digits, spaces, dots, dashes or underscores.", setting="name")
    raw = dict(workspace.get_setting(_key(owner), {}) or {})
    raw[name] = {"selection": selection, "config": config.to_dict(),
                 "saved": datetime.now(timezone.utc).isoformat(timespec="seconds")}
    workspace.set_setting(_key(owner), raw)


def saved_study(workspace: Any, name: str, owner: str | None = None) -> tuple[dict[str, Any], StudyConfig] | None:
    """The selection and configuration of a saved study (None when there is no such study)."""
    rec = saved_studies(workspace, owner).get(name)
    if rec is None:
        return None
    return dict(rec.get("selection") or {}), StudyConfig.from_dict(dict(rec["config"]))


def delete_study(workspace: Any, name: str, owner: str | None = None) -> None:
    """Remove a saved study (nothing happens when there is none of that name)."""
    raw = dict(workspace.get_setting(_key(owner), {}) or {})
    raw.pop(name, None)
    workspace.set_setting(_key(owner), raw)


def current_settings(workspace: Any, owner: str | None) -> dict[str, Any] | None:
    """The session's settings as last set on the Study or Stability page (None before the first change).

    Kept in the workspace, not in the browser's memory of each control, so a sweep row or a saved study
    opened on the Study page stays in force when the page is opened again later, and a restart loses nothing.
    """
    raw = workspace.get_setting(f"{CURRENT_KEY}:{owner}" if owner else CURRENT_KEY, None)
    return dict(raw) if isinstance(raw, dict) else None


def keep_current_settings(workspace: Any, owner: str | None, settings: dict[str, Any]) -> None:
    """Remember the session's settings (nothing is written when they are unchanged)."""
    key = f"{CURRENT_KEY}:{owner}" if owner else CURRENT_KEY
    if workspace.get_setting(key, None) != settings:
        workspace.set_setting(key, dict(settings))
