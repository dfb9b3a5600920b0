"""The app's words for the core's codes: the screen's flags, quantiles and P/E, the intake's flags, the settings."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from valuesift.app.words import (
    SCREEN_FLAG_WORDS,
    SECURITY_FLAG_WORDS,
    intake_report_lines,
    quantile_words,
    screen_in_words,
    settings_frame,
)
from valuesift.core.config import StudyConfig
from valuesift.core.intake.flags import SECURITY_FLAGS
from valuesift.core.reporting.screen import SCREEN_FLAGS
from valuesift.core.settings import SETTINGS


def test_every_code_has_words() -> None:
    assert set(SCREEN_FLAG_WORDS) == set(SCREEN_FLAGS)
    assert set(SECURITY_FLAGS) <= set(SECURITY_FLAG_WORDS)


@pytest.mark.parametrize("q, n, words", [(5, 5, "5 of 5 (cheapest)"), (1, 5, "1 of 5 (dearest)"), (3, 5, "3 of 5"),
                                          (10, 10, "10 of 10 (cheapest)"), (np.nan, 5, "")],
                         ids=["cheapest", "dearest", "middle", "deciles", "none"])
def test_quantile_words(q: float, n: int, words: str) -> None:
    assert quantile_words(q, n) == words


def test_screen_in_words_words_the_codes_and_keeps_the_numbers(small_result) -> None:  # type: ignore[no-untyped-def]
    raw = small_result.screen
    sc = screen_in_words(raw)
    pd.testing.assert_series_equal(sc["zscore"], raw["zscore"])
    assert sc.attrs["date"] == raw.attrs["date"]
    n = small_result.config.n_quantiles
    assert sc["quantile_label"].iloc[0] == f"{n} of {n} (cheapest)"
    for codes, words in zip(raw["flags"], sc["flags"]):
        n_codes = len([c for c in codes.split(";") if c])
        assert len([w for w in words.split("; ") if w]) == n_codes     # one phrase per code
        assert not set(SCREEN_FLAGS) & set(words.split("; "))          # no code left in the words
    # QZX03 was built with negative EPS throughout (tests/app/conftest.py): an EPS but no meaningful P/E
    assert sc.loc["QZX03", "pe_display"] == "not meaningful"
    assert SCREEN_FLAG_WORDS["eps_not_positive"] in sc.loc["QZX03", "flags"]


def test_settings_frame_has_every_setting_by_label() -> None:
    f = settings_frame(StudyConfig(n_quantiles=10, hac_lag_rule="overlap"))
    assert f["Setting"].tolist() == [s.label for s in SETTINGS]
    v = dict(zip(f["Setting"], f["Value"]))
    assert v["Quantiles"] == "10" and v["Lags of the standard errors"] == "horizon overlap"


def test_intake_lines_name_flags_in_words(demo_dir) -> None:  # type: ignore[no-untyped-def]
    from valuesift.core.intake import PanelOptions, build_panel, read_table

    files = [read_table(p, name=p.name) for p in sorted(demo_dir.glob("*.csv"))]
    rep = build_panel(files, PanelOptions()).report
    text = "\n".join(intake_report_lines(rep))
    assert f"Securities: {len(rep.securities)}" in text
    for flag in SECURITY_FLAGS:
        if rep.flagged(flag):
            assert SECURITY_FLAG_WORDS[flag].capitalize() in text
    assert not any(code in text for code in SECURITY_FLAGS if "_" in code)


def test_every_intake_reason_code_has_words() -> None:
    from valuesift.app.words import REASON_WORDS, reason_words
    from valuesift.core.errors import Reason

    assert {r.value for r in Reason} <= set(REASON_WORDS), {r.value for r in Reason} - set(REASON_WORDS)
    assert reason_words(Reason.DIVIDEND_WITHOUT_PRICE) == "dividend in a month without a price"
    assert all("_" not in w for w in REASON_WORDS.values())


def test_study_stages_have_words(small_result) -> None:  # type: ignore[no-untyped-def]
    from valuesift.app.words import STAGE_WORDS

    stages = set(small_result.date_notes["stage"]) if len(small_result.date_notes) else set()
    assert stages <= set(STAGE_WORDS)
    assert {"signal", "ic", "quantiles"} <= set(STAGE_WORDS)
