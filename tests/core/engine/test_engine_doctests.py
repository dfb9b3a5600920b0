"""Run the docstring examples of the engine modules (so they cannot rot)."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = [
    "core.stats",
    "core.signals",
    "core.returns",
    "core.backtest",
    "core.study",
    "core.evaluate.ic",
    "core.evaluate.quantiles",
    "core.evaluate.famamacbeth",
    "core.evaluate.screen",
    "core.evaluate.summary",
]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name: str) -> None:
    res = doctest.testmod(importlib.import_module(name), optionflags=doctest.NORMALIZE_WHITESPACE)
    assert res.failed == 0
