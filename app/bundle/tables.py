"""Every table behind the bundle's charts, as CSV and as one XLSX workbook (formula-safe, reproducible).

Text cells that a spreadsheet would read as a formula (starting with ``=``,
``+``, ``-``, ``@``, a tab or a carriage return) get a leading ``'`` (OWASP,
"CSV Injection"); numeric columns stay numeric.  The XLSX is written with
fixed document dates and fixed zip entry times, so the same tables give the
same bytes.
"""

from __future__ import annotations

import csv
import io
import re
import zipfile
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from valuesift.app.bundle.stability_tables import STABILITY_TABLES, stability_tables
from valuesift.app.screen_table import neutralise
from valuesift.app.words import screen_in_words
from valuesift.core.reporting.summary import summary_dict
from valuesift.core.result import StudyResult
from valuesift.core.reporting.summary import ic_by_date_frame

__all__ = ["TABLES", "TABLE_KEYS", "result_tables", "write_csv", "xlsx_bytes", "FIXED_ZIP_TIME", "SETTINGS_SHEET"]

#: Zip entry time used for every archive the bundle writes (the zip format's earliest date).
FIXED_ZIP_TIME = (1980, 1, 1, 0, 0, 0)

#: table key -> what it holds (for the README and the Export page).
TABLES: dict[str, str] = {
    "ic_by_date": "rank and Pearson IC and breadth per signal date and horizon (as the study command writes it)",
    "ic_summary": "IC statistics per horizon: mean, headline t (Hansen-Hodrick above one month) and interval, Bartlett and non-overlapping checks, independent periods, verdict, hit share, dates",
    "rolling_ic": "rolling mean rank IC per date over 12 and 36 dates, per horizon",
    "quantile_returns": "mean forward return of each quantile per formation date and horizon (1 = dearest)",
    "quantile_means": "time-mean forward return per quantile and horizon, per period and annualised",
    "quantile_counts": "names in each quantile per date",
    "spreads": "cheapest-minus-dearest forward return per formation date and horizon",
    "spread_summary": "spread statistics per horizon: mean, headline t and interval, Bartlett check, verdict, annualised, monotonicity",
    "fm_slopes": "Fama-MacBeth slope on the signal z-score per date and horizon",
    "fm_summary": "Fama-MacBeth mean slope per horizon with its headline t",
    "backtest_returns": "monthly net returns, growth of 1 and drawdown of each backtest portfolio",
    "backtest_stats": "annual return, volatility, Sharpe ratio, worst drawdown, hit rate per portfolio",
    "cohorts": "each cohort of the cheapest quantile against the comparison over its holding period",
    "screen": "the screen on the as-of date: every security with its figures and flags, cheapest first",
    "summary": "the headline figures per horizon (the numbers of summary.json)",
    "ic_by_delay": "mean rank IC and its t when the signal is used 0 to 3 months after its date (look-ahead check)",
    "data_quality": "per input file: rows, securities, dates and how every cell was accounted for",
    **STABILITY_TABLES,
}
TABLE_KEYS: tuple[str, ...] = tuple(TABLES)

#: The optional sweep comparison table (only when a finished sweep is given to the bundle).
SWEEP_TABLE = "sweep_comparison"
#: The optional comparison of signals (only when a comparison is given to the bundle).
COMPARE_TABLES = ("comparison", "signal_correlation", "joint_fm")
TABLES_OPTIONAL: dict[str, str] = {
    SWEEP_TABLE: "every configuration and horizon of the sweep with raw and multiple-testing adjusted "
                 "(Benjamini-Hochberg, Bonferroni) p-values and t-statistics",
    "comparison": "the compared signals side by side per horizon: mean rank IC and its t, spread and its t, "
                  "Sharpe ratio, worst drawdown, turnover, names and dates (each signal's own study)",
    "signal_correlation": "rank correlation between the compared signals (time-mean of the per-date "
                          "cross-sectional Spearman correlation), signals as header and first column",
    "joint_fm": "Fama-MacBeth regression with all compared signals together: each one's mean slope and t per "
                "horizon (what it carries that the others do not)",
}


def _dates(idx: pd.Index) -> list[str]:
    return [pd.Timestamp(d).date().isoformat() for d in idx]


