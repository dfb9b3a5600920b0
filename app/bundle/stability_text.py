"""Sentences on where a study's reward comes from and on a comparison of signals, generated from the result's numbers.

Each sentence claims no more than its numbers: evidence words come only from the verdict code of the
headline t (``core.inference.evidence``), a horizon too short to judge gets no verdict word, and the
sentences say gross of costs (or net at the stated cost), equal-weighted unless stated, in-sample, and
association rather than cause.  Used by the dashboard pages and the report alike.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from valuesift.app.figures.common import fmt_num, fmt_pct
from valuesift.core.compare import CompareResult
from valuesift.core.result import StudyResult
from valuesift.core.settings import SIGNAL_WORDS

__all__ = ["evidence_phrase", "relative_sentences", "period_sentences", "sector_sentences", "regime_sentences",
           "decay_sentences", "controls_sentences", "cap_sentences", "stability_sentences", "compare_sentences",
           "STABILITY_READINGS", "cost_words"]

_EVIDENCE = {
    "strong": "strong evidence by the usual hurdle (|t| of 3 or more)",
    "strong_reverse": "strong evidence the other way (|t| of 3 or more)",
    "moderate": "evidence at the usual 5% level, though not by a wide margin",
    "moderate_reverse": "evidence the other way at the usual 5% level, though not by a wide margin",
    "no_evidence": "no evidence either way at this sample size",
    "too_short": "too short to judge (fewer than 10 independent periods), so no verdict",
    "not_available": "no t-statistic could be computed",
}


def evidence_phrase(code: Any) -> str:
    """The words of a verdict code."""
    return _EVIDENCE.get(str(code), "no verdict")


def _f(x: Any) -> float:
    try:
        return float(x)
    except (TypeError, ValueError):
        return math.nan


def cost_words(result: StudyResult) -> str:
    c = result.config.transaction_cost_bps
    return f"net of {fmt_num(c, 0)} basis points of trading cost" if c > 0 else "gross of trading costs"


def relative_sentences(result: StudyResult) -> list[str]:
    rel = result.relative
    if rel is None or rel.empty or "cheapest" not in rel.index:
        return []
    r = rel.loc["cheapest"]
    comp = "the benchmark" if r["comparison"] == "benchmark" else "the equal-weight universe (no benchmark file)"
    out = [f"Against {comp}, the cheapest quantile (equal-weighted, {cost_words(result)}, in-sample) had an active "
           f"return of {fmt_pct(r['active_return_ann'], 1)} a year with a tracking error of "
           f"{fmt_pct(r['tracking_error_ann'], 1)} (information ratio {fmt_num(r['information_ratio'], 2)}, "
           f"{int(r['n_months'])} months)."]
    out.append(f"Regressed on {comp}: beta {fmt_num(r['beta'], 2)}, Jensen alpha {fmt_pct(r['alpha_ann'], 1)} a year "
               f"(Newey-West t = {fmt_num(r['alpha_t'], 2)}: {evidence_phrase(r['alpha_evidence'])}); up-market "
               f"capture {fmt_num(r['up_capture'], 2)}, down-market capture {fmt_num(r['down_capture'], 2)}.")
    return out


def period_sentences(result: StudyResult, horizon: int) -> list[str]:
    p = result.ic_by_period
    if p is None or p.empty:
        return []
    p = p[(p["horizon"] == int(horizon)) & p["period"].str.fullmatch(r"\d{4}")]
    judged = p[~p["too_short"].astype(bool) & (p["n_dates"] > 0)]
    out = []
    if len(judged):
        pos = int((judged["mean_ic"] > 0).sum())
        out.append(f"At {horizon} months, the mean rank IC was above zero in {pos} of the {len(judged)} calendar years "
                   f"long enough to judge (in-sample).")
    else:
        out.append(f"At {horizon} months no single calendar year is long enough to judge on its own (fewer than 10 "
                   f"independent periods each); the years are shown, not judged.")
    d = result.period_difference
    if d is not None and not d.empty and int(horizon) in set(d["horizon"]):
        row = d[d["horizon"] == int(horizon)].iloc[0]
        if bool(row["too_short"]):
            out.append(f"Split at {row['split']}: at least one half is too short to judge at this horizon, so the two "
                       f"halves are not compared.")
        else:
            t = _f(row["ic_difference_t"])
            diff = "no evidence either way that the halves differ" if abs(t) < 2 else \
                "evidence that the halves differ at the usual 5% level"
            out.append(f"From {row['split']} on, the mean IC differed from the earlier half by "
                       f"{fmt_num(row['ic_difference'], 3)} (t = {fmt_num(t, 2)}): {diff}.")
    return out


def sector_sentences(result: StudyResult, horizon: int) -> list[str]:
    s = result.ic_by_sector
    if s is None or s.empty:
        return ["No sectors file was given, so the signal is not split by sector."]
    s = s[s["horizon"] == int(horizon)]
    ok = s[s["judged"].astype(bool) & ~s["too_short"].astype(bool)]
    small = int((~s["judged"].astype(bool)).sum())
    if len(ok):
        out = [f"Inside the sectors (each ranked among its own names), the mean rank IC at {horizon} months was "
               f"above zero in {int((ok['mean_ic'] > 0).sum())} of {len(ok)} sectors that can be judged."]
    else:
        out = [f"No sector can be judged on its own at {horizon} months: none had enough names on enough dates, "
               "so the signal is not split by sector here."]
    if len(ok):
        lo, hi = ok.loc[ok["mean_ic"].idxmin()], ok.loc[ok["mean_ic"].idxmax()]
        out.append(f"The weakest was {lo['sector']} ({fmt_num(lo['mean_ic'], 3)}, t = {fmt_num(lo['ic_t'], 2)}), the "
                   f"strongest {hi['sector']} ({fmt_num(hi['mean_ic'], 3)}, t = {fmt_num(hi['ic_t'], 2)}); with several "
                   f"sectors, one extreme is expected by chance.")
    if small:
        out.append(f"{small} sector(s) never had enough names on a date and are too small to judge.")
    return out


def regime_sentences(result: StudyResult, horizon: int) -> list[str]:
    r = result.ic_by_regime
    if r is None or r.empty:
        return []
    r = r[r["horizon"] == int(horizon)].set_index(["regime", "state"])
    try:
        up, down = r.loc[("market", "rose")], r.loc[("market", "fell")]
    except KeyError:
        return []
    return [f"When the comparison rose over the window the mean IC was {fmt_num(up['mean_ic'], 3)} "
            f"({int(up['n_dates'])} dates), when it fell {fmt_num(down['mean_ic'], 3)} ({int(down['n_dates'])} dates); "
            f"the split is after the fact, a description rather than a rule one could have traded."]


def decay_sentences(result: StudyResult) -> list[str]:
    d = result.ic_decay
    if d is None or d.empty:
        return []
    f = result.decay_facts
    m = d["marginal_ic"].to_numpy(dtype=float)
    hl = _f(f.get("half_life_months"))
    first = (f"The signal's rank IC against the one-month return is {fmt_num(m[0], 3)} one month ahead and "
             f"{fmt_num(m[-1], 3)} {len(m)} months ahead")
    if math.isfinite(hl):
        first += f"; it halves after about {hl:.1f} months."
    elif np.isfinite(m[0]) and m[0] > 0:
        first += f"; it does not halve within {len(m)} months."
    else:
        first += "."
    ac = _f(f.get("rank_autocorrelation_1m"))
    second = (f"From one month to the next the signal's ranking has a rank correlation of {fmt_num(ac, 2)} with "
              f"itself ({'a slowly changing screen, low turnover' if ac >= 0.8 else 'a screen that changes a lot'}).")
    return [first, second]


def controls_sentences(result: StudyResult, horizon: int) -> list[str]:
    c = result.fm_controls
    if c is None or c.empty or int(horizon) not in set(c["horizon"]):
        return []
    r = c[c["horizon"] == int(horizon)].iloc[0]
    if r["controls"] == "none":
        return ["No control could be built from the files given."]
    if int(r.get("n_dates_with", 0) or 0) == 0:
        return [f"With {r['controls']} in the same monthly regressions, the slope on the signal at {horizon} months "
                "cannot be estimated: no date had enough names with every control for a regression with that many "
                f"terms. Without the controls it is {fmt_num(r['slope_without'], 4)}."]
    verdict = evidence_phrase(r["evidence_with"])
    return [f"With {r['controls']} in the same monthly regressions, the slope on the signal at {horizon} months is "
            f"{fmt_num(r['slope_with'], 4)} (t = {fmt_num(r['t_with'], 2)}: {verdict}) against "
            f"{fmt_num(r['slope_without'], 4)} without them.",
            f"The rank IC of the part of the signal the controls do not explain is {fmt_num(r['ic_net'], 3)} "
            f"(t = {fmt_num(r['ic_net_t'], 2)}). An association in-sample, not a cause."]


def cap_sentences(result: StudyResult, horizon: int) -> list[str]:
    c = result.cap_weighted
    if c is None or c.empty or int(horizon) not in set(c["horizon"]):
        return ["Without a market-cap file only the equal-weighted view is shown; a reward that lives only in the "
                "smallest names would not be visible."]
    r = c[c["horizon"] == int(horizon)].iloc[0]
    return [f"Per {horizon}-month period the spread was {fmt_pct(r['spread_equal'], 2)} equal-weighted and "
            f"{fmt_pct(r['spread_cap'], 2)} cap-weighted (t = {fmt_num(r['spread_cap_t'], 2)}), gross of costs."]


def stability_sentences(result: StudyResult, horizon: int) -> list[str]:
    """Every sentence of the stability section for one horizon, in reading order."""
    return [*relative_sentences(result), *period_sentences(result, horizon), *regime_sentences(result, horizon),
            *sector_sentences(result, horizon), *decay_sentences(result), *controls_sentences(result, horizon),
            *cap_sentences(result, horizon)]


def _words(name: str) -> str:
    return SIGNAL_WORDS.get(name, name)


def compare_sentences(cmp: CompareResult, horizon: int) -> list[str]:
    """The comparison in sentences at one horizon."""
    t = cmp.table[cmp.table["horizon"] == int(horizon)]
    if t.empty:
        return [f"No signal was studied at {horizon} months."]
    judged = t[~t["too_short"].astype(bool)]
    out = []
    if judged.empty:
        out.append(f"At {horizon} months every signal is too short to judge; the numbers are shown without a verdict.")
    else:
        best = judged.loc[judged["mean_ic"].idxmax()]
        out.append(f"At {horizon} months the highest mean rank IC was {_words(best['signal'])}'s "
                   f"({fmt_num(best['mean_ic'], 3)}, t = {fmt_num(best['ic_t'], 2)}: {evidence_phrase(best['evidence'])}); "
                   f"{len(t)} signals were compared, and the best of several looks better than it is.")
    c = cmp.correlation
    names = list(c.index)
    pairs = [(c.iat[i, j], names[i], names[j]) for i in range(len(names)) for j in range(i + 1, len(names))
             if np.isfinite(c.iat[i, j])]
    if pairs:
        v, a, b = max(pairs)
        out.append(f"The most alike pair is {_words(a)} and {_words(b)} (mean rank correlation {v:.2f}).")
    j = cmp.joint_fm[cmp.joint_fm["horizon"] == int(horizon)]
    if not j.empty:
        parts = [f"{_words(r['signal'])} not estimable (the signals move together too closely)"
                 if int(r["n_dates"]) == 0 else
                 f"{_words(r['signal'])} {fmt_num(r['mean_slope'], 4)} (t = {fmt_num(r['t'], 2)}"
                 + (", too short to judge" if bool(r["too_short"]) else "") + ")" for _, r in j.iterrows()]
        out.append("In one regression with the others, the slopes are: " + "; ".join(parts) + ". A signal whose slope "
                   "stays clear of zero carries information the others do not (in-sample association).")
    out.append("All figures are in-sample, equal-weighted and gross of trading costs unless stated.")
    return out


def _reading(fn: Any) -> Any:
    return lambda r, h, p: fn(r, h)[:3]


#: chart key -> reading (result, horizon, panel) -> sentences, for the report's chart pages.
STABILITY_READINGS = {
    "stability_periods": lambda r, h, p: period_sentences(r, h) or ["No period table."],
    "stability_sectors": lambda r, h, p: sector_sentences(r, h),
    "ic_decay": lambda r, h, p: decay_sentences(r) or ["No decay table."],
    "relative": lambda r, h, p: (relative_sentences(r) + cap_sentences(r, h))[:3],
}
