"""Saved, named studies survive a restart of the workspace and stay per session."""

from __future__ import annotations

from pathlib import Path

import pytest

from valuesift.app.saved_studies import delete_study, save_study, saved_studies, saved_study
from valuesift.app.workspace import Workspace
from valuesift.core.config import StudyConfig
from valuesift.core.errors import ConfigError


def test_save_reopen_after_restart_and_delete(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    cfg = StudyConfig(signal="dividend_yield", horizons=(1, 12), reporting_lag_months=3)
    save_study(ws, "house view", {"ids": ["a"], "splits": []}, cfg, owner="s1")
    again = Workspace(tmp_path)  # a new process on the same folder
    sel, back = saved_study(again, "house view", "s1")
    assert back == cfg and sel == {"ids": ["a"], "splits": []}
    assert saved_studies(again, "s2") == {}  # another session does not see it
    delete_study(again, "house view", "s1")
    assert saved_study(again, "house view", "s1") is None


@pytest.mark.parametrize("name", ["", "x" * 61, "a/b", "<script>"])
def test_bad_names_are_refused(tmp_path: Path, name: str) -> None:
    with pytest.raises(ConfigError, match="cannot name a saved study"):
        save_study(Workspace(tmp_path), name, {"ids": [], "splits": []}, StudyConfig())
