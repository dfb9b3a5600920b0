"""The Study page's figure memo: a horizon change after the first view is a look-up, not a rebuild."""

from __future__ import annotations

import time
from typing import Any

import pytest

from valuesift.app.figures import cache


@pytest.fixture(autouse=True)
def _fresh() -> None:
    cache.clear()


def test_figures_are_built_once_per_study_and_horizon(small_result: Any, monkeypatch: pytest.MonkeyPatch) -> None:
    calls: list[str] = []
    real = dict(cache.STUDY_CHARTS)
    for name, draw in real.items():
        monkeypatch.setitem(cache.STUDY_CHARTS, name,
                            lambda r, h, n=name, d=draw: (calls.append(n), d(r, h))[1])
    h1, h2 = small_result.config.horizons[:2]
    first = cache.study_figures("k", small_result, h1)
    assert set(first) == set(real)
    assert len(calls) == len(real)
    again = cache.study_figures("k", small_result, h1)
    assert len(calls) == len(real) and all(again[n] is first[n] for n in first)
    other = cache.study_figures("k", small_result, h2)
    # only the horizon charts are drawn again for a new horizon
    assert sorted(calls[len(real):]) == sorted(cache.HORIZON_CHARTS)
    assert other["ic-horizon"] is first["ic-horizon"] and other["ic-time"] is not first["ic-time"]
    # another study never gets this study's figures
    cache.study_figures("k2", small_result, h1)
    assert len(calls) == 2 * len(real) + len(cache.HORIZON_CHARTS)


def test_warming_fills_every_horizon(small_result: Any) -> None:
    cache.warm_study("w", small_result)
    deadline = time.monotonic() + 60
    keys = {("w", name, int(h), None) for h in small_result.config.horizons for name in ("ic-time", "scatter")}
    while time.monotonic() < deadline and not keys <= set(cache._cache):
        time.sleep(0.05)
    assert keys <= set(cache._cache)
