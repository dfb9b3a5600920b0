"""Plain-language sentences of the report, generated from the result's numbers (never canned text).

Every sentence here reads its figures from a :class:`valuesift.core.result.StudyResult`
(or the panel), so a different study gives a different reading.  The evidence is
worded from the verdict codes of :mod:`valuesift.core.inference.evidence` (one rule:
|t| >= 3 strong, 2 to 3 moderate, below 2 "no evidence either way at this sample size",
sign-aware; no verdict at all when a horizon has fewer than ten independent periods).
The sentences claim no more than the numbers: returns are gross of costs unless a cost is
stated, equal-weighted and in-sample; associations, not causes.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from valuesift.app.figures.common import fmt_num, fmt_pct, month, months, span
from valuesift.app.words import EVIDENCE_WORDS, evidence_words
from valuesift.core.portfolio.summaries import DRAWDOWN_DEPTH
from valuesift.core.result import StudyResult

__all__ = [
    "verdict",
    "EVIDENCE_WORDS",
    "evidence_words",
    "answer_sentences",
    "warning_sentences",
    "delay_sentence",
    "caveat_sentences",
    "share_word",
    "headline_sentences",
    "CHART_READINGS",
    "signal_definition",
    "universe_words",
]

_SHARE_WORDS = {2: "half", 3: "third", 4: "quarter", 5: "fifth", 10: "tenth", 20: "twentieth"}

_DEFINITIONS = {
    "earnings_yield": "Earnings yield: trailing-twelve-month earnings per share divided by the price "
                      "(higher = cheaper; loss-makers get a negative yield and rank dearest).",
    "dividend_yield": "Dividend yield: dividends with ex-dates in the trailing twelve months divided by "
                      "the price (higher = cheaper).",
    "composite": "Composite: the mean of the cross-sectional z-scores of {parts} (higher = cheaper).",
}


def _f(x: Any) -> float:
    try:
        v = float(x)
    except (TypeError, ValueError):
        return float("nan")
    return v


def verdict(t: Any) -> str:
    """The evidence in words for a bare t-statistic (a sweep's adjusted t); same thresholds as the codes."""
    v = _f(t)
    if not np.isfinite(v):
        return EVIDENCE_WORDS["not_available"]
    if abs(v) < 2:
        return EVIDENCE_WORDS["no_evidence"]
    if abs(v) < 3:
        return EVIDENCE_WORDS["moderate" if v > 0 else "moderate_reverse"]
    return EVIDENCE_WORDS["strong" if v > 0 else "strong_reverse"]


def _windows(n_dates: Any, h: int) -> str:
    """``(about N independent windows)`` for a share over overlapping h-month windows."""
    if h <= 1:
        return ""
    n = _f(n_dates) / h
    return f" (overlapping {h}-month windows: about {n:.0f} independent)" if np.isfinite(n) else ""


def _se_words(row: Any, h: int) -> str:
    method = str(row.get("se_method", ""))
    lags = int(_f(row.get("hac_lags", 0)) or 0)
    if method == "hansen_hodrick":
        return f"Hansen-Hodrick standard error with {lags} lags, which allows fully for the overlap of {h}-month returns"
    if method == "newey_west_fallback":
        return f"Newey-West standard error with {lags} lags (the Hansen-Hodrick variance was not positive)"
    return f"Newey-West standard error with {lags} lags"


def share_word(n_quantiles: int) -> str:
    """'fifth' for quintiles, 'tenth' for deciles, else '1/n'."""
    return _SHARE_WORDS.get(int(n_quantiles), f"1/{int(n_quantiles)}")


def signal_definition(result: StudyResult) -> str:
    """What the signal is, in one sentence."""
    name = result.signal_name
    if name == "composite":
        return _DEFINITIONS["composite"].format(parts=", ".join(p.replace("_", " ") for p in result.config.composite_of))
    if name in _DEFINITIONS:
        return _DEFINITIONS[name]
    return f"Your own signal {name!r}, as supplied in your signal file (oriented so that higher = cheaper)."


def universe_words(result: StudyResult) -> str:
    """The universe rule in words."""
    cfg = result.config
    if cfg.universe == "holdings":
        base = "the holdings"
    elif cfg.universe == "sectors":
        base = "the sectors " + ", ".join(cfg.universe_sectors)
    else:
        base = "all securities in the price file"
    if cfg.min_history_months:
        base += f" with at least {cfg.min_history_months} months of prices"
    return base


def headline_sentences(result: StudyResult, horizon: int) -> list[str]:
    """The committee sentences of one horizon: the spread in words, its t and interval, then the IC.

    The numbers are those of ``summary_dict`` (spread_annualised, spread_t, ic_ci_low...), formatted
    as printed: percentages to 1 decimal, t-statistics to 2, ICs to 3.  A too-short horizon gets its
    numbers and no verdict.
    """
    ss = result.spread_summary.loc[horizon]
    ic = result.ic_summary.loc[horizon]
    word = share_word(result.config.n_quantiles)
    n = int(ss["n_dates"])
    dates = result.spread[horizon].dropna().index
    ann = _f(ss["mean_annualised"])
    t = _f(ss["t_hac"])
    if not np.isfinite(ann):
        first = f"At {horizon} months there is no date with both the cheapest and the dearest {word} filled."
        return [first]
    lead, lag = ("cheapest", "dearest") if ann >= 0 else ("dearest", "cheapest")
    first = (f"Over {n} months of portfolio formation ({span(dates)}), holding for {horizon} month"
             f"{'s' if horizon != 1 else ''}, the {lead} {word} of the universe (equal-weighted, gross of costs, "
             f"in-sample) out-earned the {lag} {word} by {fmt_pct(abs(ann), 1)} a year; t = {fmt_num(t, 2)}: "
             f"{evidence_words(ss['evidence'], ss['independent_periods'])}.")
    second = (f"Per {horizon}-month period the mean spread was {fmt_pct(ss['mean'], 2)} (95% interval "
              f"{fmt_pct(ss['ci_low'], 2)} to {fmt_pct(ss['ci_high'], 2)}; {_se_words(ss, horizon)}).")
    third = (f"The mean rank IC was {fmt_num(ic['mean_ic'], 3)} (t = {fmt_num(ic['t_hac'], 2)}, 95% interval "
             f"{fmt_num(ic['ci_low'], 3)} to {fmt_num(ic['ci_high'], 3)}, {int(ic['n_dates'])} dates, "
             f"{fmt_num(ic['independent_periods'], 1)} independent periods): "
             f"{evidence_words(ic['evidence'], ic['independent_periods'])}.")
    return [first, second, third]


def answer_sentences(result: StudyResult) -> list[str]:
    """The summary's lead: which horizon, how strong, what to watch (from the verdict codes and warnings)."""
    ic = result.ic_summary
    hs = [int(h) for h in ic.index]
    judged = [h for h in hs if str(ic.loc[h, "evidence"]) not in ("too_short", "not_available")]
    short = [h for h in hs if str(ic.loc[h, "evidence"]) == "too_short"]
    out = []
    if not judged:
        out.append(f"No horizon can be judged: {len(short)} of {len(hs)} have fewer than ten independent periods "
                   "and the rest have too few dates. The figures below are shown without a verdict.")
    else:
        best = max(judged, key=lambda h: abs(_f(ic.loc[h, "t_hac"])) if np.isfinite(_f(ic.loc[h, "t_hac"])) else -1)
        row = ic.loc[best]
        out.append(f"The clearest horizon is {best} months: mean rank IC {fmt_num(row['mean_ic'], 3)}, t = "
                   f"{fmt_num(row['t_hac'], 2)} ({evidence_words(row['evidence'])}), over "
                   f"{fmt_num(row['independent_periods'], 1)} independent periods.")
        if len(hs) > 1:
            out.append(f"{len(hs)} horizons were looked at; the best of several looks better than it is, so treat "
                       "its t as flattered.")
    if short:
        out.append("Too short to judge: " + ", ".join(f"{h} months ({_f(ic.loc[h, 'independent_periods']):.1f} "
                                                      "independent periods)" for h in short) + ".")
    for w in result.warnings:
        if w.get("code") != "too_short_history":  # already said above, horizon by horizon
            out.append("Watch: " + str(w.get("message", "")))
    return out


def delay_sentence(result: StudyResult) -> str:
    """The IC by signal delay at the shortest horizon, in one sentence (the look-ahead check)."""
    tab = result.ic_by_delay
    if tab is None or not len(tab):
        return ""
    h = int(tab["horizon"].min())
    d = tab[tab["horizon"] == h].sort_values("delay_months")
    vals = ", ".join(f"{fmt_num(v, 3)}" for v in d["mean_ic"])
    flagged = any(w.get("code") == "possible_lookahead" for w in result.warnings)
    return (f"Look-ahead check: used 0, 1, 2 and 3 months after its date, the signal's {h}-month IC is {vals}. "
            + ("It falls far faster than the signal's own persistence explains: check the dates of the files."
               if flagged else "It fades no faster than the signal's own persistence explains."))


def warning_sentences(result: StudyResult) -> list[str]:
    """Every warning of the study, as its plain sentence."""
    return [str(w.get("message", "")) for w in result.warnings]


def caveat_sentences(result: StudyResult, panel: Any = None) -> list[str]:
    """What every figure of the study assumes, in words (the cautions of the report)."""
    cfg = result.config
    lag = ("each earnings figure dated by when it became public" if getattr(panel, "eps_dated_by_availability", False)
           else f"a reporting lag of {cfg.reporting_lag_months} month{'s' if cfg.reporting_lag_months != 1 else ''}")
    return [
        "Quantile returns and spreads are equal-weighted, in-sample and gross of costs; the backtest deducts "
        f"{fmt_num(cfg.transaction_cost_bps, 0)} bp per unit traded. None of it is a tradable result as stated.",
        "The long-short portfolio holds the cheapest quantile long and the dearest short: 200% gross exposure, "
        "shown without financing or borrowing costs.",
        f"A name's return after its last price is taken as {fmt_pct(cfg.delisting_return, 0)}; for cheap, distressed "
        "names a delisting usually costs more, so 0 is optimistic (Shumway 1997).",
        f"Earnings are used with {lag}; a shorter lag than the real publication delay lets the study peek ahead.",
        "The results are only as complete as the input universe: a price file of today's survivors leaves out "
        "the names that failed, which flatters cheap names.",
        "Every relation here is an association between a signal and later returns, not a cause.",
    ]


# -- chart readings: two lines each, from the numbers --------------------------------------
def _ic_by_horizon(result: StudyResult, h: int, panel: Any) -> list[str]:
    s = result.ic_summary
    m = s["mean_ic"].to_numpy(dtype=float)
    t = s["t_hac"].to_numpy(dtype=float)
    hs = [int(x) for x in s.index]
    if not np.isfinite(m).any():
        return ["No horizon has enough dates for an information coefficient.", ""]
    judged = [str(e) not in ("too_short", "not_available") and np.isfinite(t[i]) for i, e in enumerate(s["evidence"])]
    line1 = (f"The mean rank IC runs from {fmt_num(np.nanmin(m), 3)} to {fmt_num(np.nanmax(m), 3)} across "
             f"{len(hs)} horizons")
    if any(judged):   # "clearest" only among the horizons that can be judged
        j = max((i for i in range(len(hs)) if judged[i]), key=lambda i: abs(t[i]))
        line1 += f"; the clearest that can be judged is {hs[j]} months (IC {fmt_num(m[j], 3)}, t = {fmt_num(t[j], 2)})."
    else:
        line1 += "; none can be judged on this history."
    strong = [f"{hs[i]} m" for i in range(len(hs)) if judged[i] and abs(t[i]) >= 2]
    weak = [f"{hs[i]} m" for i in range(len(hs)) if judged[i] and abs(t[i]) < 2]
    short = [f"{hs[i]} m" for i in range(len(hs)) if str(s["evidence"].iloc[i]) == "too_short"]
    tail = (f" Too short to judge: {', '.join(short)}." if short else "")
    n_j = sum(judged)
    if not n_j:
        line2 = "No horizon has enough independent periods for a verdict." + tail
    elif not strong:
        line2 = f"None of the {n_j} judged horizons reaches |t| = 2: no evidence either way at this sample size." + tail
    elif not weak:
        line2 = (f"All {n_j} judged horizons have |t| of 2 or more (the best of several is flattered; horizons "
                 "overlap, so they are not independent tests)." + tail)
    else:
        line2 = (f"{len(strong)} of {n_j} judged horizons have |t| of 2 or more ({', '.join(strong)}); "
                 f"{', '.join(weak)} show no evidence either way at this sample size." + tail)
    return [line1, line2]


def _rolling(frame: pd.DataFrame, h: int, window: int = 12) -> pd.Series:
    """The result's rolling mean of horizon ``h`` over ``window`` dates (the one rule the charts draw), NaN dropped."""
    if (h, window) not in frame.columns:
        return pd.Series(dtype=float)
    return frame[(h, window)].dropna()


def _ic_over_time(result: StudyResult, h: int, panel: Any) -> list[str]:
    ic = result.rank_ic[h].dropna()
    row = result.ic_summary.loc[h]
    if ic.empty:
        return [f"No date has an IC at the {h}-month horizon.", ""]
    line1 = (f"At {h} months the rank IC was above zero on {fmt_pct(row['hit_share'], 0)} of {len(ic)} dates "
             f"({span(ic.index)}){_windows(len(ic), h)}; mean {fmt_num(row['mean_ic'], 3)}, "
             f"t = {fmt_num(row['t_hac'], 2)}.")
    roll = _rolling(result.rolling_ic, h)
    if roll.empty:
        return [line1, "Too few dates for a 12-date rolling mean."]
    lo, hi = roll.idxmin(), roll.idxmax()
    line2 = (f"The 12-date rolling mean ranged from {fmt_num(roll.min(), 3)} (to {month(lo)}) to "
             f"{fmt_num(roll.max(), 3)} (to {month(hi)}); {evidence_words(row['evidence'], row['independent_periods'])}.")
    return [line1, line2]


def _quantiles(result: StudyResult, h: int, panel: Any) -> list[str]:
    qa = result.quantile_mean_annualised.loc[h].to_numpy(dtype=float)
    ss = result.spread_summary.loc[h]
    word = share_word(result.config.n_quantiles)
    if not np.isfinite(qa).any():
        return [f"No date has returns for every quantile at {h} months.", ""]
    line1 = (f"Annualised, the cheapest {word} returned {fmt_pct(qa[-1], 1)} a year and the dearest "
             f"{fmt_pct(qa[0], 1)} over {int(ss['n_dates'])} formation dates (holding {h} months).")
    mono = _f(ss["monotonicity"])
    shape = ("the mean returns line up in order from dearest to cheapest" if mono >= 0.9 else
             "the mean returns rise from dearest to cheapest, but not in strict order" if mono > 0 else
             "the mean returns do not rise from dearest to cheapest")
    line2 = (f"Rank correlation of the {result.config.n_quantiles} quantile means with their order "
             f"{fmt_num(mono, 2)} (a description, not a test): {shape}; the spread's t = {fmt_num(ss['t_hac'], 2)}, "
             f"{evidence_words(ss['evidence'], ss['independent_periods'])}.")
    return [line1, line2]


def _spread(result: StudyResult, h: int, panel: Any) -> list[str]:
    s = result.spread[h].dropna()
    ss = result.spread_summary.loc[h]
    if s.empty:
        return ["No date has both the cheapest and the dearest quantile filled.", ""]
    line1 = (f"The cheapest-minus-dearest {h}-month return was positive on "
             f"{fmt_pct(result.spread_facts.loc[h, 'positive_share'], 0)} of "
             f"{len(s)} formation dates{_windows(len(s), h)}; mean {fmt_pct(ss['mean'], 2)}, "
             f"t = {fmt_num(ss['t_hac'], 2)}.")
    roll = _rolling(result.rolling_spread, h)
    if roll.empty:
        return [line1, "Too few dates for a 12-date rolling mean."]
    line2 = (f"Its 12-date rolling mean was best at {fmt_pct(roll.max(), 1)} (to {month(roll.idxmax())}) and worst "
             f"at {fmt_pct(roll.min(), 1)} (to {month(roll.idxmin())}).")
    return [line1, line2]


def _scatter(result: StudyResult, h: int, panel: Any) -> list[str]:
    pf = result.pooled_fit.loc[h]
    row = result.ic_summary.loc[h]
    n_pairs = int(pf["n_pairs"])
    if n_pairs < 3:
        return ["Too few signal and return pairs to draw.", ""]
    b = pf["slope"]
    line1 = (f"Pooled over {n_pairs:,} name-dates, one more unit of z-score was associated with "
             f"{fmt_pct(b, 2)} more {h}-month return on average (least-squares slope; an association, not a cause).")
    line2 = (f"Pooled points overlap in time, so judge by the mean rank IC: {fmt_num(row['mean_ic'], 3)}, "
             f"t = {fmt_num(row['t_hac'], 2)}, {evidence_words(row['evidence'], row['independent_periods'])}.")
    return [line1, line2]


def _fm(result: StudyResult, h: int, panel: Any) -> list[str]:
    s = result.fm_summary
    if s.empty or not np.isfinite(s["mean_slope"].to_numpy(dtype=float)).any():
        return ["No date has enough names for a cross-sectional regression.", ""]
    r = s.loc[h] if h in s.index else s.iloc[0]
    hh = int(h if h in s.index else s.index[0])
    sig = [f"{int(k)} m" for k, v in s["t_hac"].items()
           if np.isfinite(_f(v)) and abs(_f(v)) >= 2 and str(s.loc[k, "evidence"]) != "too_short"]
    line1 = (f"At {hh} months each unit of z-score was associated with {fmt_pct(r['mean_slope'], 2)} of return on "
             f"average across {int(r['n_dates'])} monthly regressions (t = {fmt_num(r['t_hac'], 2)}; an "
             "association, not a cause).")
    if not sig:
        line2 = "No horizon's slope reaches |t| = 2 with enough history: no evidence either way at this sample size."
    elif len(sig) == len(s):
        line2 = f"All {len(s)} horizons' slopes have |t| of 2 or more."
    else:
        line2 = (f"Slopes with |t| of 2 or more and enough history: {', '.join(sig)}; the rest show no evidence "
                 "either way at this sample size or are too short to judge.")
    return [line1, line2]


def _growth(result: StudyResult, h: int, panel: Any) -> list[str]:
    bt = result.backtest
    g = bt.growth
    st = bt.stats
    if g.empty or "cheapest" not in g.columns:
        return ["The backtest has no month with returns.", ""]
    last = g.dropna(how="all").index.max()
    parts = [f"{name} {fmt_num(g.loc[last, col], 2)}" for col, name in
             (("cheapest", "cheapest"), ("universe", "universe"), ("long_short", "cheapest minus dearest"),
              ("benchmark", "benchmark")) if col in g.columns and np.isfinite(_f(g.loc[last, col]))]
    line1 = f"1 invested at the start grew by {month(last)} to: " + ", ".join(parts) + "."
    c = st.loc["cheapest"] if "cheapest" in st.index else None
    u = st.loc["universe"] if "universe" in st.index else None
    rf = fmt_pct(result.config.risk_free_annual, 1)
    bits = []
    if c is not None:
        bits.append(f"Cheapest {share_word(result.config.n_quantiles)}: {fmt_pct(c['ann_return'], 1)} a year, Sharpe "
                    f"{fmt_num(c['sharpe'], 2)} (risk-free rate {rf}; Lo t = {fmt_num(c.get('sharpe_t'), 2)})")
    if u is not None:
        bits.append(f"universe {fmt_pct(u['ann_return'], 1)} a year, Sharpe {fmt_num(u['sharpe'], 2)}")
    n_m = int(_f(c["n_months"])) if c is not None else 0
    line2 = ("; ".join(bits) + f" ({n_m} months, costs {fmt_num(result.config.transaction_cost_bps, 0)} bp; the "
             "cheapest-minus-dearest line is 200% gross exposure without financing costs).")
    return [line1, line2]


def _drawdown(result: StudyResult, h: int, panel: Any) -> list[str]:
    ds = result.drawdown_summary
    if ds.empty:
        return ["The backtest has no month with returns.", ""]
    bits = []
    for col, name in (("cheapest", "cheapest"), ("universe", "universe"), ("long_short", "cheapest minus dearest")):
        if col in ds.index and _f(ds.loc[col, "n_months"]) > 0:
            bits.append((name, ds.loc[col, "deepest"], ds.loc[col, "trough"]))
    if not bits:
        return ["The backtest has no month with returns.", ""]
    line1 = "Deepest fall from a running peak: " + "; ".join(f"{n} {fmt_pct(v, 0)} ({month(d)})" for n, v, d in bits) + "."
    if "cheapest" in ds.index:
        under, n_c = ds.loc["cheapest", "share_below"], int(_f(ds.loc["cheapest", "n_months"]))
    else:
        under, n_c = float("nan"), 0
    line2 = (f"The cheapest portfolio spent {fmt_pct(under, 0)} of {n_c} months more than "
             f"{fmt_pct(DRAWDOWN_DEPTH, 0)} below its peak.")
    return [line1, line2]


def _cohorts(result: StudyResult, h: int, panel: Any) -> list[str]:
    bt = result.backtest
    c = bt.cohorts
    if c is None or c.empty or "excess" not in c.columns:
        return ["No cohort completed its holding period.", ""]
    cs = result.cohort_summary
    if not _f(cs.get("n_cohorts")) > 0:
        return ["No cohort completed its holding period.", ""]
    windows = _f(bt.cohort_windows)
    line1 = (f"{int(cs['n_beat'])} of {int(cs['n_cohorts'])} cohorts ({fmt_pct(cs['share_beat'], 0)}) of the "
             f"cheapest quantile beat the {bt.comparison} over {months(bt.holding_months)}"
             + (f", resting on about {windows:.0f} independent windows" if bt.holding_months > 1 and np.isfinite(windows)
                else "") + f"; mean excess {fmt_pct(cs['mean_excess'], 2)}.")
    line2 = (f"Best cohort formed {month(cs['best_formed'])} ({fmt_pct(cs['best_excess'], 1)}), worst formed "
             f"{month(cs['worst_formed'])} ({fmt_pct(cs['worst_excess'], 1)}).")
    return [line1, line2]


def _coverage(result: StudyResult, h: int, panel: Any) -> list[str]:
    if panel is None:
        return ["No panel was given.", ""]
    cov = result.coverage
    line1 = (f"{int(cov['n_securities'])} securities over {int(cov['n_dates'])} month-ends ({span(panel.dates)}); "
             f"{fmt_pct(cov['share_valid'], 0)} of the cells hold a valid price.")
    line2 = (f"Names with a price per month-end range from {int(cov['min_names'])} to {int(cov['max_names'])}; "
             f"the study's universe averaged {fmt_num(cov['mean_universe_names'], 0)} names.")
    return [line1, line2]


#: chart key -> function(result, horizon, panel) -> two lines of reading.
CHART_READINGS = {
    "ic_by_horizon": _ic_by_horizon,
    "ic_over_time": _ic_over_time,
    "quantile_returns": _quantiles,
    "spread_over_time": _spread,
    "scatter": _scatter,
    "fm_slopes": _fm,
    "growth": _growth,
    "drawdown": _drawdown,
    "cohorts": _cohorts,
    "coverage": _coverage,
}


def sweep_reading(sweep: Any) -> list[str]:
    """Two lines on a finished sweep, from its comparison table (never canned figures)."""
    table = sweep.table
    ok = table[np.isfinite(pd.to_numeric(table["ic_t_bh"], errors="coerce"))] if len(table) else table
    line1 = sweep.statement
    if ok.empty:
        return [line1, "No configuration produced a HAC t-statistic, so there is nothing to rank."]
    best = ok.loc[pd.to_numeric(ok["ic_t_bh"]).abs().idxmax()]
    varied = ", ".join(f"{d} {best[d]}" for d in sweep.dimensions if d in best.index)
    line2 = (f"The strongest test after adjustment: {varied or 'the base configuration'} at {int(best['horizon'])} "
             f"months, mean rank IC {fmt_num(best['mean_ic'])}, raw t = {fmt_num(best['ic_t'], 2)}, adjusted "
             f"t = {fmt_num(best['ic_t_bh'], 2)} ({verdict(best['ic_t_bh'])}).")
    return [line1, line2]
