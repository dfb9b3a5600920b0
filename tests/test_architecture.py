"""The architecture rules hold on the real tree, and the checker catches each kind of break (issue 16).

The checker (``tests/architecture.py``) parses every module of ``core/`` and ``app/`` with ``ast``;
the fake trees below are built in ``tmp_path`` with one deliberate break each, so a checker that
cannot fail would fail here.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.architecture import check_tree, find_cycles, module_graph

ROOT = Path(__file__).resolve().parents[1]


def _tree(tmp_path: Path, files: dict[str, str]) -> Path:
    for rel, text in {"core/__init__.py": "", "app/__init__.py": "", **files}.items():
        p = tmp_path / rel
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text(text, encoding="utf-8")
    return tmp_path


def test_the_source_tree_keeps_every_rule() -> None:
    found = check_tree(ROOT)
    assert not found, "\n".join(str(v) for v in found)


def test_the_real_graph_is_read() -> None:
    # the checker sees the real imports (so an empty result above means something)
    g = module_graph(ROOT)
    assert "valuesift.core.study.derived" in g["valuesift.core.study"]
    assert "valuesift.app.cli_options" in g["valuesift.app.cli_study"]


def test_a_clean_fake_tree_passes(tmp_path: Path) -> None:
    root = _tree(tmp_path, {
        "core/stats.py": "import numpy as np\n\ndef mean(x):\n    return np.mean(x)\n",
        "app/figures/__init__.py": "",
        "app/figures/chart.py": "from valuesift.core.stats import mean\n\ndef draw(r):\n    return r.fitted\n",
    })
    assert check_tree(root) == []


@pytest.mark.parametrize("call", ["np.corrcoef(x, y)", "np.linalg.lstsq(a, b)", "np.polyfit(x, y, 1)", "x.std()",
                                  "np.sqrt(v)", "stats.linregress(x, y)", "sm.OLS(y, x)", "s.rolling(12).mean()",
                                  "frame.mean()", "np.nanmedian(a, axis=1)"],
                         ids=["corrcoef", "lstsq", "polyfit", "std", "sqrt", "linregress", "ols", "rolling", "mean",
                              "nanmedian"])
@pytest.mark.parametrize("folder", ["figures", "bundle"])
def test_a_statistic_in_figures_or_bundle_fails(tmp_path: Path, call: str, folder: str) -> None:
    root = _tree(tmp_path, {f"app/{folder}/__init__.py": "", f"app/{folder}/bad.py": f"def f(x, y, a, b, v, s, frame):\n"
                                                                                    f"    return {call}\n"})
    rules = {v.rule for v in check_tree(root)}
    assert rules == {"statistic computed in the app"}


def test_a_statistic_elsewhere_in_the_app_is_not_this_rule(tmp_path: Path) -> None:
    root = _tree(tmp_path, {"app/pages/__init__.py": "", "app/pages/p.py": "def f(x):\n    return len(x)\n"})
    assert check_tree(root) == []


def test_a_private_name_across_modules_fails(tmp_path: Path) -> None:
    root = _tree(tmp_path, {"core/a.py": "def _helper():\n    return 1\n",
                            "core/b.py": "from valuesift.core.a import _helper\n"})
    found = check_tree(root)
    assert [v.rule for v in found] == ["private name imported across modules"] and "_helper" in found[0].detail


def test_a_private_name_of_another_library_fails(tmp_path: Path) -> None:
    root = _tree(tmp_path, {"app/x.py": "def f():\n    from somelib import _internal\n    return _internal\n"})
    assert [v.rule for v in check_tree(root)] == ["private name imported across modules"]


def test_a_private_module_from_another_package_fails(tmp_path: Path) -> None:
    root = _tree(tmp_path, {"core/pkg/__init__.py": "from valuesift.core.pkg._impl import thing\n",
                            "core/pkg/_impl.py": "thing = 1\n",
                            "core/other.py": "from valuesift.core.pkg._impl import thing\n"})
    found = check_tree(root)
    assert [(v.rule, v.path) for v in found] == [("private module imported from another package", "core/other.py")]


def test_an_import_circle_fails_even_through_a_function(tmp_path: Path) -> None:
    root = _tree(tmp_path, {"app/one.py": "from valuesift.app import two\n",
                            "app/two.py": "def f():\n    from valuesift.app.three import g\n    return g\n",
                            "app/three.py": "import valuesift.app.one\n"})
    found = check_tree(root)
    assert [v.rule for v in found] == ["import circle"]
    assert find_cycles(module_graph(root)) == [["valuesift.app.one", "valuesift.app.three", "valuesift.app.two"]]


def test_a_relative_import_circle_fails(tmp_path: Path) -> None:
    root = _tree(tmp_path, {"core/p/__init__.py": "", "core/p/a.py": "from . import b\n", "core/p/b.py": "from .a import x\n"})
    assert [v.rule for v in check_tree(root)] == ["import circle"]


def test_type_checking_imports_are_not_a_circle(tmp_path: Path) -> None:
    root = _tree(tmp_path, {"core/a.py": "from valuesift.core import b\n",
                            "core/b.py": "from typing import TYPE_CHECKING\nif TYPE_CHECKING:\n"
                                         "    from valuesift.core.a import A\n"})
    assert check_tree(root) == []


@pytest.mark.parametrize("lib", ["dash", "flask", "plotly.graph_objects"])
def test_a_ui_import_in_core_fails(tmp_path: Path, lib: str) -> None:
    root = _tree(tmp_path, {"core/ui.py": f"def f():\n    import {lib}\n"})
    assert [v.rule for v in check_tree(root)] == ["UI import in core"]


def test_a_ui_import_in_the_app_is_allowed(tmp_path: Path) -> None:
    root = _tree(tmp_path, {"app/ui.py": "import dash\nimport plotly.graph_objects as go\n"})
    assert check_tree(root) == []
