"""The one description of every study setting.

Each :class:`Setting` row holds a setting's name (the :class:`~valuesift.core.config.StudyConfig`
field), its kind and range, its default, the human label and help sentence a person reads,
the command-line flag, the kind of dashboard control and the sweep-grid name.  From this
table come: the validation of :class:`StudyConfig` (lazily, every failure collected before
raising), the command-line options of ``study``/``sweep``, the Study page's controls, the
sweep grid's dimensions, the report cover and the settings sheet of the workbook.

A new setting is one row here plus one field of :class:`StudyConfig` (a test fails when
the two disagree).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np

__all__ = [
    "Setting",
    "Failure",
    "SETTINGS",
    "SETTING_BY_NAME",
    "HORIZON_RANGE",
    "DEFAULT_HORIZONS",
    "check_value",
    "describe_value",
    "failure_message",
    "SIGNAL_WORDS",
    "is_month",
]

SettingKind = Literal["int", "float", "bool", "choice", "int_list", "name", "name_list", "percentile_pair", "month"]
ControlKind = Literal["dropdown", "number", "checklist", "switch", "radio", "none"]

#: The horizons (months) a study may ask for: the one range of the core, the page and the command line.
HORIZON_RANGE: tuple[int, int] = (1, 120)
#: The default horizons, written once.
DEFAULT_HORIZONS: tuple[int, ...] = (1, 3, 6, 12, 24, 36)


@dataclass(frozen=True)
class Setting:
    """One study setting.

    Attributes
    ----------
    name : str
        Field name of :class:`~valuesift.core.config.StudyConfig` (a code, never shown to a person).
    kind : str
        ``int``, ``float``, ``bool``, ``choice``, ``int_list``, ``name`` (text), ``name_list``
        (several texts) or ``percentile_pair`` (lower, upper).
    default : object
    label : str
        Human label (used by the controls, the notes, the sweep table, the report cover,
        the workbook and the command-line help).
    help : str
        One plain sentence saying what the setting does.
    lo, hi : float or None
        Inclusive range of a number (or of each element of an ``int_list``); ``lo_open``
        makes the lower end exclusive.
    choices : tuple of (code, words)
        For ``choice``: the allowed codes and how a person reads each.
    flag : str or None
        Command-line flag of ``valuesift study`` (None: not on the command line).
    control : str
        Kind of dashboard control on the Study page (``none``: not on the page).
    grid : str or None
        Name of the sweep-grid dimension that sets it (None: not a grid dimension).
    group : str
        Section of the cover and the settings sheet: ``signal``, ``universe``, ``returns``,
        ``evaluation`` or ``backtest``.
    """

    name: str
    kind: SettingKind
    default: Any
    label: str
    help: str
    lo: float | None = None
    hi: float | None = None
    lo_open: bool = False
    choices: tuple[tuple[str, str], ...] = ()
    flag: str | None = None
    control: ControlKind = "none"
    grid: str | None = None
    group: str = "evaluation"

    @property
    def codes(self) -> tuple[str, ...]:
        """The allowed codes of a ``choice`` setting."""
        return tuple(c for c, _ in self.choices)

    def words(self, code: object) -> str:
        """How a person reads ``code`` of a ``choice`` setting (the code itself if unknown)."""
        for c, w in self.choices:
            if c == code:
                return w
        return str(code)

    def rule(self) -> str:
        """The allowed values, in words."""
        if self.kind == "bool":
            return "on or off"
        if self.kind == "choice":
            return "one of " + ", ".join(f"{w!r}" for _, w in self.choices)
        if self.kind in ("int", "int_list"):
            unit = "a whole number" if self.kind == "int" else "distinct whole numbers, each"
            return f"{unit} from {_num(self.lo)} to {_num(self.hi)}"
        if self.kind == "float":
            low = f"above {_num(self.lo)}" if self.lo_open else f"from {_num(self.lo)}"
            return f"a number {low} to {_num(self.hi)}"
        if self.kind == "percentile_pair":
            return "a lower percentile from 0 to below 50 and an upper one above 50 up to 100"
        if self.kind == "name_list":
            return "a list of names"
        if self.kind == "month":
            return "a month written YYYY-MM, or nothing for the middle of the history"
        return "a name"


@dataclass(frozen=True)
class Failure:
    """One failed check of a setting (a row of the failure table of a ConfigError)."""

    setting: str
    value: object
    rule: str
    hint: str

    def as_dict(self) -> dict[str, object]:
        return {"setting": self.setting, "value": self.value, "rule": self.rule, "hint": self.hint}


def _num(x: float | None) -> str:
    if x is None:
        return "?"
    return str(int(x)) if float(x).is_integer() else f"{x:g}"


_YES_NO = (("True", "on"), ("False", "off"))

SETTINGS: tuple[Setting, ...] = (
    # -- signal ----------------------------------------------------------------------
    Setting("signal", "name", "earnings_yield", "Signal",
            "The valuation measure studied: earnings yield, dividend yield, the composite or a signal of your own.",
            flag="--signal-kind", control="dropdown", grid="signal", group="signal"),
    Setting("composite_of", "name_list", ("earnings_yield", "dividend_yield"), "Composite of",
            "The signals whose z-scores the composite averages (at least two).",
            flag="--composite-of", grid="composite_of", group="signal"),
    Setting("reporting_lag_months", "int", 0, "Reporting lag (months)",
            "Months by which each earnings figure is delayed before use; 3 is usual for figures dated at the "
            "fiscal period end, 0 for figures dated when they became public.",
            lo=0, hi=24, flag="--reporting-lag", control="number", grid="reporting_lag", group="signal"),
    Setting("eps_max_age_months", "int", 15, "Earnings figure kept (months)",
            "The last reported earnings figure stays in use this many months; after that the name has no signal.",
            lo=1, hi=60, flag="--eps-max-age", group="signal"),
    Setting("nonpositive_lower_is_cheaper", "choice", "set_aside", "Values of 0 or below",
            "For a signal where lower means cheaper (such as P/E), values of 0 or below are not meaningful: set them "
            "aside, or study the reciprocal (P/E becomes E/P, which keeps loss-makers in order).",
            choices=(("set_aside", "set aside as not meaningful"), ("reciprocal", "study the reciprocal")),
            flag="--nonpositive", control="radio", grid="nonpositive", group="signal"),
    Setting("outlier_rule", "choice", "winsorise", "Outliers",
            "How extreme signal values are tamed on each date before the z-score.",
            choices=(("winsorise", "winsorise at percentiles"), ("clip_robust_z", "clip at a robust z-score"),
                     ("none", "leave as they are")),
            flag="--outliers", control="dropdown", grid="outliers", group="signal"),
    Setting("winsor_percentiles", "percentile_pair", (1.0, 99.0), "Winsorising percentiles",
            "Lower and upper percentile at which values are replaced by the nearest kept value.",
            flag="--winsor", control="number", grid="outliers", group="signal"),
    Setting("robust_z_limit", "float", 3.0, "Robust z-score limit",
            "With clipping: values beyond the median plus or minus this many robust standard deviations are clipped.",
            lo=0.0, hi=20.0, lo_open=True, flag="--robust-z", group="signal"),
    Setting("zscore_method", "choice", "mean_std", "Z-score",
            "How the signal is standardised across names on each date.",
            choices=(("mean_std", "mean and standard deviation"), ("median_mad", "median and absolute deviation")),
            flag="--zscore", control="dropdown", grid="zscore", group="signal"),
    Setting("sector_neutral", "bool", False, "Sector-neutral",
            "Rank names within their sector and judge them against sector-relative returns.",
            choices=_YES_NO, flag="--sector-neutral", control="switch", grid="sector_neutral", group="signal"),
    Setting("min_sector_size", "int", 5, "Smallest sector (names)",
            "Sectors with fewer names on a date are handled by the small-sector rule.",
            lo=2, hi=10_000, flag="--min-sector-size", group="signal"),
    Setting("small_sector_rule", "choice", "pool", "Small sectors",
            "What happens to sectors below the smallest size in a sector-neutral z-score.",
            choices=(("pool", "pooled into one group"), ("drop", "left out"), ("raw", "given the universe z-score")),
            flag="--small-sectors", group="signal"),
    # -- universe --------------------------------------------------------------------
    Setting("universe", "choice", "all", "Universe",
            "Which names are studied on each date.",
            choices=(("all", "every security"), ("sectors", "chosen sectors"), ("holdings", "the holdings")),
            flag="--universe", control="dropdown", grid="universe", group="universe"),
    Setting("universe_sectors", "name_list", (), "Sectors kept",
            "With the chosen-sectors universe: the sectors studied (at least one).",
            flag="--sector", control="checklist", grid="universe", group="universe"),
    Setting("min_history_months", "int", 0, "Price history needed (months)",
            "A name enters the universe only after this many months of valid prices.",
            lo=0, hi=240, flag="--min-history", control="number", grid="min_history", group="universe"),
    Setting("min_breadth", "int", 10, "Minimum names per date",
            "Dates with fewer usable names get no information coefficient, spread or slope (they are listed).",
            lo=2, hi=1_000_000, flag="--min-breadth", control="number", grid="min_breadth", group="universe"),
    # -- returns ---------------------------------------------------------------------
    Setting("horizons", "int_list", DEFAULT_HORIZONS, "Horizons (months)",
            "Holding periods over which later returns are measured.",
            lo=HORIZON_RANGE[0], hi=HORIZON_RANGE[1], flag="--horizons", control="checklist", grid="horizons",
            group="returns"),
    Setting("dividend_treatment", "choice", "reinvest", "Dividends",
            "Whether dividends are reinvested in the same name or held as cash until the horizon ends.",
            choices=(("reinvest", "reinvested"), ("uninvested", "held as cash")),
            flag="--dividends-as", control="dropdown", group="returns"),
    Setting("excess_over", "choice", "none", "Returns measured",
            "Raw total returns, or returns in excess of the equal-weight universe or the benchmark.",
            choices=(("none", "as they are"), ("universe", "over the universe"), ("benchmark", "over the benchmark")),
            flag="--excess", control="dropdown", grid="excess", group="returns"),
    Setting("delisting_return", "float", 0.0, "Return on delisting",
            "Return assumed for a name after its last price; 0 is optimistic for cheap, distressed names.",
            lo=-1.0, hi=1.0, flag="--delisting-return", group="returns"),
    # -- evaluation ------------------------------------------------------------------
    Setting("n_quantiles", "int", 5, "Quantiles",
            "Number of groups the names are split into on each date, from dearest to cheapest.",
            lo=2, hi=20, flag="--quantiles", control="dropdown", grid="quantiles", group="evaluation"),
    Setting("hac_lag_rule", "choice", "overlap_or_auto", "Lags of the standard errors",
            "Autocovariance lags of the standard errors: the horizon's overlap only, or at least the automatic "
            "Newey-West number.",
            choices=(("overlap", "horizon overlap"), ("overlap_or_auto", "overlap or automatic, the larger")),
            flag="--hac-lags", group="evaluation"),
    Setting("fm_sector_dummies", "bool", False, "Sector dummies in Fama-MacBeth",
            "Add a dummy per sector to each date's cross-sectional regression.",
            choices=_YES_NO, flag="--fm-sector-dummies", group="evaluation"),
    Setting("fm_log_market_cap", "bool", False, "Log market cap in Fama-MacBeth",
            "Add the logarithm of market capitalisation to each date's regression.",
            choices=_YES_NO, flag="--fm-log-cap", group="evaluation"),
    Setting("split_month", "month", "", "Split month",
            "The month from which the second half of the history is counted when the two halves are compared "
            "(empty: the middle of the dates with an information coefficient).",
            flag="--split-month", group="evaluation"),
    # -- backtest --------------------------------------------------------------------
    Setting("holding_months", "int", 1, "Backtest holding (months)",
            "Each month a new cohort is formed and held this many months (overlapping cohorts).",
            lo=1, hi=60, flag="--holding", control="number", grid="holding", group="backtest"),
    Setting("backtest_within_sectors", "bool", False, "Backtest within sectors",
            "Form the backtest's quantiles inside each sector.",
            choices=_YES_NO, flag="--backtest-within-sectors", group="backtest"),
    Setting("transaction_cost_bps", "float", 0.0, "Trading cost (basis points)",
            "Cost per unit of value traded, buys plus sells.",
            lo=0.0, hi=1000.0, flag="--cost-bps", control="number", grid="cost_bps", group="backtest"),
    Setting("risk_free_annual", "float", 0.0, "Risk-free rate (a year)",
            "Annual risk-free rate used by the Sharpe ratio (compounded to monthly).",
            lo=-0.05, hi=0.5, flag="--risk-free", group="backtest"),
    Setting("comparison", "choice", "universe", "Backtest compared with",
            "What the backtest's active return, cohorts and relative figures are measured against.",
            choices=(("universe", "the equal-weight universe"), ("benchmark", "the benchmark")),
            flag="--comparison", group="backtest"),
)

SETTING_BY_NAME: dict[str, Setting] = {s.name: s for s in SETTINGS}


def _is_int(v: object) -> bool:
    return isinstance(v, (int, np.integer)) and not isinstance(v, (bool, np.bool_))


def _is_num(v: object) -> bool:
    return isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, (bool, np.bool_))


def _in_range(s: Setting, v: float) -> bool:
    if not math.isfinite(v):
        return False
    lo_ok = s.lo is None or (v > s.lo if s.lo_open else v >= s.lo)
    return lo_ok and (s.hi is None or v <= s.hi)


def is_month(v: str) -> bool:
    """``YYYY-MM`` with a month 01..12 and a year 1800..2200."""
    if len(v) != 7 or v[4] != "-" or not (v[:4].isdigit() and v[5:].isdigit()):
        return False
    return 1800 <= int(v[:4]) <= 2200 and 1 <= int(v[5:]) <= 12


def check_value(setting: Setting, value: object) -> Failure | None:
    """The failure of ``value`` against ``setting``'s kind and range, or None when it is allowed."""
    s, v = setting, value
    ok = True
    if s.kind == "bool":
        ok = isinstance(v, (bool, np.bool_))
    elif s.kind == "choice":
        ok = v in s.codes
    elif s.kind == "int":
        ok = _is_int(v) and _in_range(s, float(v))  # type: ignore[arg-type]
    elif s.kind == "float":
        ok = _is_num(v) and _in_range(s, float(v))  # type: ignore[arg-type]
    elif s.kind == "int_list":
        ok = (isinstance(v, (tuple, list)) and len(v) > 0 and all(_is_int(x) and _in_range(s, float(x)) for x in v)
              and len({int(x) for x in v}) == len(v))
    elif s.kind == "name":
        ok = isinstance(v, str) and bool(v.strip())
    elif s.kind == "name_list":
        ok = isinstance(v, (tuple, list)) and all(isinstance(x, str) and x for x in v)
    elif s.kind == "month":
        ok = isinstance(v, str) and (v == "" or is_month(v))
    elif s.kind == "percentile_pair":
        ok = (isinstance(v, (tuple, list)) and len(v) == 2 and all(_is_num(x) and math.isfinite(float(x)) for x in v)
              and 0.0 <= float(v[0]) < 50.0 < float(v[1]) <= 100.0)
    if ok:
        return None
    return Failure(s.name, value, s.rule(), f"Choose {s.rule()}.")


