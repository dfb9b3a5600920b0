"""The awkward-file corpus (tests/data/awkward/): expected report figures or errors per case.

Every expected figure in cases.json was counted by hand from the file texts in
make_corpus.py (not produced by running intake).  Errors are checked by reason
code and location fields, not wording.
"""

from __future__ import annotations

import json
import pathlib

import numpy as np
import pandas as pd
import pytest

from valuesift.core.errors import IntakeError
from valuesift.core.intake import PanelOptions, ReadOptions, build_panel, read_table

HERE = pathlib.Path(__file__).resolve().parents[2] / "data" / "awkward"
CASES = json.loads((HERE / "cases.json").read_text(encoding="utf-8"))
FIELDS = ("kind", "layout", "header_row", "encoding", "delimiter", "date_order", "date_ambiguous", "decimal",
          "n_securities", "cells_total", "cells_parsed", "cells_blank", "cells_unparseable", "cells_dropped",
          "frequency", "security_column", "value_column", "value_form", "date_column")


def _options(raw: dict) -> ReadOptions:
    kw = dict(raw)
    if "exclude_columns" in kw:
        kw["exclude_columns"] = tuple(kw["exclude_columns"])
    return ReadOptions(**kw)


def test_corpus_is_large_enough() -> None:
    files = {c["file"] for c in CASES}
    assert len(files) >= 24
    assert all(c.get("description") for c in CASES)
    for f in files:
        assert (HERE / f).exists(), f


@pytest.mark.parametrize("case", CASES, ids=[c["id"] for c in CASES])
def test_awkward_case(case: dict) -> None:
    opts = _options(case.get("options", {}))
    exp = case["expect"]
    path = HERE / case["file"]
    if "error" in exp:
        with pytest.raises(IntakeError) as info:
            read_table(path, options=opts)
        err = info.value
        assert err.reason.value == exp["error"]["reason"]
        assert err.file == case["file"]
        for key in ("row", "column"):
            if key in exp["error"]:
                assert getattr(err, key) == exp["error"][key]
        assert err.hint  # every error says what to change
        return
    pf = read_table(path, options=opts)
    rep = pf.report
    # the accounting identity holds for every file
    assert rep.cells_total == rep.cells_parsed + rep.cells_blank + rep.cells_unparseable + rep.cells_dropped
    for key in FIELDS:
        if key in exp:
            assert getattr(rep, key) == exp[key], key
    for reason, count in exp.get("by_reason", {}).items():
        assert rep.count(reason) == count, reason
    if "by_reason" in exp:
        assert set(rep.by_reason["reason"]) == set(exp["by_reason"])
    for reason, row, column in exp.get("examples", []):
        ex = rep.examples[(rep.examples["reason"] == reason)]
        assert ((ex["row"] == row) & (ex["column"] == column)).any(), (reason, row, column, ex)
    if "suspect_columns" in exp:
        assert list(rep.suspect_columns) == exp["suspect_columns"]
    data = pf.data
    if "n_values" in exp:
        assert len(data) == exp["n_values"]
    for item in exp.get("values", []):
        if pf.kind in ("sectors",):
            sec, val = item
            assert data.set_index("security")["sector"][sec] == val
        elif pf.kind == "holdings":
            sec, val = item
            assert data.set_index("security")["weight"][sec] == pytest.approx(val)
        else:
            sec, date, val = item
            hit = data[(data["security"] == sec) & (data["date"] == pd.Timestamp(date))]
            assert len(hit) == 1, (sec, date)
            assert hit["value"].iloc[0] == pytest.approx(val)
    if "panel" in exp:
        _check_panel(pf, exp["panel"])


def _check_panel(pf, exp: dict) -> None:
    files = [pf]
    if "prices" in exp:
        files.insert(0, read_table(HERE / exp["prices"], options=ReadOptions(kind="prices")))
    panel = build_panel(files, PanelOptions())
    rep = panel.report
    for reason, count in exp.get("alignment", {}).items():
        got = rep.alignment[(rep.alignment["reason"] == reason) & (rep.alignment["file"] == pf.name)]["count"].sum()
        assert int(got) == count, reason
    for sec, flag in exp.get("flags", {}).items():
        assert sec in rep.flagged(flag)
    for sec, date in exp.get("nan", []):
        assert np.isnan(panel.prices.loc[pd.Timestamp(date), sec])
    if "calendar" in exp:
        assert len(panel.prices.index) == exp["calendar"]
    if "sectors_len" in exp:
        assert len(panel.sectors) == exp["sectors_len"]
    if "holdings_total" in exp:
        assert rep.holdings_total == pytest.approx(exp["holdings_total"])
    if exp.get("note_mentions_file"):
        assert any(pf.name in n for n in rep.panel_notes)
