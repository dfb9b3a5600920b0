"""A sweep grid built from the dashboard's form controls: the crossing, the limit and the sentences naming a control."""

from __future__ import annotations

import pytest

from valuesift.core.config import StudyConfig
from valuesift.core.errors import ConfigError
from valuesift.core.settings import SETTING_BY_NAME
from valuesift.core.sweep import MAX_IN_PROCESS_POINTS, count_configurations, grid_from_controls, parse_grid
from valuesift.core.sweep.controls import FORM_DIMENSIONS, outlier_choices

ONE = {"signal": ["earnings_yield"], "horizons": [1, 3], "quantiles": [5], "outliers": ["winsorise:1:99"],
       "sector_neutral": ["False"], "reporting_lag": [0], "cost_bps": [0]}


def test_the_form_crosses_what_varies_and_shares_what_does_not() -> None:
    base = StudyConfig(min_breadth=7, universe="holdings", n_quantiles=8).to_dict()
    g = grid_from_controls({**ONE, "quantiles": [4, 5], "outliers": ["winsorise:5:95", "none"],
                            "sector_neutral": ["True"], "reporting_lag": [3], "cost_bps": [25]},
                           base=base, name="spring")
    assert g.name == "spring" and g.horizons == (1, 3)
    assert g.dimensions == ("quantiles", "outliers") and len(g.points) == 4 and g.n_tests == 8
    cfgs = [p.config for p in g.points]
    assert [c.n_quantiles for c in cfgs] == [4, 4, 5, 5]            # the base's 8 quantiles is overridden
    assert [(c.outlier_rule, c.winsor_percentiles) for c in cfgs[:2]] == [("winsorise", (5.0, 95.0)),
                                                                          ("none", (1.0, 99.0))]
    for c in cfgs:   # single choices are shared settings; the rest of the base is kept
        assert (c.sector_neutral, c.reporting_lag_months, c.transaction_cost_bps) == (True, 3, 25)
        assert (c.min_breadth, c.universe, c.horizons) == (7, "holdings", (1, 3))


def test_the_form_gives_the_same_points_as_the_grid_file_would() -> None:
    form = grid_from_controls({**ONE, "signal": ["earnings_yield", "dividend_yield"], "horizons": [3, 1],
                               "sector_neutral": ["False", "True"]})
    file = parse_grid({"study": {"winsor_percentiles": [1, 99], "reporting_lag_months": 0, "n_quantiles": 5,
                                 "transaction_cost_bps": 0},
                       "vary": {"signal": ["earnings_yield", "dividend_yield"], "horizons": [1, 3],
                                "sector_neutral": [False, True]}})
    assert [p.id for p in form.points] == [p.id for p in file.points]


def test_only_horizons_varied_still_makes_one_configuration() -> None:
    g = grid_from_controls({**ONE, "horizons": [1, 3, 12]})
    assert len(g.points) == 1 and g.horizons == (1, 3, 12) and g.points[0].config.signal == "earnings_yield"


def test_count_before_running_is_the_product_of_the_choices() -> None:
    assert count_configurations(ONE) == 1
    assert count_configurations({**ONE, "quantiles": [3, 4, 5], "cost_bps": [0, 10], "horizons": [1, 3, 6]}) == 6
    assert count_configurations({**ONE, "quantiles": []}) == 0


@pytest.mark.parametrize("dim", [d for d in FORM_DIMENSIONS])
def test_an_empty_control_is_refused_by_its_label(dim: str) -> None:
    with pytest.raises(ConfigError) as e:
        grid_from_controls({**ONE, dim: []})
    label = next(s.label for s in SETTING_BY_NAME.values() if s.grid == dim)
    assert str(e.value).startswith(f"{label}: nothing is chosen") and f"under {label}" in str(e.value)


def test_a_grid_above_the_limit_is_refused_naming_the_widest_control() -> None:
    too_many = {**ONE, "quantiles": list(range(2, 21)), "reporting_lag": list(range(0, 8))}   # 19 x 8 = 152
    assert count_configurations(too_many) > MAX_IN_PROCESS_POINTS
    with pytest.raises(ConfigError) as e:
        grid_from_controls(too_many)
    assert f"152 configurations, more than the {MAX_IN_PROCESS_POINTS}" in str(e.value)
    assert "under Quantiles (19 chosen)" in str(e.value) and e.value.setting == "n_quantiles"
    # exactly at the limit is allowed
    at = {**ONE, "quantiles": list(range(2, 17)), "reporting_lag": list(range(0, 8))}           # 15 x 8 = 120
    assert count_configurations(at) == MAX_IN_PROCESS_POINTS == len(grid_from_controls(at).points)


def test_the_file_limit_is_the_parse_grid_default_and_can_be_lowered() -> None:
    data = {"vary": {"n_quantiles": [3, 4, 5]}}
    assert len(parse_grid(data).points) == 3
    with pytest.raises(ConfigError, match="cross to 3 studies, more than 2"):
        parse_grid(data, max_points=2)


def test_a_value_a_study_does_not_allow_names_the_setting() -> None:
    with pytest.raises(ConfigError) as e:
        grid_from_controls({**ONE, "quantiles": [1, 5]})
    assert str(e.value).startswith("Quantiles: 1 is not allowed") and "[vary]" not in str(e.value)
    with pytest.raises(ConfigError) as e:
        grid_from_controls({**ONE, "horizons": [0, 1]})
    assert str(e.value).startswith("Horizons (months):")


def test_outlier_choices_are_words_from_the_settings_table() -> None:
    ch = dict(outlier_choices())
    assert ch["winsorise:1:99"] == "winsorise at percentiles 1 and 99"
    assert ch["none"] == SETTING_BY_NAME["outlier_rule"].words("none")
    assert set(ch) >= {"clip_robust_z", "none", "winsorise:5:95"}
    for code in ch:      # every offered choice makes a valid configuration
        assert len(grid_from_controls({**ONE, "outliers": [code]}).points) == 1


def test_the_hold_out_month_is_checked_in_words() -> None:
    from valuesift.core.sweep.controls import HOLDOUT_LABEL, check_holdout

    assert check_holdout("") is None and check_holdout(None) is None and check_holdout(" 2019-01 ") == "2019-01"
    with pytest.raises(ConfigError) as e:
        check_holdout("2019/01")
    assert str(e.value).startswith(f"{HOLDOUT_LABEL}: '2019/01' is not a month written YYYY-MM")


@pytest.mark.parametrize("dim", FORM_DIMENSIONS)
@pytest.mark.parametrize("odd", [{"a": 1}, ["x"], None, "x", float("inf"), float("nan"), -1, True, "winsorise:a:b",
                                 "winsorise:60:40", 10**30])
def test_values_no_control_offers_are_refused_in_words_never_with_a_traceback(dim: str, odd: object) -> None:
    """What a hand-made request could send: a ConfigError (a sentence) or a valid grid, nothing else."""
    for vals in ([odd, *ONE[dim]], odd):
        try:
            grid_from_controls({**ONE, dim: vals})
        except ConfigError as err:
            assert str(err).strip()


def test_a_grid_file_with_horizons_that_are_not_whole_numbers_names_them() -> None:
    with pytest.raises(ConfigError, match=r"\[vary\] 'horizons': \['x', 1\] are not all whole numbers of months"):
        parse_grid({"vary": {"horizons": ["x", 1], "n_quantiles": [3]}})