def _long(frame: pd.DataFrame, value: str) -> pd.DataFrame:
    """(D x H) -> rows date, horizon, value (NaN rows kept out)."""
    parts = []
    for h in frame.columns:
        v = frame[h].to_numpy(dtype=float)
        ok = np.isfinite(v)
        parts.append(pd.DataFrame({"date": np.asarray(_dates(frame.index), dtype=object)[ok],
                                   "horizon": int(h), value: v[ok]}))
    return pd.concat(parts, ignore_index=True) if parts else pd.DataFrame(columns=["date", "horizon", value])


def _by_horizon(frame: pd.DataFrame) -> pd.DataFrame:
    out = frame.copy()
    out.index = pd.Index([int(h) for h in out.index], name="horizon")
    return out.reset_index()


def _quantile_returns(result: StudyResult) -> pd.DataFrame:
    parts = []
    for h, q in result.quantile_returns.items():
        v = q.to_numpy(dtype=float)
        ok = np.isfinite(v).any(axis=1)
        df = pd.DataFrame(v[ok], columns=[f"q{int(c)}" for c in q.columns])
        df.insert(0, "horizon", int(h))
        df.insert(0, "date", np.asarray(_dates(q.index), dtype=object)[ok])
        parts.append(df)
    return pd.concat(parts, ignore_index=True)


def _quantile_means(result: StudyResult) -> pd.DataFrame:
    a = result.quantile_mean.copy()
    a.columns = [f"q{int(c)}_mean" for c in a.columns]
    b = result.quantile_mean_annualised.copy()
    b.columns = [f"q{int(c)}_annualised" for c in b.columns]
    return _by_horizon(pd.concat([a, b], axis=1))


def _backtest(result: StudyResult) -> pd.DataFrame:
    bt = result.backtest
    cols: dict[str, Any] = {"date": _dates(bt.returns.index)}
    for name, frame in (("return", bt.returns), ("gross_return", bt.gross_returns), ("growth", bt.growth),
                        ("drawdown", bt.drawdown)):
        f = frame.reindex(bt.returns.index)
        for c in f.columns:
            cols[f"{c}_{name}"] = f[c].to_numpy(dtype=float)
    return pd.DataFrame(cols)


def _cohorts(result: StudyResult) -> pd.DataFrame:
    c = result.backtest.cohorts
    if c is None or c.empty:
        return pd.DataFrame(columns=["formed", "portfolio", "comparison", "excess", "beat"])
    out = c.copy()
    out.insert(0, "formed", _dates(out.index))
    return out.reset_index(drop=True)


def _screen(result: StudyResult) -> pd.DataFrame:
    s = screen_in_words(result.screen, result.config.n_quantiles)
    s.insert(0, "security", s.index.astype(str))
    s.insert(0, "date", str(result.screen.attrs.get("date", "")))
    return s.reset_index(drop=True)


def _summary(result: StudyResult) -> pd.DataFrame:
    d = summary_dict(result)
    rows = [{"horizon": int(h), **block} for h, block in d["horizons"].items()]
    text = {"horizon", "ic_lags", "n_dates", "too_short"} | {c for c, v in rows[0].items() if isinstance(v, str)}
    return pd.DataFrame(rows).astype({c: float for c in rows[0] if c not in text})


def _data_quality(panel: Any) -> pd.DataFrame:
    rep = getattr(panel, "report", None)
    cols = ["name", "kind", "format", "n_rows", "n_columns", "n_securities", "first_date", "last_date", "frequency",
            "cells_total", "cells_parsed", "cells_blank", "cells_unparseable", "cells_dropped"]
    if rep is None or not rep.files:
        return pd.DataFrame(columns=cols)
    rows = []
    for f in rep.files:
        r = {c: getattr(f, c) for c in cols}
        for c in ("first_date", "last_date"):
            r[c] = "" if r[c] is None or pd.isna(r[c]) else pd.Timestamp(r[c]).date().isoformat()
        rows.append(r)
    return pd.DataFrame(rows, columns=cols)