#: How a person reads the built-in signal codes (user signals keep the name the user gave).
SIGNAL_WORDS: dict[str, str] = {"earnings_yield": "earnings yield", "dividend_yield": "dividend yield",
                                "composite": "composite"}


def describe_value(setting: Setting, value: object) -> str:
    """A setting's value as a person reads it (choices in words, lists joined, on/off)."""
    if setting.name in ("signal", "composite_of"):
        if isinstance(value, str):
            return SIGNAL_WORDS.get(value, value)
        if isinstance(value, (tuple, list)):
            return ", ".join(SIGNAL_WORDS.get(str(v), str(v)) for v in value)
    if setting.kind == "month":
        return str(value) if value else "middle"
    if setting.kind == "bool":
        return "on" if value else "off"
    if setting.kind == "choice":
        return setting.words(value)
    if setting.kind == "int_list" and isinstance(value, (tuple, list)):
        return ", ".join(str(int(x)) for x in value)
    if setting.kind == "name_list" and isinstance(value, (tuple, list)):
        return ", ".join(str(x) for x in value) if value else "none"
    if setting.kind == "percentile_pair" and isinstance(value, (tuple, list)) and len(value) == 2:
        return f"{_num(float(value[0]))} and {_num(float(value[1]))}"
    if isinstance(value, float):
        return _num(value)
    return str(value)


def failure_message(failures: list[Failure] | tuple[Failure, ...]) -> str:
    """One sentence per failure, naming the setting by its label and the value found."""
    parts = []
    for f in failures:
        s = SETTING_BY_NAME.get(f.setting)
        label = s.label if s is not None else f.setting
        shown = describe_value(s, f.value) if s is not None and not isinstance(f.value, (dict, set)) else repr(f.value)
        if shown in ("", "none") or f.value in ((), []):
            shown = "nothing"
        parts.append(f"{label}: {shown} is not allowed ({f.rule}).")
    return " ".join(parts)


def defaults() -> Mapping[str, Any]:
    """Every setting's default, by name."""
    return {s.name: s.default for s in SETTINGS}
