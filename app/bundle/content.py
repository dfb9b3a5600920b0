"""The report's content as text and small frames, generated from the result (the PDF module only lays it out)."""

from __future__ import annotations

from datetime import datetime
from typing import Any, Sequence

import numpy as np
import pandas as pd

from valuesift import core
from valuesift.app.bundle.charts import CHARTS
from valuesift.app.bundle.stability_text import STABILITY_READINGS
from valuesift.app.bundle.pdf import ReportInput
from valuesift.app.bundle.text import (
    CHART_READINGS,
    answer_sentences,
    caveat_sentences,
    delay_sentence,
    headline_sentences,
    share_word,
    signal_definition,
    universe_words,
)
from valuesift.app.caution import CAUTION
from valuesift.app.figures.common import fmt_num, fmt_pct, months, span
from valuesift.app.figures.study import return_label, signal_label
from valuesift.app.words import intake_report_lines, reason_words, screen_in_words, settings_in_words, stage_words
from valuesift.core.result import StudyResult

__all__ = ["report_input", "summary_rows", "screen_frames"]


#: The verdict codes in the few words of a table cell.
_SHORT_VERDICT = {"strong": "strong", "moderate": "some", "no_evidence": "none either way",
                  "moderate_reverse": "some, reversed", "strong_reverse": "strong, reversed",
                  "too_short": "too short to judge", "not_available": "n/a"}


def _short_verdict(code: Any) -> str:
    return _SHORT_VERDICT.get(str(code), "n/a")


def summary_rows(result: StudyResult) -> pd.DataFrame:
    """The summary table of the report: one row per horizon, formatted as printed."""
    rows = []
    for h in result.config.horizons:
        ss, ic, fm = result.spread_summary.loc[h], result.ic_summary.loc[h], result.fm_summary.loc[h]
        rows.append({
            "Horizon": f"{h} m",
            "Spread a year": fmt_pct(ss["mean_annualised"], 1),
            "Spread per period": fmt_pct(ss["mean"], 2),
            "Spread t": fmt_num(ss["t_hac"], 2),
            "Spread 95% interval": f"{fmt_pct(ss['ci_low'], 2)} to {fmt_pct(ss['ci_high'], 2)}",
            "Mean rank IC": fmt_num(ic["mean_ic"], 3),
            "IC t": fmt_num(ic["t_hac"], 2),
            "IC 95% interval": f"{fmt_num(ic['ci_low'], 3)} to {fmt_num(ic['ci_high'], 3)}",
            "FM slope (t)": f"{fmt_pct(fm['mean_slope'], 2)} ({fmt_num(fm['t_hac'], 2)})",
            "Dates": str(int(ic["n_dates"])),
            "Independent periods": fmt_num(ic["independent_periods"], 1),
            "Evidence (spread)": _short_verdict(ss["evidence"]),
        })
    return pd.DataFrame(rows)


def _fmt_signal(result: StudyResult, v: float) -> str:
    if not np.isfinite(v):
        return ""
    return fmt_pct(v, 2) if result.signal_name in ("earnings_yield", "dividend_yield") else fmt_num(v, 3)


