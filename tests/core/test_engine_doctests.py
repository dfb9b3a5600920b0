"""Run the docstring examples of every module of the engine (so they cannot rot).

The modules are found by walking the installed package, so a new module is covered
without being listed here; intake has its own test (tests/core/intake).
"""

from __future__ import annotations

import doctest
import importlib
import pkgutil

import pytest

import valuesift.core as core_pkg


def _engine_modules() -> list[str]:
    names = []
    for info in pkgutil.walk_packages(core_pkg.__path__, prefix="valuesift.core."):
        if ".intake" in info.name or ".demo" in info.name:
            continue
        names.append(info.name)
    return sorted(names)


MODULES = _engine_modules()


def test_the_walk_finds_the_domain_folders() -> None:
    for expected in ("valuesift.core.correlation.ic", "valuesift.core.inference.hac",
                     "valuesift.core.quantiles.means", "valuesift.core.regression.famamacbeth"):
        assert expected in MODULES


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name: str) -> None:
    res = doctest.testmod(importlib.import_module(name), optionflags=doctest.NORMALIZE_WHITESPACE)
    assert res.failed == 0
