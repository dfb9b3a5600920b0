"""The intake account of every corpus file, as plain JSON (pinned before intake was made faster).

    python -m tests.core.intake.report_snapshot --write   # regenerate tests/core/intake/intake_reports.json

Covers the demo files (``sample_data/``, and its prices and earnings saved again
as Parquet and as an Excel workbook), the awkward corpus (``tests/data/awkward``)
and the hostile corpus (``tests/data/hostile``, written by its ``make_corpus.py``).
For each file: every :class:`FileReport` field (counts, first locations per
reason, notes), or the error's reason, file, row and column; and a digest of
the tidy data (its CSV text, so a dtype change that keeps every value does not
count, a changed value does).  For the demo: the panel's prices, EPS and the
intake report's security table and alignment table.

The snapshot was written by the intake code as it stood before issue 15's
speed work; the test beside it asserts the faster intake gives the same account.
"""

from __future__ import annotations

import dataclasses
import hashlib
import importlib.util
import json
import sys
import tempfile
from pathlib import Path
from typing import Any

import pandas as pd

from valuesift.core.errors import IntakeError
from valuesift.core.intake import PanelOptions, ReadOptions, build_panel, read_table

__all__ = ["snapshot", "SNAPSHOT"]

ROOT = Path(__file__).resolve().parents[3]
SNAPSHOT = Path(__file__).resolve().parent / "intake_reports.json"
AWKWARD = ROOT / "tests" / "data" / "awkward"
HOSTILE = ROOT / "tests" / "data" / "hostile"
DEMO = ROOT / "sample_data"


def _jsonable(v: Any) -> Any:
    if isinstance(v, pd.DataFrame):
        return {"columns": [str(c) for c in v.columns], "rows": [[_jsonable(x) for x in r] for r in v.itertuples(index=False)]}
    if isinstance(v, (tuple, list)):
        return [_jsonable(x) for x in v]
    if v is None or isinstance(v, (bool, str)):
        return v
    if isinstance(v, pd.Timestamp):
        return v.isoformat()
    try:
        if pd.isna(v):
            return None
    except (TypeError, ValueError):
        pass
    if hasattr(v, "item"):
        v = v.item()
    if isinstance(v, float):
        return repr(v)
    return v if isinstance(v, int) else str(v)


def _digest(df: pd.DataFrame) -> str:
    return hashlib.sha256(df.to_csv(index=True).encode("utf-8")).hexdigest()


def _file(path: Path, options: ReadOptions) -> dict[str, Any]:
    try:
        pf = read_table(path, options=options)
    except IntakeError as err:
        return {"error": {"reason": err.reason.value, "file": err.file, "row": _jsonable(getattr(err, "row", None)),
                          "column": _jsonable(getattr(err, "column", None))}}
    rep = {f.name: _jsonable(getattr(pf.report, f.name)) for f in dataclasses.fields(pf.report)}
    return {"report": rep, "kind": pf.kind, "data_columns": [str(c) for c in pf.data.columns],
            "data_rows": int(len(pf.data)), "data_digest": _digest(pf.data)}


def _options(raw: dict[str, Any]) -> ReadOptions:
    kw = dict(raw)
    if "exclude_columns" in kw:
        kw["exclude_columns"] = tuple(kw["exclude_columns"])
    return ReadOptions(**kw)


def _hostile_folder(tmp: Path) -> Path:
    spec = importlib.util.spec_from_file_location("hostile_make_corpus", HOSTILE / "make_corpus.py")
    assert spec and spec.loader
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return Path(mod.write_corpus(tmp))


def _demo_variants(tmp: Path) -> dict[str, Path]:
    out = {}
    frames = {"prices": pd.read_csv(DEMO / "prices.csv", skiprows=3, thousands=","),  # the demo's own preamble
              "earnings": pd.read_csv(DEMO / "earnings.csv", sep=";", decimal=",", thousands=".")}
    for kind, df in frames.items():
        p = tmp / f"{kind}.parquet"
        df.to_parquet(p, index=False)
        out[f"{kind}.parquet"] = p
        x = tmp / f"{kind}.xlsx"
        df.head(60).to_excel(x, index=False)
        out[f"{kind}.xlsx"] = x
    return out


def snapshot() -> dict[str, Any]:
    """The whole account, keyed ``corpus/case``."""
    out: dict[str, Any] = {}
    for c in json.loads((AWKWARD / "cases.json").read_text(encoding="utf-8")):
        out[f"awkward/{c['id']}"] = _file(AWKWARD / c["file"], _options(c.get("options", {})))
    with tempfile.TemporaryDirectory() as d:
        folder = _hostile_folder(Path(d) / "hostile")
        for c in json.loads((HOSTILE / "cases.json").read_text(encoding="utf-8")):
            out[f"hostile/{c['id']}"] = _file(folder / c["file"], _options(c.get("options", {})))
        demo = sorted(DEMO.glob("*.csv"))
        for p in demo:
            out[f"demo/{p.name}"] = _file(p, ReadOptions())
        for name, p in _demo_variants(Path(d)).items():
            out[f"demo/{name}"] = _file(p, ReadOptions())
        panel = build_panel([read_table(p) for p in demo], PanelOptions())
        rep = panel.report
        out["demo/panel"] = {"prices": _digest(panel.prices), "eps": _digest(panel.eps),
                             "dividends": _digest(panel.dividend_matrix()),
                             "securities": _digest(rep.securities), "alignment": _jsonable(rep.alignment),
                             "suspected_splits": _jsonable(rep.suspected_splits), "notes": _jsonable(rep.panel_notes),
                             "files": [_jsonable(f.name) for f in rep.files]}
    return out


if __name__ == "__main__":
    snap = snapshot()
    if "--write" in sys.argv:
        SNAPSHOT.write_text(json.dumps(snap, indent=1, sort_keys=True) + "\n", encoding="utf-8")
        print(f"wrote {len(snap)} entries to {SNAPSHOT}")
    else:
        print(json.dumps(snap, indent=1, sort_keys=True)[:2000])
