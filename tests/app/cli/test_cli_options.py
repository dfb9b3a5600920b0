"""The command line's study options are generated from the settings table; every option has help."""

from __future__ import annotations

import argparse

import pytest

from valuesift.app.cli import build_parser
from valuesift.app.cli_options import DEST_PREFIX, config_from_args
from valuesift.core.config import StudyConfig
from valuesift.core.settings import SETTINGS, describe_value


def _subparsers(parser: argparse.ArgumentParser) -> dict[str, argparse.ArgumentParser]:
    act = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))  # noqa: SLF001 (argparse API)
    return dict(act.choices)


def test_every_option_of_every_command_has_help() -> None:
    parser = build_parser()
    for name, sub in {"": parser, **_subparsers(parser)}.items():
        for act in sub._actions:
            if isinstance(act, (argparse._HelpAction, argparse._SubParsersAction)):
                continue
            assert act.help and act.help != argparse.SUPPRESS, (name, act.option_strings or act.dest)
        assert sub.format_help()  # every help text formats (a bare % in a help string breaks --help)


def test_study_options_are_the_table_rows_with_their_help_and_default() -> None:
    study = _subparsers(build_parser())["study"]
    by_flag = {s: a for a in study._actions for s in a.option_strings}
    for st in SETTINGS:
        if st.flag is None:
            continue
        act = by_flag[st.flag]
        assert act.dest == DEST_PREFIX + st.name
        assert st.help.replace("%", "%%")[:40] in act.help and "Default:" in act.help
        if st.name != "signal":
            assert f"Default: {describe_value(st, st.default)}" in act.help.replace("%%", "%")
        if st.kind == "choice":
            assert list(act.choices) == list(st.codes)


ARGS = ["study", "--prices", "p.csv", "--out", "o"]


class _Panel:
    signals: tuple = ()


def test_no_setting_flag_gives_the_table_defaults() -> None:
    args = build_parser().parse_args(ARGS)
    assert config_from_args(args, _Panel()) == StudyConfig()


@pytest.mark.parametrize("flags, expect", [
    (["--quantiles", "10", "--horizons", "12,1"], {"n_quantiles": 10, "horizons": (1, 12)}),
    (["--winsorise", "2,98"], {"winsor_percentiles": (2.0, 98.0)}),               # earlier spelling kept
    (["--winsor", "2,98"], {"winsor_percentiles": (2.0, 98.0)}),
    (["--dividends-uninvested"], {"dividend_treatment": "uninvested"}),          # earlier spelling kept
    (["--dividends-as", "uninvested"], {"dividend_treatment": "uninvested"}),
    (["--sector-neutral", "--fm-sector-dummies"], {"sector_neutral": True, "fm_sector_dummies": True}),
    (["--universe", "sectors", "--sector", "Kilns", "--sector", "Quays"],
     {"universe": "sectors", "universe_sectors": ("Kilns", "Quays")}),
    (["--hac-lags", "overlap", "--comparison", "benchmark", "--eps-max-age", "9"],
     {"hac_lag_rule": "overlap", "comparison": "benchmark", "eps_max_age_months": 9}),
    (["--signal-kind", "composite", "--composite-of", "earnings_yield,dividend_yield"],
     {"signal": "composite", "composite_of": ("earnings_yield", "dividend_yield")}),
], ids=["quantiles-horizons", "winsorise-old", "winsor", "uninvested-old", "dividends-as", "booleans", "sectors",
        "new-flags", "composite"])
def test_flags_set_their_setting(flags: list[str], expect: dict) -> None:
    args = build_parser().parse_args(ARGS + flags)
    assert config_from_args(args, _Panel()) == StudyConfig(**expect)
