"""Numerically degenerate studies: a clear message in the dashboard (study page alert) and in ``valuesift study``.

A date on which every name has the same signal has no rank correlation
(Spearman's rho is undefined for a constant variable; scipy.stats.spearmanr
returns nan for it): the IC of that date is missing, never 0.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from tests.job_support import wait_for_job
from scipy import stats

from valuesift.app import jobs_ui
from valuesift.app.cli import main
from valuesift.app.server import create_app
from tests.robustness._data import price_eps_files


def _write(folder: Path, name: str, raw: bytes) -> Path:
    p = folder / name
    p.write_bytes(raw)
    return p


@pytest.fixture(scope="module")
def files(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Path]:
    d = tmp_path_factory.mktemp("degenerate")
    p, e = price_eps_files(5, n_sec=12, n_months=48)
    out = {"prices": _write(d, "prices.csv", p), "eps": _write(d, "eps.csv", e)}
    pr = pd.read_csv(out["prices"], index_col=0)
    tied = (pr * 0.05).stack().rename("eps").reset_index()
    tied.columns = ["date", "code", "eps"]
    out["eps_tied"] = d / "eps_tied.csv"
    tied.to_csv(out["eps_tied"], index=False)
    one = pd.read_csv(out["eps"])
    day = one["date"].unique()[20]
    m = one["date"] == day
    one.loc[m, "eps"] = [float(pr.loc[day, c]) * 0.05 for c in one.loc[m, "code"]]
    out["eps_tied_one"] = d / "eps_tied_one.csv"
    one.to_csv(out["eps_tied_one"], index=False)
    out["tied_day"] = Path(str(day))
    p3, e3 = price_eps_files(6, n_sec=3, n_months=48)
    out["prices3"], out["eps3"] = _write(d, "prices3.csv", p3), _write(d, "eps3.csv", e3)
    p24, e24 = price_eps_files(7, n_sec=12, n_months=24)
    out["prices24"], out["eps24"] = _write(d, "prices24.csv", p24), _write(d, "eps24.csv", e24)
    out["sectors"] = _write(d, "sectors.csv", ("code,sector\n" + "".join(
        f"QZ{i:03d},{['Mills', 'Ports'][i % 2]}\n" for i in range(12))).encode())
    return out


# (case id, files, CLI settings, dashboard settings, reason words the message must hold)
CASES = [
    ("every_name_same_signal", ("prices", "eps_tied"), [], {}, "different signal values"),
    ("fewer_names_than_quantiles", ("prices3", "eps3"), ["--quantiles", "5"], {"n_quantiles": 5}, "5 quantiles"),
    ("horizon_longer_than_history", ("prices24", "eps24"), ["--horizons", "36"], {"horizons": [36]}, "36-month horizon"),
    ("universe_filter_leaves_nothing", ("prices", "eps", "sectors"), ["--universe", "sectors", "--sector", "Farms"],
     {"universe": "sectors", "universe_sectors": ["Farms"]}, "universe"),
]
_FLAG = {"prices": "--prices", "prices3": "--prices", "prices24": "--prices", "eps": "--earnings",
         "eps_tied": "--earnings", "eps3": "--earnings", "eps24": "--earnings", "sectors": "--sectors"}


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_study_command_exits_2_with_a_message(case, files, tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:  # type: ignore[no-untyped-def]
    _, used, cli, _, words = case
    argv = ["study", *[a for k in used for a in (_FLAG[k], str(files[k]))], *cli, "--out", str(tmp_path / "out"),
            "--no-bundle", "--quiet"]
    code = main(argv)
    err = capsys.readouterr().err
    assert code == 2
    assert "Not enough data" in err and words in err
    assert "Traceback" not in err
    assert not (tmp_path / "out" / "summary.json").exists()


def _wait(st, key: str, limit: float = 180.0):  # type: ignore[no-untyped-def]
    return wait_for_job(st, key, limit)


def _dashboard(tmp: Path, files: dict[str, Path], used: tuple[str, ...]):  # type: ignore[no-untyped-def]
    app = create_app(tmp / "ws")
    st = app.server.extensions["valuesift"]
    ids = [st.workspace.add_upload(files[k].name, files[k].read_bytes()).id for k in used]
    return app, st, {"ids": ids, "splits": []}


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_study_page_shows_the_message(case, files, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    _, used, _, settings, words = case
    app, st, sel = _dashboard(tmp_path, files, used)
    with app.server.test_request_context("/"):
        job, _poll_off, msg, _fs, _hidden = jobs_ui.launch(sel, settings, None)
        if job["status"] == "running":
            _wait(st, job["key"])
            job, *rest = jobs_ui.poll(job)
            msg = rest[3]
    assert job["status"] == "failed"
    assert "Not enough data" in msg.children and words in msg.children and "Traceback" not in msg.children
    assert msg.role == "alert" and msg.className.endswith("error")


def test_a_tied_date_has_a_missing_ic_not_zero(files, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    # scipy: a constant input has no rank correlation (nan), the reference for "missing, not 0"
    with pytest.warns(stats.ConstantInputWarning):
        assert np.isnan(stats.spearmanr([1.0, 1.0, 1.0], [1.0, 2.0, 3.0]).statistic)
    app, st, sel = _dashboard(tmp_path, files, ("prices", "eps_tied_one"))
    with app.server.test_request_context("/"):
        job, *_ = jobs_ui.launch(sel, {"horizons": [1]}, None)
        if job["status"] == "running":
            _wait(st, job["key"])
            job, *_ = jobs_ui.poll(job)
    assert job["status"] == "done"
    res = st.result(job["key"])
    day = pd.Timestamp(str(files["tied_day"]))
    assert np.isnan(res.rank_ic.loc[day, 1])
    assert res.rank_ic[1].notna().sum() > 30                     # the other dates are there
    # the same through the command line: the tied date's IC is blank in ic_by_date.csv
    out = tmp_path / "cli"
    assert main(["study", "--prices", str(files["prices"]), "--earnings", str(files["eps_tied_one"]),
                 "--horizons", "1", "--out", str(out), "--no-bundle", "--quiet"]) == 0
    table = pd.read_csv(out / "tables" / "ic_by_date.csv", parse_dates=["date"])
    row = table[(table["date"] == day) & (table["horizon"] == 1)]
    assert len(row) == 1 and np.isnan(row["rank_ic"].iloc[0])
