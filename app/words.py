"""The words a person reads for the codes the core returns: screen flags, quantiles, P/E, intake flags, settings.

One table per kind of code, used by every page, the command line and the bundle, so that a
flag or a setting reads the same everywhere.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from valuesift.core.config import StudyConfig
from valuesift.core.intake.flags import SECURITY_FLAGS
from valuesift.core.reporting.screen import SCREEN_FLAGS
from valuesift.core.settings import SETTINGS, describe_value

__all__ = [
    "REASON_WORDS", "STAGE_WORDS", "reason_words", "stage_words",
    "SCREEN_FLAG_WORDS",
    "EVIDENCE_WORDS",
    "evidence_words",
    "SE_METHOD_WORDS",
    "t_name",
    "SECURITY_FLAG_WORDS",
    "GROUP_WORDS",
    "SIGNAL_WORDS",
    "quantile_words",
    "pe_words",
    "screen_flag_words",
    "screen_in_words",
    "security_flag_words",
    "settings_in_words",
    "settings_frame",
    "intake_report_text",
    "intake_report_lines",
    "SECURITY_COLUMN_WORDS",
]

#: Screen flag code -> words (``{price}`` / ``{eps}``: months since the last price / EPS).
SCREEN_FLAG_WORDS: dict[str, str] = {
    "outside_universe": "outside universe",
    "eps_not_positive": "EPS zero or negative",
    "stale_price": "no price for {price} months",
    "old_eps": "EPS {eps} months old",
    "no_quantile": "no quantile on this date",
    "no_signal": "no signal",
    "signal_not_meaningful": "signal of 0 or below: not meaningful for a lower-is-cheaper signal, set aside",
}

#: Intake flag code of a security -> words.
SECURITY_FLAG_WORDS: dict[str, str] = {
    "no_valid_price": "no valid price",
    "late_listing": "listed after the first month",
    "delisted": "prices end before the last month",
    "gaps": "months missing between first and last price",
    "suspected_split": "suspected split",
    "split_adjusted": "split adjusted",
    "stale": "stale prices",
    "extreme_pe": "extreme P/E",
    "negative_earnings": "negative earnings",
    "no_earnings": "no earnings",
    "looks_like_index": "looks like an index",
}

#: Column of the intake's security table -> words.
SECURITY_COLUMN_WORDS: dict[str, str] = {
    "first_valid": "first valid price", "last_valid": "last valid price", "n_valid": "months with a valid price",
    "coverage": "price coverage", "stale_months": "months set missing as stale",
    "max_flat_run": "longest run of unchanged prices (months)", "n_gaps": "months missing inside the range",
    "flags": "flags", "split_date": "suspected split date", "split_ratio": "suspected split ratio",
    "extreme_pe_months": "months with an extreme P/E", "max_abs_pe": "largest P/E (absolute)",
}

#: Built-in signal code -> words (a signal of the user's own is shown by its name).
SIGNAL_WORDS: dict[str, str] = {
    "earnings_yield": "earnings yield",
    "dividend_yield": "dividend yield",
    "composite": "composite of yields",
}

#: Section of a setting -> heading.
GROUP_WORDS: dict[str, str] = {"signal": "Signal", "universe": "Universe", "returns": "Returns",
                               "evaluation": "Evaluation", "backtest": "Backtest"}

assert set(SCREEN_FLAG_WORDS) == set(SCREEN_FLAGS), "every screen flag code needs its words"
assert set(SECURITY_FLAGS) <= set(SECURITY_FLAG_WORDS), "every intake flag code needs its words"


#: Intake's reason codes (:class:`valuesift.core.errors.Reason`) as a person reads them; every code has words
#: (a test fails when one is added without them).
REASON_WORDS: dict[str, str] = {
    "empty_file": "the file is empty", "no_header": "no row of column names", "unreadable": "the file cannot be read",
    "bad_encoding": "characters in an unknown encoding", "unsupported_format": "a file format that cannot be read",
    "too_large": "the file is too large", "no_date_column": "no date column", "no_value_column": "no value column",
    "ambiguous_dates": "dates that read either day-first or month-first",
    "ambiguous_layout": "a layout that reads more than one way", "duplicate_columns": "the same column name twice",
    "no_data": "no usable values", "blank": "blank cell", "missing_marker": "marked as missing (such as n.a.)",
    "unparseable_number": "not a number", "unparseable_date": "not a date", "non_finite": "infinite or not a number",
    "non_positive_price": "price of zero or below", "duplicate_entry": "the same date and security twice",
    "excluded_column": "in a column you left out", "stale": "value older than the staleness limit",
    "outside_history": "outside the price history", "unknown_security": "security not in the price file",
    "superseded_in_month": "replaced by a later value in the same month", "out_of_range": "outside the allowed range",
    "negative_amount": "negative amount", "row_without_date": "row without a date",
    "row_without_security": "row without a security", "unused_column": "column not used",
    "extra_field": "more fields than column names", "column_not_found": "the chosen column is not in the file",
    "too_slow": "reading took longer than the time limit", "unknown_kind": "the kind of file is not known",
    "price_file_count": "not exactly one price file", "bad_option": "a reading choice that is not allowed",
    "duplicate_kind": "two files of the same kind",
    "dividend_without_price": "dividend in a month without a price",
    "dividend_implausible": "dividend above 10 % of the month's price",
}

#: The study steps that leave dates out (``StudyResult.date_notes["stage"]``), in words.
STAGE_WORDS: dict[str, str] = {"signal": "Signal", "ic": "Information coefficient", "quantiles": "Quantiles"}


def reason_words(code: object) -> str:
    """An intake reason code in words (an unknown code with its underscores as spaces)."""
    c = str(getattr(code, "value", code))
    return REASON_WORDS.get(c, c.replace("_", " "))


def stage_words(code: object) -> str:
    """A study stage code in words."""
    return STAGE_WORDS.get(str(code), str(code).replace("_", " "))


def quantile_words(q: float, n_q: int) -> str:
    """A quantile on the study's numbering (1 = dearest .. n = cheapest): ``"5 of 5 (cheapest)"``, ``"3 of 5"``."""
    if not np.isfinite(q):
        return ""
    k = int(q)
    tail = " (cheapest)" if k == n_q else " (dearest)" if k == 1 else ""
    return f"{k} of {n_q}{tail}"


