"""Grid files: crossing, stable ids, and every validation branch naming its dimension."""

from __future__ import annotations

from pathlib import Path

import pytest

from valuesift.core.errors import ConfigError
from valuesift.core.config import StudyConfig
from valuesift.core.sweep import config_id, parse_grid, read_grid
from valuesift.core.sweep import grid as grid_mod

ROOT = Path(__file__).resolve().parents[3]


def test_dimensions_cross_in_file_order_and_horizons_stay_inside_each_study() -> None:
    g = parse_grid({"study": {"min_breadth": 5},
                    "vary": {"signal": ["earnings_yield", "dividend_yield"], "universe": ["all", ["Kilns", "Quays"]],
                             "horizons": [3, 1], "outliers": [[5, 95], "none"]}})
    assert len(g.points) == 2 * 2 * 2 and g.horizons == (1, 3) and g.n_tests == 16
    assert g.dimensions == ("signal", "universe", "outliers")
    first, last = g.points[0].config, g.points[-1].config
    assert first.signal == "earnings_yield" and first.universe == "all" and first.winsor_percentiles == (5.0, 95.0)
    assert last.signal == "dividend_yield" and last.universe_sectors == ("Kilns", "Quays")
    assert last.outlier_rule == "none" and last.horizons == (1, 3) and last.min_breadth == 5
    assert dict(g.points[-1].varied) == {"signal": "dividend_yield", "universe": "[Kilns, Quays]", "outliers": "none"}


def test_ids_are_a_hash_of_the_settings_and_duplicates_are_kept_once() -> None:
    cfg = StudyConfig(horizons=(1, 3), n_quantiles=4)
    assert config_id(cfg) == config_id(StudyConfig.from_dict(cfg.to_dict()))
    assert config_id(cfg) != config_id(StudyConfig(horizons=(1, 3), n_quantiles=5))
    # n_quantiles given twice (by its plain name and by its setting name) with the same values
    g = parse_grid({"vary": {"quantiles": [4, 5], "zscore": ["mean_std"]}, "study": {"horizons": [1]}})
    ids = [p.id for p in g.points]
    assert len(ids) == len(set(ids)) == 2
    again = parse_grid({"vary": {"n_quantiles": [4, 4, 5]}, "study": {"horizons": [1]}})
    assert [p.id for p in again.points] == ids


def test_the_example_grid_file_reads_and_has_at_least_100_points() -> None:
    g = read_grid(ROOT / "docs" / "sweep_example.toml")
    assert len(g.points) >= 100 and g.name == "demo yield sweep"


@pytest.mark.parametrize("data, match", [
    ({"vary": {"colour": ["blue"]}}, "'colour'.*unknown dimension"),
    ({"vary": {"quantiles": [5, 1]}}, "'quantiles'.*1.*not allowed"),
    ({"vary": {"zscore": ["mean_std", "mode"]}}, "'zscore'.*'mode'"),
    ({"vary": {"outliers": [[1, 2, 3]]}}, "'outliers'.*not allowed"),
    ({"vary": {"universe": [7]}}, "'universe'.*not allowed"),
    ({"vary": {"horizons": [1, 1]}}, "'horizons'"),
    ({"vary": {"signal": []}}, "'signal'.*non-empty list"),
    ({"vary": {"signal": "earnings_yield"}}, "'signal'.*non-empty list"),
    ({"vary": {}}, r"\[vary\].*no dimensions"),
    ({"vary": {"signal": ["earnings_yield"]}, "extras": {}}, "unknown section"),
    ({"vary": {"signal": ["earnings_yield"]}, "study": {"n_quantiles": 99}}, r"\[study\].*Quantiles: 99"),
    ({"vary": {"signal": ["composite"]}, "study": {"composite_of": ["earnings_yield"]}}, "Composite of"),
], ids=["unknown-dimension", "bad-quantiles", "bad-zscore", "bad-outliers", "bad-universe", "repeated-horizon",
        "empty-list", "not-a-list", "no-dimensions", "unknown-section", "bad-shared-setting", "bad-combination"])
def test_validation_errors_name_the_dimension(data: dict, match: str) -> None:
    with pytest.raises(ConfigError, match=match):
        parse_grid(data, "g.toml")


def test_too_many_points_and_file_errors(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(grid_mod, "MAX_POINTS", 3)
    with pytest.raises(ConfigError, match="4 studies, more than 3"):
        parse_grid({"vary": {"quantiles": [3, 4], "zscore": ["mean_std", "median_mad"]}})
    with pytest.raises(ConfigError, match="cannot be read"):
        read_grid(tmp_path / "missing.toml")
    bad = tmp_path / "bad.toml"
    bad.write_text("[vary\nsignal = 1\n", encoding="utf-8")
    with pytest.raises(ConfigError, match="bad.toml: not a valid TOML"):
        read_grid(bad)


def test_dimensions_are_the_grid_names_of_the_settings_table() -> None:
    from valuesift.core.settings import SETTINGS
    from valuesift.core.sweep.grid import DIMENSIONS

    assert set(DIMENSIONS) == {s.grid for s in SETTINGS if s.grid is not None} - {"horizons"}
    for s in SETTINGS:   # a one-setting dimension sets exactly its row's setting
        if s.grid and s.grid not in ("horizons", "universe", "outliers"):
            assert list(DIMENSIONS[s.grid](s.default)) == [s.name], s.name