def result_tables(result: StudyResult, panel: Any = None) -> dict[str, pd.DataFrame]:
    """Every table of the bundle, in :data:`TABLE_KEYS` order (new frames; the result is not changed)."""
    return {
        "ic_by_date": ic_by_date_frame(result),
        "ic_summary": _by_horizon(result.ic_summary),
        "rolling_ic": _rolling(result),
        "quantile_returns": _quantile_returns(result),
        "quantile_means": _quantile_means(result),
        "quantile_counts": _counts(result),
        "spreads": _long(result.spread, "spread"),
        "spread_summary": _by_horizon(result.spread_summary),
        "fm_slopes": _long(result.fm_slopes, "slope"),
        "fm_summary": _by_horizon(result.fm_summary),
        "backtest_returns": _backtest(result),
        "backtest_stats": result.backtest.stats.rename_axis("portfolio").reset_index(),
        "cohorts": _cohorts(result),
        "screen": _screen(result),
        "summary": _summary(result),
        "ic_by_delay": result.ic_by_delay.copy(),
        "data_quality": _data_quality(panel),
        **stability_tables(result),
    }


def _rolling(result: StudyResult) -> pd.DataFrame:
    r = result.rolling_ic
    cols: dict[str, Any] = {"date": _dates(r.index)}
    for (h, w), s in r.items():
        cols[f"h{int(h)}_w{int(w)}"] = s.to_numpy(dtype=float)
    return pd.DataFrame(cols)


def _counts(result: StudyResult) -> pd.DataFrame:
    c = result.quantile_counts
    out = pd.DataFrame({f"q{int(k)}": c[k].to_numpy(dtype=int) for k in c.columns})
    out.insert(0, "date", _dates(c.index))
    return out


def _safe(df: pd.DataFrame) -> pd.DataFrame:
    """Formula-safe text cells; numeric and boolean columns untouched."""
    return neutralise(df)


def write_csv(df: pd.DataFrame, path: Path, *, raw: bool = False) -> None:
    """UTF-8 CSV with ``\\n`` line ends.

    ``raw`` writes the frame exactly as ``valuesift study`` writes ic_by_date.csv.  Otherwise text cells
    are neutralised and quoted (numbers stay bare), so a carriage return inside a text cell cannot
    split a row.
    """
    if raw:
        text = df.to_csv(index=False, lineterminator="\n")
    else:
        text = _safe(df).to_csv(index=False, lineterminator="\n", quoting=csv.QUOTE_NONNUMERIC)
    path.write_bytes(text.encode("utf-8"))


#: Name of the workbook sheet holding the study's settings in words.
SETTINGS_SHEET = "settings"


def xlsx_bytes(tables: dict[str, pd.DataFrame], *, stamp: str, settings: pd.DataFrame | None = None) -> bytes:
    """One workbook, one sheet per table (sheet = table key), with reproducible bytes.

    ``stamp`` (ISO date) is written as the document's created and modified dates; ``settings``
    (a table such as :func:`valuesift.app.words.settings_frame` gives) becomes the first sheet,
    :data:`SETTINGS_SHEET`.
    """
    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="openpyxl") as xw:
        if settings is not None:
            _safe(settings).to_excel(xw, index=False, sheet_name=SETTINGS_SHEET)
        for key, df in tables.items():
            _safe(df).to_excel(xw, index=False, sheet_name=key[:31])
        props = xw.book.properties
        fixed = pd.Timestamp(stamp).to_pydatetime()
        props.created = fixed
        props.modified = fixed
        props.creator = "ValueSift"
    return _fixed_zip(buf.getvalue(), stamp)


def _fixed_zip(data: bytes, stamp: str) -> bytes:
    """The same archive with fixed entry times and the document dates set to ``stamp``."""
    src = zipfile.ZipFile(io.BytesIO(data))
    out = io.BytesIO()
    iso = pd.Timestamp(stamp).strftime("%Y-%m-%dT%H:%M:%SZ")
    with zipfile.ZipFile(out, "w", compression=zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            body = src.read(info.filename)
            if info.filename == "docProps/core.xml":
                body = re.sub(rb"(<dcterms:(?:created|modified)[^>]*>)[^<]*(</dcterms:)",
                              lambda m: m.group(1) + iso.encode() + m.group(2), body)
            zi = zipfile.ZipInfo(info.filename, date_time=FIXED_ZIP_TIME)
            zi.compress_type = zipfile.ZIP_DEFLATED
            zi.external_attr = 0o644 << 16
            dst.writestr(zi, body)
    return out.getvalue()
