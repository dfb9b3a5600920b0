"""The command line: check, demo and study on the demo files and on broken input."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm

from valuesift.app.cli import main
from valuesift.app.words import SECURITY_FLAG_WORDS
from valuesift.core.settings import SETTING_BY_NAME

ROOT = Path(__file__).resolve().parents[3]
SAMPLE = ROOT / "sample_data"
DEMO_ARGS = [
    "--prices", str(SAMPLE / "prices.csv"),
    "--earnings", str(SAMPLE / "earnings.csv"),
    "--dividends", str(SAMPLE / "dividends.csv"),
    "--sectors", str(SAMPLE / "sectors.csv"),
    "--holdings", str(SAMPLE / "holdings.csv"),
    "--benchmark", str(SAMPLE / "benchmark.csv"),
    "--exclude", "Maren All-Share",
    "--confirm-split", "LUD24",
]


def test_check_demo_files_prints_complete_report(capsys: pytest.CaptureFixture[str]) -> None:
    files = sorted(str(p) for p in SAMPLE.iterdir())
    assert main(["check", *files]) == 0
    out, err = capsys.readouterr()
    for name in ("prices.csv", "earnings.csv", "dividends.csv", "sectors.csv", "holdings.csv", "benchmark.csv"):
        assert f"File {name}" in out
    assert "Securities: 121" in out  # 120 companies plus the index column, flagged below
    # flags in words, from the app's one table of words for the intake's flag codes
    assert SECURITY_FLAG_WORDS["suspected_split"].capitalize() in out and "LUD24" in out
    assert SECURITY_FLAG_WORDS["looks_like_index"].capitalize() in out  # the index column is pointed out
    assert "looks_like_index" not in out and "suspected_split" not in out  # no codes on the terminal
    assert "skipped README.md" in err


def test_check_unreadable_file_names_it_and_exits_2(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    bad = tmp_path / "prices.csv"
    bad.write_bytes(bytes(range(256)) * 8)
    good = SAMPLE / "sectors.csv"
    assert main(["check", str(bad), str(good)]) == 2
    out, err = capsys.readouterr()
    assert "prices.csv" in err and "Traceback" not in err
    assert "File sectors.csv" in out  # the readable file is still reported


def test_check_reports_every_readable_file_when_the_panel_fails(monkeypatch: pytest.MonkeyPatch,
                                                                capsys: pytest.CaptureFixture[str]) -> None:
    from valuesift.core.errors import IntakeError, Reason

    def _fail(*_a: object, **_k: object) -> None:
        raise IntakeError("prices.csv", Reason.UNREADABLE, "the panel cannot be built")

    monkeypatch.setattr("valuesift.core.intake.build_panel", _fail)
    assert main(["check", str(SAMPLE / "prices.csv"), str(SAMPLE / "sectors.csv")]) == 2
    out, err = capsys.readouterr()
    assert "File prices.csv" in out and "File sectors.csv" in out   # both reports, although the panel failed
    assert "the panel cannot be built" in err


def test_demo_command_reproduces_sample_data(tmp_path: Path) -> None:
    assert main(["demo", "--out", str(tmp_path)]) == 0
    for committed in SAMPLE.iterdir():
        assert (tmp_path / committed.name).read_bytes() == committed.read_bytes(), committed.name


@pytest.fixture(scope="module")
def demo_study(tmp_path_factory: pytest.TempPathFactory) -> Path:
    out = tmp_path_factory.mktemp("study")
    assert main(["study", *DEMO_ARGS, "--horizons", "1,3,12", "--quiet", "--out", str(out)]) == 0
    return out


def test_study_writes_documented_summary(demo_study: Path) -> None:
    summary = json.loads((demo_study / "summary.json").read_text(encoding="utf-8"))
    for key in ("1", "3", "12"):
        block = summary[key]
        assert block == summary["horizons"][key]
        for field in ("mean_ic", "ic_t", "n_dates", "spread", "spread_t"):
            assert isinstance(block[field], (int, float)) and math.isfinite(block[field]), (key, field)
    assert summary["config"]["horizons"] == [1, 3, 12]
    assert {i["name"] for i in summary["inputs"]} >= {"prices.csv", "earnings.csv", "dividends.csv"}
    assert all(len(i["sha256"]) == 64 for i in summary["inputs"])


def test_ic_by_date_table_matches_summary_and_statsmodels_hac(demo_study: Path) -> None:
    ic = pd.read_csv(demo_study / "tables" / "ic_by_date.csv")
    assert list(ic.columns) == ["date", "horizon", "rank_ic", "pearson_ic", "breadth"]
    summary = json.loads((demo_study / "summary.json").read_text(encoding="utf-8"))
    for h in (1, 3, 12):
        series = ic.loc[ic["horizon"] == h, "rank_ic"].dropna().to_numpy()
        assert len(series) == summary[str(h)]["n_dates"]
        assert np.isclose(series.mean(), summary[str(h)]["mean_ic"], atol=1e-12)
        # The headline t recomputed with statsmodels (OLS on a constant, HAC, no small-sample correction) at
        # the lag count the study reports: uniform kernel (Hansen & Hodrick 1980) for h > 1, Bartlett for h = 1.
        lags = summary[str(h)]["ic_lags"]
        kernel = "uniform" if h > 1 else "bartlett"
        assert summary[str(h)]["ic_se_method"] == ("hansen_hodrick" if h > 1 else "newey_west")
        fit = sm.OLS(series, np.ones_like(series)).fit(cov_type="HAC", cov_kwds={"maxlags": lags, "kernel": kernel,
                                                                               "use_correction": False})
        assert np.isclose(fit.tvalues[0], summary[str(h)]["ic_t"], rtol=1e-9)
        assert lags >= h - 1  # overlapping h-month returns need at least h-1 lags (Hansen & Hodrick 1980)


def test_study_recovers_planted_relation(demo_study: Path) -> None:
    from valuesift.core.demo import DEMO_TRUTH, ic_standard_error

    summary = json.loads((demo_study / "summary.json").read_text(encoding="utf-8"))
    se = ic_standard_error(119, summary["1"]["n_dates"])
    assert abs(summary["1"]["mean_ic"] - DEMO_TRUTH["spearman_ic"]) < 4 * se


def test_study_with_bad_setting_gives_plain_error(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    code = main(["study", *DEMO_ARGS, "--quantiles", "1", "--quiet", "--out", str(tmp_path)])
    assert code == 2
    err = capsys.readouterr().err
    # the setting by its label from the settings table (words, not the field name)
    assert SETTING_BY_NAME["n_quantiles"].label in err and "n_quantiles" not in err and "Traceback" not in err


def test_study_missing_file_gives_plain_error(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    code = main(["study", "--prices", str(tmp_path / "nope.csv"), "--quiet", "--out", str(tmp_path)])
    assert code == 2
    err = capsys.readouterr().err
    assert "nope.csv" in err and "Traceback" not in err


def test_reading_choices_on_the_command_line_reach_the_reader(capsys: pytest.CaptureFixture[str]) -> None:
    # The flags named by intake's messages (core.intake.options.READ_CHOICES) exist and set their choice.
    from valuesift.app.cli import build_parser
    from valuesift.app.cli_options import read_options_from_args
    from valuesift.core.intake.options import READ_CHOICES

    parser = build_parser()
    args = parser.parse_args(["study", "--prices", "p.csv", "--out", "o", "--date-column", "asof",
                              "--security-column", "code", "--value-column", "close", "--earnings-form", "pe",
                              "--duplicates", "first"])
    opts = read_options_from_args(args, kind="earnings")
    assert (opts.date_column, opts.security_column, opts.value_column) == ("asof", "code", "close")
    assert opts.earnings_form == "pe" and opts.duplicate_rule == "first"
    assert read_options_from_args(args, kind="prices").earnings_form == "auto"
    with pytest.raises(SystemExit):
        parser.parse_args(["study", "--help"])
    study_help = capsys.readouterr().out
    for _, flag in READ_CHOICES.values():
        if flag:
            assert flag in study_help, flag