def screen_frames(result: StudyResult) -> tuple[str, pd.DataFrame, pd.DataFrame]:
    """Title, the cheapest and the dearest rows of the screen (holdings when the panel has them)."""
    s = screen_in_words(result.screen, result.config.n_quantiles)
    held = s["holding_weight"].notna() if "holding_weight" in s.columns else pd.Series(False, index=s.index)
    who = "holdings" if bool(held.any()) else "securities of the universe"
    base = s[held.to_numpy(dtype=bool)] if bool(held.any()) else s
    ranked = base[np.isfinite(base["zscore"].to_numpy(dtype=float))]
    n = len(ranked)
    k = min(15, (n + 1) // 2)
    cheap, dear = ranked.iloc[:k], ranked.iloc[max(k, n - 15):]

    def show(df: pd.DataFrame) -> pd.DataFrame:
        return pd.DataFrame({
            "Security": df.index.astype(str),
            "Sector": df["sector"].astype(str).to_numpy(),
            "Signal": [_fmt_signal(result, float(v)) for v in df["signal"]],
            "P/E": df["pe_display"].astype(str).to_numpy(),
            "Z-score": [fmt_num(v, 2) for v in df["zscore"]],
            "Z in sector": [fmt_num(v, 2) for v in df["sector_zscore"]],
            "Quantile": df["quantile_label"].astype(str).to_numpy(),
            "Z chg 3 m": [fmt_num(v, 2) for v in df["z_change_3m"]],
            "Z chg 12 m": [fmt_num(v, 2) for v in df["z_change_12m"]],
            "Flags": [str(f) if str(f) else "none" for f in df["flags"]],
        }).replace("n/a", "")

    left_out = len(base) - n
    title = (f"The screen on {s.attrs.get('date', '')}: the {len(cheap)} highest-ranked (cheapest) and {len(dear)} "
             f"lowest-ranked of {n} {who} by {signal_label(result)}"
             + (f" ({left_out} without a z-score are left out; see tables/screen.csv)" if left_out else ""))
    return title, show(cheap), show(dear)


def _facts(result: StudyResult, panel: Any, horizon: int, created: datetime, study_name: str) -> list[tuple[str, str]]:
    uni = result.universe.sum(axis=1)
    used = uni[uni > 0]
    asof = str(result.screen.attrs.get("date", ""))
    n_asof = int(uni.loc[pd.Timestamp(asof)]) if asof and pd.Timestamp(asof) in uni.index else 0
    dates = result.signal_z.index
    hs = ", ".join(str(h) for h in result.config.horizons)
    return [
        ("Study", study_name),
        ("As of", f"{asof} (the latest month-end with a signal)"),
        ("Universe", f"{universe_words(result)}: {n_asof} names on the as-of date, "
                     f"{fmt_num(result.coverage.get('mean_universe_names'), 0)} on average "
                     f"over {int(result.coverage.get('n_universe_dates', 0))} month-ends"),
        ("Signal", f"{signal_label(result)}. {signal_definition(result)}"),
        ("Horizons", f"{hs} months; per-horizon charts drawn at {horizon} months"),
        ("Data period", f"{span(dates)} ({len(dates)} month-ends); universe present {span(used.index)}"),
        ("Returns", f"{return_label(result, horizon).replace(f'{horizon}-month ', '')}, dividends "
                    f"{'reinvested' if result.config.dividend_treatment == 'reinvest' else 'kept as cash'}"),
        *_set_aside_facts(panel),
        ("Prepared", f"{created.strftime('%Y-%m-%d %H:%M')} UTC with ValueSift {core.__version__}"),
    ]


def _set_aside_facts(panel: Any) -> list[tuple[str, str]]:
    """The reading decisions a committee should see first: columns left out and suspected splits."""
    rep = getattr(panel, "report", None)
    if rep is None:
        return []
    out = []
    left = [f"{f.name}: {', '.join(map(str, f.excluded_columns))}" for f in rep.files if f.excluded_columns]
    out.append(("Columns left out", "; ".join(left) if left else "none"))
    sp = rep.suspected_splits
    if len(sp):
        applied = sp[sp["applied"].astype(bool)]
        pending = sp[~sp["applied"].astype(bool)]
        words = []
        if len(applied):
            words.append(f"{len(applied)} applied ({', '.join(map(str, applied['security'].head(6)))}"
                         f"{' and more' if len(applied) > 6 else ''})")
        if len(pending):
            words.append(f"{len(pending)} not applied, prices used as read ("
                         f"{', '.join(map(str, pending['security'].head(6)))}{' and more' if len(pending) > 6 else ''})")
        out.append(("Suspected splits", "; ".join(words) + "; see the appendix"))
    else:
        out.append(("Suspected splits", "none found"))
    return out


def _config_rows(result: StudyResult) -> list[tuple[str, str]]:
    """Every setting in words: its label and its value as a person reads it (from the settings table)."""
    return [(label, value) for _, label, value in settings_in_words(result.config)]


def _quality(panel: Any, result: StudyResult) -> tuple[pd.DataFrame, list[str], pd.DataFrame]:
    rep = getattr(panel, "report", None)
    lines: list[str] = []
    files = pd.DataFrame(columns=["File", "Kind", "Rows", "Securities", "Dates", "Cells", "Parsed", "Blank",
                                  "Unparseable", "Dropped"])
    reasons = pd.DataFrame(columns=["File", "Category", "Reason", "Cells", "First places"])
    if rep is not None:
        frows, rrows = [], []
        for f in rep.files:
            dates = "" if f.first_date is None or pd.isna(f.first_date) else \
                f"{pd.Timestamp(f.first_date).date()} to {pd.Timestamp(f.last_date).date()}"
            frows.append([f.name, f.kind, f"{f.n_rows:,}", f"{f.n_securities:,}", dates, f"{f.cells_total:,}",
                          f"{f.cells_parsed:,}", f"{f.cells_blank:,}", f"{f.cells_unparseable:,}", f"{f.cells_dropped:,}"])
            for _, r in f.by_reason.iterrows():
                ex = f.examples[f.examples["reason"] == r["reason"]].head(3)
                where = "; ".join(f"row {int(e['row'])}, {e['column']}: {str(e['value'])[:18]!r}" for _, e in ex.iterrows())
                rrows.append([f.name, str(r["category"]), reason_words(r["reason"]), f"{int(r['count']):,}", where])
            lines.extend(f"{f.name}: {n}" for n in f.notes)
        files = pd.DataFrame(frows, columns=files.columns)
        reasons = pd.DataFrame(rrows, columns=reasons.columns)
        lines.extend(intake_report_lines(rep))
    dn = result.date_notes
    if dn is not None and len(dn):
        g = dn.groupby(["stage", "horizon", "reason"], as_index=False).agg(dates=("date", "count"))
        for _, r in g.iterrows():
            where = f" at {int(r['horizon'])} months" if int(r["horizon"]) else ""
            lines.append(f"Study, {stage_words(r['stage']).lower()}{where}: {int(r['dates'])} date(s) left out: "
                         f"{r['reason']}")
    lines.extend(f"Study note: {n}" for n in result.notes)
    return files, lines, reasons


def report_input(result: StudyResult, panel: Any, inputs: Sequence[dict[str, Any]], *, study_name: str,
                 title: str | None, note: str | None, horizon: int, chart_keys: Sequence[str],
                 images: dict[str, bytes], images_note: str | None, created: datetime) -> ReportInput:
    """Everything :func:`app.bundle.pdf.build_pdf` lays out, from the numbers of ``result``."""
    word = share_word(result.config.n_quantiles)
    lead = answer_sentences(result)
    hh = horizon
    lead.append(" ".join(headline_sentences(result, hh)))
    bts = result.backtest.stats
    after = []
    if "cheapest" in bts.index:
        c = bts.loc["cheapest"]
        windows = result.backtest.cohort_windows
        after.append(f"Backtest (monthly rebalanced, held {months(result.backtest.holding_months)}, costs "
                     f"{fmt_num(result.config.transaction_cost_bps, 0)} bp, equal-weighted, in-sample): the cheapest "
                     f"{word} earned {fmt_pct(c['ann_return'], 1)} a year, Sharpe {fmt_num(c['sharpe'], 2)} (risk-free "
                     f"rate {fmt_pct(result.config.risk_free_annual, 1)}), worst drawdown "
                     f"{fmt_pct(c['max_drawdown'], 0)}; {fmt_pct(result.backtest.cohort_share_beat, 0)} of its cohorts "
                     f"beat the {result.backtest.comparison}"
                     + (f" (about {windows:.0f} independent windows)" if result.backtest.holding_months > 1 else "")
                     + ".")
    after.append("How to read t: |t| of 3 or more is strong evidence by the usual standard; 2 to 3 is some "
                 "evidence; below 2 there is no evidence either way at this sample size (which is not evidence "
                 "that there is no relation). Horizons above one month use Hansen-Hodrick standard errors, which "
                 "allow fully for the overlap of multi-month returns; with fewer than ten independent periods a "
                 "horizon is too short to judge and gets no verdict. Every figure is in tables/summary.csv and "
                 "summary.json.")
    if delay_sentence(result):
        after.insert(0, delay_sentence(result))
    after.extend(caveat_sentences(result, panel))
    titles = {c.key: c.title for c in CHARTS}
    chart_pages = []
    for key in chart_keys:
        heading = titles[key] + (f", {hh} months" if any(c.key == key and c.per_horizon for c in CHARTS) else "")
        chart_pages.append((key, heading, images.get(key), {**CHART_READINGS, **STABILITY_READINGS}[key](result, hh, panel)))
    st, cheap, dear = screen_frames(result)
    qf, ql, qr = _quality(panel, result)
    asof = str(result.screen.attrs.get("date", ""))
    default_title = f"Has {signal_label(result)} been rewarded? Study \u201c{study_name}\u201d, as of {asof}"
    return ReportInput(
        title=title or default_title,
        study_name=study_name,
        footer=f"ValueSift {core.__version__} - study {study_name} - as of {asof} - research use only, "
               f"not investment advice",
        facts=_facts(result, panel, hh, created, study_name),
        configuration=_config_rows(result),
        inputs=list(inputs),
        caution=CAUTION,
        note=note or None,
        summary_lead=lead,
        summary_table=summary_rows(result),
        summary_after=after,
        charts=chart_pages,
        images_note=images_note,
        screen_title=st,
        screen_cheap=cheap,
        screen_dear=dear,
        quality_files=qf,
        quality_lines=ql,
        quality_reasons=qr,
    )

