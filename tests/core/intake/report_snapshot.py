"""The intake account of every corpus file, as plain JSON (pinned before intake was made faster).

    python -m tests.core.intake.report_snapshot --write   # regenerate tests/core/intake/intake_reports.json

Covers the demo files (``sample_data/``, and its prices and earnings saved again
as Parquet and as an Excel workbook), the awkward corpus (``tests/data/awkward``),
the hostile corpus (``tests/data/hostile``, written by its ``make_corpus.py``) and
a few invented files written here, large enough (over a million characters) to
take the fast readers, with messy cells among the numbers.
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


def _file(path: Path, options: ReadOptions, lean: bool = False) -> dict[str, Any]:
    try:
        pf = read_table(path, options=options, lean=lean)
    except IntakeError as err:
        return {"error": {"reason": err.reason.value, "file": err.file, "row": _jsonable(getattr(err, "row", None)),
                          "column": _jsonable(getattr(err, "column", None))}}
    rep = {f.name: _jsonable(getattr(pf.report, f.name)) for f in dataclasses.fields(pf.report)}
    data = pf.data  # a lean read's categorical columns as the plain values they hold (as stored)
    data = data.astype({c: data[c].cat.categories.dtype for c in data.columns if isinstance(data[c].dtype, pd.CategoricalDtype)})
    return {"report": rep, "kind": pf.kind, "data_columns": [str(c) for c in pf.data.columns],
            "data_rows": int(len(pf.data)), "data_digest": _digest(data)}


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


def _generated(tmp: Path) -> dict[str, tuple[Path, ReadOptions]]:
    """Invented files large enough for the fast readers (over a million characters), with messy cells."""
    import numpy as np

    rng = np.random.default_rng(15)
    out: dict[str, tuple[Path, ReadOptions]] = {}
    n_t, n_s = 420, 320
    dates = pd.date_range("1990-01-31", periods=n_t, freq="ME")
    vals = np.exp(rng.normal(3, 1, size=(n_t, n_s)))
    text = np.char.mod("%.4f", vals).astype(object)
    u = rng.random((n_t, n_s))
    text[u < 0.02] = ""
    text[(u >= 0.02) & (u < 0.025)] = "n.a."
    text[(u >= 0.025) & (u < 0.027)] = "(12.5)"
    text[(u >= 0.027) & (u < 0.028)] = "abc"
    text[(u >= 0.028) & (u < 0.029)] = "1,234.50"
    text[(u >= 0.029) & (u < 0.030)] = "-3"
    text[(u >= 0.030) & (u < 0.031)] = "inf"
    text[(u >= 0.031) & (u < 0.032)] = " 7.25 "
    wide = pd.DataFrame(text, columns=[f"GEN{j:03d}" for j in range(n_s)])
    wide.insert(0, "date", dates.strftime("%Y-%m-%d"))
    wide.loc[5, "date"] = "not a date"
    p = tmp / "gen_wide_prices.csv"
    wide.to_csv(p, index=False)
    out["gen_wide_prices.csv"] = (p, ReadOptions(kind="prices"))
    p = tmp / "gen_wide_eps_semicolon.csv"
    wide.map(lambda v: v.replace(",", "").replace(".", ",") if isinstance(v, str) else v).to_csv(p, index=False, sep=";")
    out["gen_wide_eps_semicolon.csv"] = (p, ReadOptions(kind="earnings"))
    long = pd.DataFrame({"date": np.repeat(dates.strftime("%Y-%m-%d"), 160),
                         "code": np.tile([f"gen{j:03d} x" for j in range(160)], n_t),
                         "value": text[:, :160].ravel()})
    long.loc[10, "code"] = ""
    long = pd.concat([long, long.iloc[[3, 4]]], ignore_index=True)  # two duplicate entries
    p = tmp / "gen_long_prices.csv"
    long.to_csv(p, index=False)
    out["gen_long_prices.csv"] = (p, ReadOptions(kind="prices", id_cleanup="first_token"))
    num = np.where(u < 0.02, np.nan, vals)
    num[0, 3] = np.inf
    num[1, 4] = -2.0
    pq = pd.DataFrame(num[:, :200], columns=[f"GEN{j:03d}" for j in range(200)])
    pq.insert(0, "date", dates.date)
    pq["GENINT"] = np.arange(n_t, dtype="int64") + 1
    pq["GENTXT"] = np.where(u[:, 0] < 0.1, "n.a.", np.char.mod("%.2f", vals[:, 0]).astype(object))
    pq["GENNULL"] = np.nan
    p = tmp / "gen_wide_prices.parquet"
    pq.to_parquet(p, index=False)
    out["gen_wide_prices.parquet"] = (p, ReadOptions(kind="prices"))
    lp = pd.DataFrame({"date": np.repeat(dates.values, 50), "security": np.tile([f"GEN{j:03d}" for j in range(50)], n_t),
                       "value": num[:, :50].ravel()})
    p = tmp / "gen_long_prices.parquet"
    lp.to_parquet(p, index=False)
    out["gen_long_prices.parquet"] = (p, ReadOptions(kind="prices"))
    return out


def snapshot(lean: bool = False) -> dict[str, Any]:
    """The whole account, keyed ``corpus/case``; ``lean``: every file read the dashboard's way
    (``read_table(..., lean=True)``), which must give the same account (the panels are built as before)."""
    out: dict[str, Any] = {}
    for c in json.loads((AWKWARD / "cases.json").read_text(encoding="utf-8")):
        out[f"awkward/{c['id']}"] = _file(AWKWARD / c["file"], _options(c.get("options", {})), lean)
    with tempfile.TemporaryDirectory() as d:
        folder = _hostile_folder(Path(d) / "hostile")
        for c in json.loads((HOSTILE / "cases.json").read_text(encoding="utf-8")):
            out[f"hostile/{c['id']}"] = _file(folder / c["file"], _options(c.get("options", {})), lean)
        demo = sorted(DEMO.glob("*.csv"))
        for p in demo:
            out[f"demo/{p.name}"] = _file(p, ReadOptions(), lean)
        for name, p in _demo_variants(Path(d)).items():
            out[f"demo/{name}"] = _file(p, ReadOptions(), lean)
        gen = _generated(Path(d))
        for name, (p, opts) in gen.items():
            out[f"generated/{name}"] = _file(p, opts, lean)
        for prices, eps in (("gen_wide_prices.csv", "gen_wide_eps_semicolon.csv"),
                            ("gen_wide_prices.parquet", "gen_wide_eps_semicolon.csv")):
            panel = build_panel([read_table(gen[prices][0], options=gen[prices][1]),
                                 read_table(gen[eps][0], options=gen[eps][1])], PanelOptions())
            out[f"generated/panel {prices}"] = {"prices": _digest(panel.prices), "eps": _digest(panel.eps),
                                                "securities": _digest(panel.report.securities),
                                                "alignment": _jsonable(panel.report.alignment),
                                                "notes": _jsonable(panel.report.panel_notes)}
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
