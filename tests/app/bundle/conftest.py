"""Fixtures of the bundle tests: the invented demo universe through intake, its study and one built bundle."""

from __future__ import annotations

from datetime import datetime, timezone
from pathlib import Path
from typing import Any

import pytest

#: A fixed creation time, so two builds can be compared byte for byte.
CREATED = datetime(2026, 1, 15, 9, 30, tzinfo=timezone.utc)
HORIZONS = (1, 3, 12)        # a smaller set than the default keeps the tests quick


def load_demo(folder: Path) -> Any:
    """The demo files read by intake (index column left out, the suspected split confirmed), as the CLI tests do."""
    from valuesift.core.demo import write_demo
    from valuesift.core.demo.write import INDEX_COLUMN
    from valuesift.core.intake import PanelOptions, ReadOptions, build_panel, read_table

    write_demo(folder)
    files = []
    for name in ("prices", "earnings", "dividends", "sectors", "holdings", "benchmark"):
        opts = ReadOptions(exclude_columns=(INDEX_COLUMN,)) if name == "prices" else ReadOptions()
        files.append(read_table(folder / f"{name}.csv", name=f"{name}.csv", options=opts))
    return build_panel(files, PanelOptions(confirmed_splits=frozenset({"LUD24"})))


@pytest.fixture(scope="session")
def created() -> datetime:
    return CREATED


@pytest.fixture(scope="session")
def demo_panel(tmp_path_factory: pytest.TempPathFactory) -> Any:
    return load_demo(tmp_path_factory.mktemp("bundle-demo"))


@pytest.fixture(scope="session")
def demo_result(demo_panel: Any) -> Any:
    from valuesift.core.config import StudyConfig
    from valuesift.core.study import run_study

    return run_study(demo_panel, StudyConfig(horizons=HORIZONS))


@pytest.fixture(scope="session")
def built(demo_result: Any, demo_panel: Any, tmp_path_factory: pytest.TempPathFactory) -> Any:
    """The demo bundle, built once (with images when a browser is installed): (BundlePaths, progress calls)."""
    from valuesift.app.bundle import write_bundle

    stages: list[tuple[str, float]] = []
    out = tmp_path_factory.mktemp("bundle-1") / "bundle"
    paths = write_bundle(demo_result, demo_panel, None, out, study_name="Committee demo",
                         note="Prepared for the spring meeting.", created=CREATED,
                         progress=lambda s, f: stages.append((s, f)))
    return paths, stages
