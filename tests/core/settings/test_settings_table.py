"""The settings table and StudyConfig agree: every field has one row, defaults match, validation is lazy."""

from __future__ import annotations

from dataclasses import fields
from typing import get_args

import pytest

from valuesift.core.config import _CHOICE_ALIASES, StudyConfig
from valuesift.core.errors import ConfigError
from valuesift.core.settings import SETTING_BY_NAME, SETTINGS, describe_value


def test_one_row_per_field_with_the_same_default() -> None:
    names = [f.name for f in fields(StudyConfig)]
    assert sorted(names) == sorted(s.name for s in SETTINGS)
    assert len({s.name for s in SETTINGS}) == len(SETTINGS)
    cfg = StudyConfig()
    for s in SETTINGS:
        assert getattr(cfg, s.name) == s.default, s.name


def test_choice_rows_match_the_option_aliases() -> None:
    for name, alias in _CHOICE_ALIASES.items():
        assert set(SETTING_BY_NAME[name].codes) == set(get_args(alias)), name


def test_every_row_has_words_and_unique_flags() -> None:
    flags = [s.flag for s in SETTINGS if s.flag]
    assert len(flags) == len(set(flags))
    for s in SETTINGS:
        assert s.label and s.label[0].isupper() and "_" not in s.label, s.name
        assert s.help.endswith(".") and "_" not in s.help, s.name
        for code, words in s.choices:
            assert words and "_" not in words, (s.name, code)


def test_validation_collects_every_failure_before_raising() -> None:
    with pytest.raises(ConfigError) as err:
        StudyConfig(n_quantiles=1, holding_months=0, outlier_rule="trim")  # type: ignore[arg-type]
    got = [f["setting"] for f in err.value.failures]
    assert got == ["outlier_rule", "n_quantiles", "holding_months"]  # table order
    assert err.value.setting == "outlier_rule"
    msg = str(err.value)
    assert "Quantiles: 1 is not allowed" in msg and "n_quantiles" not in msg


def test_values_are_described_in_words() -> None:
    assert describe_value(SETTING_BY_NAME["sector_neutral"], True) == "on"
    assert describe_value(SETTING_BY_NAME["outlier_rule"], "clip_robust_z") == "clip at a robust z-score"
    assert describe_value(SETTING_BY_NAME["horizons"], (1, 12)) == "1, 12"
    assert describe_value(SETTING_BY_NAME["winsor_percentiles"], (1.0, 99.0)) == "1 and 99"