def pe_words(pe: float, has_eps: bool) -> str:
    """P/E to one decimal; "not meaningful" when an EPS is in use but the P/E is not (EPS of 0 or below)."""
    if np.isfinite(pe):
        return f"{pe:.1f}"
    return "not meaningful" if has_eps else ""


def screen_flag_words(codes: str, months_since_price: float = np.nan, months_since_eps: float = np.nan) -> str:
    """A screen row's ``;``-joined flag codes in words, ``; ``-joined."""
    price = int(months_since_price) if np.isfinite(months_since_price) else "?"
    eps = int(months_since_eps) if np.isfinite(months_since_eps) else "?"
    out = [SCREEN_FLAG_WORDS.get(c, c.replace("_", " ")).format(price=price, eps=eps)
           for c in str(codes or "").split(";") if c]
    return "; ".join(out)


def screen_in_words(screen: pd.DataFrame, n_quantiles: int | None = None) -> pd.DataFrame:
    """The screen with its codes in words: ``pe_display``, ``quantile_label`` and ``flags`` as text.

    ``n_quantiles`` defaults to the screen's ``attrs["n_quantiles"]``; missing columns read as
    blank.  The numbers are left as
    they are; ``attrs`` (the date) are kept.  A screen already in words is returned unchanged.
    """
    if "quantile_label" in screen.columns:
        return screen
    nan = pd.Series(np.nan, index=screen.index)

    def col(name: str) -> np.ndarray:
        return pd.to_numeric(screen[name] if name in screen.columns else nan, errors="coerce").to_numpy(dtype=float)

    pe, q, pa, ea = col("pe"), col("quantile"), col("months_since_price"), col("months_since_eps")
    if n_quantiles is None:  # a screen without its attrs (a hand-made table): the highest quantile present
        n_quantiles = screen.attrs.get("n_quantiles") or (int(np.nanmax(q)) if np.isfinite(q).any() else 0)
    has = screen["has_eps"].to_numpy(dtype=bool) if "has_eps" in screen.columns else np.isfinite(pe)
    codes = screen["flags"] if "flags" in screen.columns else pd.Series("", index=screen.index)
    out = screen.copy()
    out["pe_display"] = [pe_words(a, b) for a, b in zip(pe, has)]
    out["quantile_label"] = [quantile_words(v, int(n_quantiles)) for v in q]
    out["flags"] = [screen_flag_words(c, a, b) for c, a, b in zip(codes, pa, ea)]
    out.attrs = dict(screen.attrs)
    return out


def security_flag_words(codes: str) -> str:
    """An intake row's ``;``-joined flag codes in words."""
    return "; ".join(SECURITY_FLAG_WORDS.get(c, c.replace("_", " ")) for c in str(codes or "").split(";") if c)


