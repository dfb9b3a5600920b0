"""Project-level promises: README's two commands, the CI script, the caution, the layout."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    setup = text.split("## Set up", 1)[1].split("\n## ", 1)[0]
    return re.findall(r"```bash\n(.+?)\n```", setup, flags=re.S)


def test_readme_has_exactly_two_setup_commands() -> None:
    cmds = _readme_commands()
    assert len(cmds) == 2
    assert "valuesift serve --demo" in cmds[0]
    assert "pytest" in cmds[1] and ".[test]" in cmds[1]


def test_ci_runs_exactly_the_readme_test_command() -> None:
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    test_cmd = _readme_commands()[1]
    lines = [ln.strip() for ln in ci.splitlines() if ln.strip() and not ln.strip().startswith("#")]
    assert lines[-1] == test_cmd
    assert "apt-get update" in ci
    assert "set -euo pipefail" in ci  # a non-zero pytest exit (5 = no tests) fails CI


def test_caution_in_readme_and_cli() -> None:
    from valuesift.app.cli import CAUTION

    readme = (ROOT / "README.md").read_text(encoding="utf-8").lower()
    for phrase in ("not investment advice", "may not persist", "compliance rules"):
        assert phrase in readme
        assert phrase in CAUTION.lower()


def test_fixed_layout_exists() -> None:
    for rel in ("README.md", "DEVELOPERS.md", "pyproject.toml", "app", "core", "tests", "assets",
                "sample_data", ".ci/run"):
        assert (ROOT / rel).exists(), rel


def test_core_never_imports_dash_flask_or_plotly() -> None:
    bad = re.compile(r"^\s*(import|from)\s+(dash|flask|plotly|flask_caching)\b", re.M)
    offenders = [str(p.relative_to(ROOT)) for p in (ROOT / "core").rglob("*.py") if bad.search(p.read_text("utf-8"))]
    assert offenders == []


def test_every_package_folder_is_installed() -> None:
    import tomllib

    listed = set(tomllib.loads((ROOT / "pyproject.toml").read_text("utf-8"))["tool"]["setuptools"]["packages"])
    found = {
        "valuesift." + ".".join(p.parent.relative_to(ROOT).parts)
        for top in ("core", "app")
        for p in (ROOT / top).rglob("__init__.py")
    }
    assert found | {"valuesift.app.assets"} == listed


def test_nothing_generic_at_the_top_of_the_environment() -> None:
    """The installed import names are valuesift.core and valuesift.app, never bare core or app."""
    import importlib.util

    assert importlib.util.find_spec("valuesift.core") is not None
    assert importlib.util.find_spec("valuesift.app") is not None
    for generic in ("core", "app"):
        spec = importlib.util.find_spec(generic)
        assert spec is None or "valuesift" not in str(spec.origin or spec.submodule_search_locations), generic
