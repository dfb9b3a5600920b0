"""Runs the docstring examples of core.intake so they cannot rot."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = ["numbers", "dates", "kinds", "_common", "files", "align", "splits", "flags", "entries"]


@pytest.mark.parametrize("mod", MODULES)
def test_docstring_examples(mod: str) -> None:
    module = importlib.import_module(f"valuesift.core.intake.{mod}")
    result = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert result.attempted > 0, f"valuesift.core.intake.{mod} has no examples"
    assert result.failed == 0
