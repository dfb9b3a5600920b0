"""Run the docstring examples of the engine modules (so they cannot rot)."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = [
    "valuesift.core.stats",
    "valuesift.core.signals",
    "valuesift.core.returns",
    "valuesift.core.backtest",
    "valuesift.core.study",
    "valuesift.core.evaluate.ic",
    "valuesift.core.evaluate.quantiles",
    "valuesift.core.evaluate.famamacbeth",
    "valuesift.core.evaluate.screen",
    "valuesift.core.evaluate.summary",
]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name: str) -> None:
    res = doctest.testmod(importlib.import_module(name), optionflags=doctest.NORMALIZE_WHITESPACE)
    assert res.failed == 0
