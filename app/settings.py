"""Study settings as the browser holds them (plain JSON), their StudyConfig, and the controls' words.

The controls of the Study page write a small dict; :func:`config_from_settings` turns it into a
validated :class:`~valuesift.core.config.StudyConfig` (a ConfigError names the setting, by its
label, when a value is not allowed).  Defaults, ranges, labels and help sentences all come
from the one settings table, :data:`valuesift.core.settings.SETTINGS`.
"""

from __future__ import annotations

from typing import Any, Sequence

from valuesift.core.config import StudyConfig
from valuesift.core.settings import DEFAULT_HORIZONS, HORIZON_RANGE, SETTING_BY_NAME, Setting

__all__ = [
    "DEFAULT_SETTINGS",
    "HORIZON_CHOICES",
    "PREFERRED_HORIZON",
    "PAGE_SETTINGS",
    "OTHER_PAGE_SETTINGS",
    "config_from_settings",
    "clean_settings",
    "study_settings",
    "shown_horizon",
    "label",
    "help_text",
    "options",
    "bounds",
]

#: The study settings with a control on the Study page (the winsorising pair is shown as its lower end).
PAGE_SETTINGS: tuple[str, ...] = (
    "signal", "universe", "universe_sectors", "min_history_months", "horizons", "n_quantiles", "outlier_rule",
    "winsor_percentiles", "zscore_method", "sector_neutral", "reporting_lag_months", "dividend_treatment",
    "excess_over", "holding_months", "transaction_cost_bps", "min_breadth",
)

#: Study settings with a control on another page (the Stability page's split month); kept in the same
#: settings dict, so every page runs the same study.
OTHER_PAGE_SETTINGS: tuple[str, ...] = ("split_month",)

#: Horizons offered as ticks on the Study page: common holding periods inside the one horizon range.
HORIZON_CHOICES: tuple[int, ...] = tuple(sorted({h for h in (1, 3, 6, 12, 24, 36, 60, 120, *DEFAULT_HORIZONS)
                                                 if HORIZON_RANGE[0] <= h <= HORIZON_RANGE[1]}))
#: The horizon drawn first when a study has it.
PREFERRED_HORIZON = 12


def _default(name: str) -> Any:
    v = SETTING_BY_NAME[name].default
    return list(v) if isinstance(v, tuple) else v


DEFAULT_SETTINGS: dict[str, Any] = {
    **{n: _default(n) for n in PAGE_SETTINGS if n != "winsor_percentiles"},
    "winsor_lower": float(SETTING_BY_NAME["winsor_percentiles"].default[0]),
    **{n: _default(n) for n in OTHER_PAGE_SETTINGS},
}


def shown_horizon(horizons: Sequence[int], current: Any = None) -> int:
    """The horizon to draw: ``current`` if the study has it, else 12 months if studied, else the first."""
    hs = [int(h) for h in horizons]
    if current is not None:
        try:
            if int(current) in hs:
                return int(current)
        except (TypeError, ValueError):
            pass
    return PREFERRED_HORIZON if PREFERRED_HORIZON in hs else hs[0]


def label(name: str) -> str:
    """The setting's label from the settings table."""
    return SETTING_BY_NAME[name].label


def help_text(name: str) -> str:
    """The setting's help sentence from the settings table."""
    return SETTING_BY_NAME[name].help


def options(name: str) -> list[dict[str, Any]]:
    """Dropdown/radio options of a choice setting: its codes with their words (first letter capital)."""
    s: Setting = SETTING_BY_NAME[name]
    return [{"label": w[:1].upper() + w[1:], "value": c} for c, w in s.choices]


def bounds(name: str) -> dict[str, Any]:
    """``min``/``max`` of a number control, from the settings table's range."""
    s = SETTING_BY_NAME[name]
    return {k: v for k, v in (("min", s.lo), ("max", s.hi)) if v is not None}


def clean_settings(raw: Any) -> dict[str, Any]:
    """Defaults overlaid with the known keys of ``raw`` (unknown keys dropped)."""
    out = dict(DEFAULT_SETTINGS)
    if isinstance(raw, dict):
        for k in DEFAULT_SETTINGS:
            if k in raw and raw[k] is not None:
                out[k] = raw[k]
    return out


def _int(v: Any, default: int) -> Any:
    if v is None or v == "":
        return default
    try:
        f = float(v)
    except (TypeError, ValueError):
        return v            # let StudyConfig name the bad value
    return int(f) if f.is_integer() else f


def _float(v: Any, default: float) -> Any:
    if v is None or v == "":
        return default
    try:
        return float(v)
    except (TypeError, ValueError):
        return v


def config_from_settings(raw: Any) -> StudyConfig:
    """The StudyConfig for a settings dict (ConfigError when a value is not allowed)."""
    s = clean_settings(raw)
    d = DEFAULT_SETTINGS
    lower = s["winsor_lower"]
    try:
        lower = float(lower)
    except (TypeError, ValueError):
        pass
    upper = 100.0 - lower if isinstance(lower, float) else lower
    return StudyConfig(
        signal=str(s["signal"]),
        universe=s["universe"],
        universe_sectors=tuple(s["universe_sectors"] or ()) if s["universe"] == "sectors" else (),
        min_history_months=_int(s["min_history_months"], d["min_history_months"]),
        horizons=tuple(sorted(int(h) for h in (s["horizons"] or []))),
        n_quantiles=_int(s["n_quantiles"], d["n_quantiles"]),
        outlier_rule=s["outlier_rule"],
        winsor_percentiles=(lower, upper),
        zscore_method=s["zscore_method"],
        sector_neutral=bool(s["sector_neutral"]),
        reporting_lag_months=_int(s["reporting_lag_months"], d["reporting_lag_months"]),
        dividend_treatment=s["dividend_treatment"],
        excess_over=s["excess_over"],
        holding_months=_int(s["holding_months"], d["holding_months"]),
        transaction_cost_bps=_float(s["transaction_cost_bps"], d["transaction_cost_bps"]),
        min_breadth=_int(s["min_breadth"], d["min_breadth"]),
        split_month=str(s["split_month"] or "").strip(),
    )


def study_settings(config: dict[str, Any]) -> tuple[dict[str, Any], list[str]]:
    """The Study page's settings for a configuration (a dict as ``StudyConfig.to_dict``), and those it cannot show.

    Returns ``(settings, not_shown)``: ``settings`` has the keys of :data:`DEFAULT_SETTINGS`;
    ``not_shown`` holds the labels of the configuration's settings that differ from the defaults
    but have no control on the Study page.
    """
    s = dict(DEFAULT_SETTINGS)
    for k in s:
        if k in config:
            s[k] = config[k]
    s["universe_sectors"] = list(config.get("universe_sectors") or [])
    s["horizons"] = sorted(int(h) for h in config.get("horizons", s["horizons"]))
    lo, hi = config.get("winsor_percentiles", SETTING_BY_NAME["winsor_percentiles"].default)
    s["winsor_lower"] = float(lo)
    default = StudyConfig().to_dict()
    shown = set(PAGE_SETTINGS) | set(OTHER_PAGE_SETTINGS)
    not_shown = sorted(label(k) if k in SETTING_BY_NAME else k
                       for k, v in config.items() if k not in shown and default.get(k) != v)
    if float(hi) != 100.0 - float(lo):
        not_shown.append(f"{label('winsor_percentiles')} (the page mirrors the lower one)")
    return s, not_shown
