"""The Study page's headline: warnings first, in sentences; verdicts in words; never "nan".

The page module is loaded by a real app (create_app); its headline function is called with studies of
invented panels, one of them with a signal built from next month's return (a leaked file).
"""

from __future__ import annotations

import sys

import pytest

from valuesift.app.server import create_app
from valuesift.core.panel import UserSignal
from valuesift.core.study import StudyConfig, run_study


@pytest.fixture(scope="module")
def study_page(tmp_path_factory: pytest.TempPathFactory):  # type: ignore[no-untyped-def]
    app = create_app(tmp_path_factory.mktemp("ws"))
    return app, sys.modules["valuesift.app.pages.study"]


def _text(node) -> str:  # type: ignore[no-untyped-def]
    if isinstance(node, (list, tuple)):
        return " ".join(_text(n) for n in node)
    if hasattr(node, "children"):
        return _text(node.children)
    return "" if node is None else str(node)


def test_a_leaked_signal_is_called_out_above_the_headline(study_page, small_panel) -> None:  # type: ignore[no-untyped-def]
    _, page = study_page
    leak = small_panel.prices.shift(-1) / small_panel.prices - 1.0
    res = run_study(small_panel.with_(signals=(UserSignal("leak", leak),)), StudyConfig(signal="leak", horizons=(1, 3)))
    out = page._summary(res, 1)
    alerts = [n for n in out if "vs-alert" in (getattr(n, "className", "") or "")]
    assert alerts and "Possible look-ahead" in _text(alerts[0])
    assert out.index(alerts[0]) == 0  # the warnings come first
    head = _text(out[-1])
    assert "Newey-West t =" in head and "independent periods" in head and "nan" not in head  # 1 month: Newey-West


def test_a_too_short_horizon_gets_no_verdict_and_no_nan(study_page, small_panel) -> None:  # type: ignore[no-untyped-def]
    _, page = study_page
    res = run_study(small_panel, StudyConfig(horizons=(1, 36)))
    head = _text(page._summary(res, 36)[-1])
    assert "too short to judge" in head and "strong evidence" not in head and "nan" not in head
    # No date above the minimum breadth: the study runs and its headline names the control, never a "nan".
    none = run_study(small_panel, StudyConfig(horizons=(1,), min_breadth=1000, n_quantiles=2))
    out = [_text(n) for n in page._summary(none, 1)]
    assert "minimum names per date" in out[-1] and "nan" not in " ".join(out)
    assert not any("Too short to judge" in t for t in out)  # no "0.0 independent periods" warning