def settings_in_words(config: StudyConfig) -> list[tuple[str, str, str]]:
    """Every setting of ``config`` as (section, label, value in words), in the order of the settings table.

    Signals are named in words (:data:`SIGNAL_WORDS`); every other value as
    :func:`valuesift.core.settings.describe_value` words it.
    """
    out = []
    for s in SETTINGS:
        v = getattr(config, s.name)
        if s.name == "signal":
            words = SIGNAL_WORDS.get(v, v)
        elif s.name == "composite_of":
            words = ", ".join(SIGNAL_WORDS.get(x, x) for x in v)
        else:
            words = describe_value(s, v)
        out.append((GROUP_WORDS.get(s.group, s.group.title()), s.label, words))
    return out


def settings_frame(config: StudyConfig) -> pd.DataFrame:
    """:func:`settings_in_words` as a table (``Section``, ``Setting``, ``Value``) for the workbook's settings sheet."""
    return pd.DataFrame(settings_in_words(config), columns=["Section", "Setting", "Value"])


def intake_report_lines(report: Any, *, max_names: int = 10) -> list[str]:
    """The intake's securities in sentences: each flag with its count and names, coverage, splits, alignment, notes."""
    lines: list[str] = []
    sec = report.securities
    lines.append(f"Securities: {len(sec)}" + (
        f"; median price coverage {report.median_coverage:.1%}" if len(sec) and np.isfinite(report.median_coverage)
        else ""))
    for flag in SECURITY_FLAGS:
        names = report.flagged(flag)
        if names:
            shown = ", ".join(names[:max_names]) + (f" and {len(names) - max_names} more" if len(names) > max_names else "")
            lines.append(f"{SECURITY_FLAG_WORDS[flag].capitalize()}: {len(names)} ({shown})")
    for _, r in report.suspected_splits.iterrows():
        lines.append(f"Suspected split: {r['security']} at {pd.Timestamp(r['date']).date()}, ratio "
                     f"{float(r['ratio']):g}, {'applied' if bool(r['applied']) else 'not applied (confirm to adjust)'}")
    for _, r in report.alignment.iterrows():
        lines.append(f"Set aside while aligning to month-ends: {r['file']}, {str(r['reason']).replace('_', ' ')}: "
                     f"{int(r['count'])}")
    lines.extend(f"Panel note: {n}" for n in report.panel_notes)
    if getattr(report, "holdings_total", None) is not None:
        lines.append(f"Holdings weights as read sum to {report.holdings_total:.4f}")
    return lines


def intake_report_text(report: Any) -> str:
    """The terminal account of an intake: each file's report, then :func:`intake_report_lines`."""
    parts = [f.to_text() for f in report.files]
    parts.extend(intake_report_lines(report, max_names=8))
    return "\n".join(parts)


#: The evidence codes in words (codes from valuesift.core.inference.evidence).
EVIDENCE_WORDS: dict[str, str] = {
    "strong": "strong evidence by the usual standard, |t| of 3 or more",
    "moderate": "some evidence: distinguishable from zero at the usual 5% level, not by a wide margin",
    "no_evidence": "no evidence either way at this sample size",
    "moderate_reverse": "some evidence in the reverse direction: the dear names out-earned the cheap ones",
    "strong_reverse": "strong evidence in the reverse direction: the dear names out-earned the cheap ones",
    "too_short": "too short to judge",
    "not_available": "cannot be judged (too few dates)",
}


def evidence_words(code: Any, independent_periods: Any = None) -> str:
    """The verdict code in words; a too-short horizon says how many independent periods it rests on."""
    c = str(code)
    if c == "too_short":
        try:
            ip = float(independent_periods)
        except (TypeError, ValueError):
            ip = float("nan")
        return ("too short to judge: only " + (f"{ip:.1f} " if np.isfinite(ip) else "a few ") +
                "independent periods, so no verdict is given")
    return EVIDENCE_WORDS.get(c, EVIDENCE_WORDS["not_available"])


#: The standard-error method codes of the summaries in words.
SE_METHOD_WORDS: dict[str, str] = {"hansen_hodrick": "Hansen-Hodrick", "newey_west": "Newey-West",
                                   "newey_west_fallback": "Newey-West"}


def t_name(method: Any) -> str:
    """``"Hansen-Hodrick t"`` or ``"Newey-West t"`` for a method code (``"t"`` when unknown)."""
    name = SE_METHOD_WORDS.get(str(method))
    return f"{name} t" if name else "t"
