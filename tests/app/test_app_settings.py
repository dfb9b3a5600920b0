"""Study settings from the browser to a StudyConfig, and what a panel offers the controls."""

from __future__ import annotations

import pandas as pd
import pytest

from valuesift.app.components.common import panel_choices
from valuesift.app.settings import DEFAULT_SETTINGS, config_from_settings
from valuesift.core.errors import ConfigError
from valuesift.core.panel import UserSignal
from valuesift.core.config import StudyConfig


def test_defaults_are_the_engine_defaults_where_they_overlap() -> None:
    cfg = config_from_settings(None)
    ref = StudyConfig()
    for k in ("signal", "universe", "horizons", "n_quantiles", "outlier_rule", "winsor_percentiles", "zscore_method",
              "sector_neutral", "reporting_lag_months", "dividend_treatment", "excess_over", "holding_months"):
        assert getattr(cfg, k) == getattr(ref, k), k


def test_controls_map_to_the_config() -> None:
    cfg = config_from_settings({**DEFAULT_SETTINGS, "universe": "sectors", "universe_sectors": ["Ports"],
                                "horizons": [12, 1], "winsor_lower": 2.5, "sector_neutral": True,
                                "min_history_months": "24", "excess_over": "universe"})
    assert cfg.universe_sectors == ("Ports",) and cfg.horizons == (1, 12)
    assert cfg.winsor_percentiles == (2.5, 97.5)
    assert cfg.sector_neutral and cfg.min_history_months == 24 and cfg.excess_over == "universe"
    # Sectors are ignored unless the universe is "sectors".
    assert config_from_settings({"universe": "all", "universe_sectors": ["Ports"]}).universe_sectors == ()


@pytest.mark.parametrize("bad, setting", [
    ({"n_quantiles": 1}, "n_quantiles"),
    ({"horizons": []}, "horizons"),
    ({"min_history_months": 2.5}, "min_history_months"),
    ({"winsor_lower": 60}, "winsor_percentiles"),
    ({"universe": "sectors", "universe_sectors": []}, "universe_sectors"),
])
def test_bad_settings_name_the_setting(bad: dict, setting: str) -> None:
    with pytest.raises(ConfigError) as err:
        config_from_settings(bad)
    assert err.value.setting == setting


def test_panel_choices_offer_sectors_and_user_signals(small_panel) -> None:  # type: ignore[no-untyped-def]
    sig = UserSignal("book yield", small_panel.prices * 0 + 1.0)
    ch = panel_choices(small_panel.with_(signals=(sig,)))
    assert ch["sectors"] == ["Farms", "Looms", "Mills", "Ports"]
    assert ch["signals"] == ["book yield"] and ch["holdings"] and ch["benchmark"]
    assert panel_choices(small_panel.with_(holdings=None, sectors=None))["sectors"] == []
    assert isinstance(small_panel.prices, pd.DataFrame)


def test_page_settings_come_from_the_settings_table() -> None:
    from valuesift.app.settings import HORIZON_CHOICES, PAGE_SETTINGS, bounds, options, shown_horizon
    from valuesift.core.settings import DEFAULT_HORIZONS, HORIZON_RANGE, SETTING_BY_NAME

    assert config_from_settings({}) == StudyConfig()            # every default is the table's
    for name in PAGE_SETTINGS:
        assert SETTING_BY_NAME[name].control != "none", name   # the table names a control for each page setting
    assert set(DEFAULT_HORIZONS) <= set(HORIZON_CHOICES)
    assert all(HORIZON_RANGE[0] <= h <= HORIZON_RANGE[1] for h in HORIZON_CHOICES)
    assert bounds("holding_months") == {"min": SETTING_BY_NAME["holding_months"].lo,
                                        "max": SETTING_BY_NAME["holding_months"].hi}
    assert [o["value"] for o in options("outlier_rule")] == list(SETTING_BY_NAME["outlier_rule"].codes)
    assert shown_horizon((1, 3, 12)) == 12 and shown_horizon((1, 3)) == 1 and shown_horizon((1, 3), 3) == 3
    assert shown_horizon((1, 12), "bad") == 12


def test_minimum_breadth_control_reaches_the_config() -> None:
    assert config_from_settings({"min_breadth": "25"}).min_breadth == 25
