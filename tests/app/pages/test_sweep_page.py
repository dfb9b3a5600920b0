"""The Sweep page without a browser: layout, table, the click that opens a study, and the Study page hook."""

from __future__ import annotations

from pathlib import Path
from typing import Any
from urllib.parse import parse_qs, urlsplit

import pytest

from valuesift.core.sweep import parse_grid, run_sweep, save_sweep

GRID = {"study": {"min_breadth": 5, "n_quantiles": 4},
        "vary": {"signal": ["earnings_yield", "dividend_yield"], "universe": ["all", ["Kilns", "Quays"]],
                 "horizons": [1, 3], "sector_neutral": [False, True], "outliers": [[2, 98]]}}


@pytest.fixture()
def app_with_sweep(tmp_path: Path, panel: Any) -> Any:
    from valuesift.app.server import create_app

    app = create_app(tmp_path / "ws")
    res = run_sweep(panel, parse_grid(GRID, "page-grid"))
    save_sweep(res, tmp_path / "ws" / "sweeps" / "first")
    return app, res


def _walk(c: Any) -> Any:
    yield c
    kids = getattr(c, "children", None)
    for k in kids if isinstance(kids, list) else ([kids] if kids is not None and not isinstance(kids, str) else []):
        yield from _walk(k)


def test_sweep_page_lists_the_workspace_sweeps_and_shows_the_table(app_with_sweep: Any) -> None:
    import dash

    from valuesift.app.pages import sweep as page

    app, res = app_with_sweep
    assert dash.page_registry["valuesift.app.pages.sweep"]["path"] == "/sweep"
    with app.server.test_request_context("/"):
        lay = page.layout()
        ids = {getattr(c, "id", None) for c in _walk(lay)}
        assert {"sweep-pick", "sweep-table", "sweep-heatmap", "sweep-statement", "sweep-go"} <= ids
        pick = next(c for c in _walk(lay) if getattr(c, "id", None) == "sweep-pick")
        assert pick.value == "first"
        cols, data, statement, fig, note, style, hidden = page._show("first", {"ids": []})
        assert hidden is False
        assert style == {}  # the heat map is shown only with a sweep (never an empty chart)
    names = [c["field"] for c in cols]
    # the adjusted columns sit right after the raw HAC t
    assert names.index("ic_t_bh") == names.index("ic_t") + 1 and names.index("ic_t_bonferroni") == names.index("ic_t") + 2
    # the signal column is pinned first; numbers are numeric columns; no hash id is shown
    assert names[0] == "signal" and cols[0]["pinned"] == "left"
    assert "point_id" not in names and all(c["type"] == "numericColumn" for c in cols if c["field"] in ("ic_t", "horizon"))
    assert [c["headerName"] for c in cols[:5]] == ["Signal", "Universe", "Sector-neutral", "Outliers", "Horizon (months)"]
    assert len(data) == len(res.table) == 16 and statement == res.statement
    assert {r["point_id"] for r in data} == set(res.configs)
    # settings in words, not codes
    assert {r["signal"] for r in data} == {"earnings yield", "dividend yield"}
    assert {r["sector_neutral"] for r in data} == {"on", "off"}
    assert {r["universe"] for r in data} == {"every security", "chosen sectors: Kilns, Quays"}
    assert {r["status"] for r in data} == {"computed"}
    assert all(isinstance(r["ic_t"], float) for r in data)
    assert fig.data[0].type == "heatmap"
    assert "not the data this sweep ran on" in note
    with app.server.test_request_context("/"):
        assert page._show("../../etc", None)[1] == []        # only listed folder names are read


def test_a_click_opens_the_configuration_on_the_study_page(app_with_sweep: Any) -> None:
    from valuesift.app.pages import study as study_page
    from valuesift.app.pages import sweep as page
    from valuesift.app.settings import config_from_settings
    from valuesift.app.sweeps import settings_from_query

    app, res = app_with_sweep
    with app.server.test_request_context("/"):
        _, data, *_ = page._show("first", None)
        target = next(r for r in data if r["signal"] == "dividend yield" and r["sector_neutral"] == "on"
                      and r["universe"] != "every security")
        href, note = page._open({"rowId": target["row_id"], "colId": "signal"}, "first")
        assert note.startswith("Opening signal dividend yield")
        q = {k: v[0] for k, v in parse_qs(urlsplit(href).query).items()}
        assert urlsplit(href).path == "/study"
        assert q == {"sweep": "first", "point": target["point_id"], "horizon": str(target["horizon"])}
        settings = settings_from_query(app.server.extensions["valuesift"].workspace.root, q)
        # the Study page's settings give back the sweep point's configuration
        from valuesift.core.config import StudyConfig

        want = StudyConfig.from_dict(res.configs[target["point_id"]])
        got = config_from_settings(settings)
        assert (got.signal, got.universe, got.universe_sectors, got.sector_neutral, got.winsor_percentiles,
                got.horizons) == (want.signal, want.universe, want.universe_sectors, want.sector_neutral,
                                  want.winsor_percentiles, want.horizons)
        # the hook: the Study page opened with that query shows those values in its controls
        lay = study_page.layout(**q)          # the row's horizon is the one drawn first
        vals = {c.id: c.value for c in _walk(lay) if isinstance(getattr(c, "id", None), str) and hasattr(c, "value")}
        assert vals["study-signal"] == "dividend_yield" and vals["study-neutral"] == ["on"]
        assert vals["study-universe"] == "sectors" and vals["study-sectors"] == ["Kilns", "Quays"]
        assert vals["study-winsor"] == 2.0 and vals["study-horizons"] == [1, 3]
        assert vals["study-horizon"] == target["horizon"]
        # an unknown point or sweep: the usual Study page
        plain = study_page.layout(sweep="first", point="nope")
        pvals = {c.id: c.value for c in _walk(plain) if isinstance(getattr(c, "id", None), str) and hasattr(c, "value")}
        assert pvals["study-signal"] == "earnings_yield" and pvals["study-neutral"] == []
        assert page._open({"rowIndex": 99}, "first") == (page.no_update, page.no_update)
        assert page._open({"rowId": "nope|1"}, "first")[1] == "That configuration is no longer in the sweep folder."


def test_settings_the_study_page_cannot_show_are_named() -> None:
    from valuesift.app.settings import study_settings
    from valuesift.core.config import StudyConfig
    from valuesift.core.settings import SETTING_BY_NAME

    s, missing = study_settings(StudyConfig(min_breadth=7, fm_log_market_cap=True, winsor_percentiles=(1.0, 95.0),
                                            horizons=(3, 1)).to_dict())
    assert s["horizons"] == [1, 3] and s["winsor_lower"] == 1.0 and s["min_breadth"] == 7
    # named by their labels from the settings table
    assert SETTING_BY_NAME["fm_log_market_cap"].label in missing
    assert any(m.startswith(SETTING_BY_NAME["winsor_percentiles"].label) for m in missing)
