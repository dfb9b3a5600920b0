"""Reproducibility: the same inputs and configuration give byte-identical summary.json and tables (two runs, two processes)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from valuesift.app.cli import main
from tests.robustness._data import price_eps_files
from tests.robustness._serve import ROOT

pytestmark = pytest.mark.slow


def _outputs(folder: Path) -> dict[str, bytes]:
    files = {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}
    assert "summary.json" in files and any(k.startswith("tables") for k in files)
    return files


def test_two_processes_and_two_runs_give_identical_bytes(tmp_path: Path) -> None:
    p, e = price_eps_files(9, n_sec=30, n_months=72)
    (tmp_path / "prices.csv").write_bytes(p)
    (tmp_path / "eps.csv").write_bytes(e)
    args = ["study", "--prices", str(tmp_path / "prices.csv"), "--earnings", str(tmp_path / "eps.csv"),
            "--horizons", "1,3,12", "--quantiles", "4", "--no-bundle", "--quiet"]
    outs = []
    for k in range(2):     # two separate processes (fresh interpreters, own hash seeds)
        out = tmp_path / f"proc{k}"
        r = subprocess.run([sys.executable, "-m", "valuesift.app.cli", *args, "--out", str(out)], cwd=ROOT,
                           capture_output=True, text=True, timeout=600, env=_env(k))
        assert r.returncode == 0, r.stderr
        outs.append(_outputs(out))
    for k in range(2):     # and two runs in this process
        out = tmp_path / f"run{k}"
        assert main([*args, "--out", str(out)]) == 0
        outs.append(_outputs(out))
    first = outs[0]
    for other in outs[1:]:
        assert other.keys() == first.keys()
        for name in first:
            assert other[name] == first[name], name


def _env(k: int) -> dict[str, str]:
    import os

    env = dict(os.environ)
    env["PYTHONHASHSEED"] = str(1000 + k)      # set-iteration order differs between the processes
    return env
