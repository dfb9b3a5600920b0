"""Shared fixtures of the robustness suite: the hostile corpus written once per session."""

from __future__ import annotations

import importlib.util
import pathlib

import pytest

HOSTILE = pathlib.Path(__file__).resolve().parents[1] / "data" / "hostile"


def _corpus_module():  # type: ignore[no-untyped-def]
    spec = importlib.util.spec_from_file_location("hostile_make_corpus", HOSTILE / "make_corpus.py")
    assert spec and spec.loader
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@pytest.fixture(scope="session")
def hostile_dir(tmp_path_factory: pytest.TempPathFactory) -> pathlib.Path:
    return _corpus_module().write_corpus(tmp_path_factory.mktemp("hostile"))
