"""The hostile-file corpus (tests/data/hostile/): each case ends in a specific IntakeError or a documented handling.

The expected outcomes in cases.json were worked out by hand from the bytes
that make_corpus.py writes; errors are checked by reason code, file name and
location (row/column), not wording.  Reading times are printed (``-s``) for the
README, never asserted.
"""

from __future__ import annotations

import json
import time

import numpy as np
import pandas as pd
import pytest

from valuesift.core.errors import IntakeError
from valuesift.core.intake import PanelOptions, ReadOptions, build_panel, read_table
from tests.robustness.conftest import HOSTILE

CASES = json.loads((HOSTILE / "cases.json").read_text(encoding="utf-8"))
TIMES: dict[str, float] = {}


def _options(raw: dict) -> ReadOptions:
    return ReadOptions(**raw)


def test_corpus_has_at_least_40_distinct_cases(hostile_dir) -> None:  # type: ignore[no-untyped-def]
    ids = [c["id"] for c in CASES]
    assert len(ids) == len(set(ids)) >= 40
    assert all(c.get("description") for c in CASES)
    for c in CASES:
        assert (hostile_dir / c["file"]).exists(), c["file"]


@pytest.mark.parametrize("case", CASES, ids=[c["id"] for c in CASES])
def test_hostile_case(case: dict, hostile_dir) -> None:  # type: ignore[no-untyped-def]
    opts = _options(case.get("options", {}))
    exp = case["expect"]
    path = hostile_dir / case["file"]
    t0 = time.perf_counter()
    if "error" in exp:
        with pytest.raises(IntakeError) as info:
            read_table(path, options=opts)
        TIMES[case["id"]] = time.perf_counter() - t0
        err = info.value
        assert err.reason.value == exp["error"]["reason"]
        assert err.file == case["file"]                  # the message names the file as the user knows it
        for key in ("row", "column"):
            if key in exp["error"]:
                assert getattr(err, key) == exp["error"][key], key
        assert err.hint                                  # and says what to change
        assert "Traceback" not in str(err)
        if "not_in_message" in exp:
            assert exp["not_in_message"] not in str(err)
        return
    pf = read_table(path, options=opts)
    TIMES[case["id"]] = time.perf_counter() - t0
    rep = pf.report
    # the accounting identity holds for every file (DEVELOPERS.md, "Accounting")
    assert rep.cells_total == rep.cells_parsed + rep.cells_blank + rep.cells_unparseable + rep.cells_dropped
    for key in ("kind", "encoding", "cells_total", "cells_parsed"):
        if key in exp:
            assert getattr(rep, key) == exp[key], key
    if "by_reason" in exp:
        assert {r: rep.count(r) for r in exp["by_reason"]} == exp["by_reason"]
        assert set(rep.by_reason["reason"]) == set(exp["by_reason"])
    for reason, row, column in exp.get("examples", []):
        ex = rep.examples[rep.examples["reason"] == reason]
        assert ((ex["row"] == row) & (ex["column"] == column)).any(), (reason, row, column)
    data = pf.data
    if "n_values" in exp:
        assert len(data) == exp["n_values"]
    if "securities" in exp:
        assert sorted(set(data["security"])) == sorted(exp["securities"])   # identifiers kept exactly as text
    if "longest_security" in exp:
        assert data["security"].str.len().max() == exp["longest_security"]
    if "note" in exp:
        assert any(exp["note"] in n for n in rep.notes)
    for sec, date, val in exp.get("values", []):
        hit = data[(data["security"] == sec) & (data["date"] == pd.Timestamp(date))]
        assert len(hit) == 1 and hit["value"].iloc[0] == pytest.approx(val)
    if "panel_error" in exp:
        with pytest.raises(IntakeError) as info:
            build_panel([pf], PanelOptions())
        assert info.value.reason.value == exp["panel_error"]
    if "panel" in exp:
        _check_panel(pf, exp["panel"], hostile_dir)


def _check_panel(pf, exp: dict, folder) -> None:  # type: ignore[no-untyped-def]
    files = [pf]
    if "prices" in exp:
        files.insert(0, read_table(folder / exp["prices"], options=ReadOptions(kind="prices")))
    panel = build_panel(files, PanelOptions())
    rep = panel.report
    if "calendar" in exp:
        assert len(panel.prices.index) == exp["calendar"]
    if exp.get("sorted"):
        assert panel.prices.index.is_monotonic_increasing
    if "securities" in exp:
        assert panel.prices.shape[1] == exp["securities"]
    for reason, count in exp.get("alignment", {}).items():
        got = rep.alignment[(rep.alignment["reason"] == reason) & (rep.alignment["file"] == pf.name)]["count"].sum()
        assert int(got) == count, reason
    if "sectors_len" in exp:
        assert len(panel.sectors) == exp["sectors_len"]
    if "holdings_total" in exp:
        assert rep.holdings_total == pytest.approx(exp["holdings_total"])
    if exp.get("note_mentions_file"):
        assert any(pf.name in n for n in rep.panel_notes)
    assert np.isfinite(panel.prices.to_numpy()[~np.isnan(panel.prices.to_numpy())]).all()


def test_external_entity_never_reaches_the_data(hostile_dir) -> None:  # type: ignore[no-untyped-def]
    """Whatever the xlsx reader does with a file entity, the file's content never appears (common practice: no XXE)."""
    import socket

    secret = open("/etc/hostname").read().strip() if __import__("os").path.exists("/etc/hostname") else socket.gethostname()
    try:
        pf = read_table(hostile_dir / "external_entity.xlsx", options=ReadOptions(kind="prices"))
    except IntakeError as err:
        assert secret not in str(err)
    else:  # pragma: no cover - the readers in use refuse the DTD
        assert not pf.data.astype(str).apply(lambda c: c.str.contains(secret, regex=False)).any().any()


def test_print_reading_times() -> None:
    """Prints the slowest cases (runs last in this module; figures for the README)."""
    if not TIMES:
        pytest.skip("no case timed in this run")
    worst = sorted(TIMES.items(), key=lambda kv: -kv[1])[:5]
    print("\nhostile corpus: %d cases read, slowest: %s" % (len(TIMES), ", ".join(f"{k} {v:.2f}s" for k, v in worst)))
