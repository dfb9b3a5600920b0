"""A sweep grid from the dashboard's controls: the values chosen for each dimension, checked in words.

The dashboard's sweep form offers the dimensions of :data:`FORM_DIMENSIONS`.  Each control hands
over a list of the values chosen (codes, as the grid file writes them; the outlier rule and
sector neutrality as the codes of :func:`outlier_choices` and the settings table's on/off codes).
:func:`grid_from_controls` turns them into a grid document and hands it to
:func:`~valuesift.core.sweep.grid.parse_grid` (the one crossing and validation of grids), with
:data:`~valuesift.core.sweep.grid.MAX_IN_PROCESS_POINTS` as the limit, and says what is wrong in a
sentence that names the control by its label in the settings table.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from valuesift.core.config import StudyConfig
from valuesift.core.errors import ConfigError
from valuesift.core.settings import SETTING_BY_NAME, SETTINGS, Setting, describe_value, is_month
from valuesift.core.sweep.grid import DIMENSIONS, MAX_IN_PROCESS_POINTS, SweepGrid, parse_grid

__all__ = ["FORM_DIMENSIONS", "HOLDOUT_LABEL", "NAME_LABEL", "dimension_setting", "dimension_label",
           "outlier_choices", "count_configurations", "grid_from_controls", "check_holdout"]

#: The dimensions of the dashboard's sweep form, in the form's order (grid names of the settings table).
FORM_DIMENSIONS: tuple[str, ...] = ("signal", "horizons", "quantiles", "outliers", "sector_neutral",
                                    "reporting_lag", "cost_bps")
#: Label of the optional hold-out month of a sweep (not a study setting: it splits the sweep's dates).
HOLDOUT_LABEL = "Hold-out from (month)"
#: Label of the sweep's name.
NAME_LABEL = "Sweep name"

#: Winsorising pairs the form offers (the grid file may use any pair).
_WINSOR_PAIRS: tuple[tuple[float, float], ...] = ((1.0, 99.0), (2.5, 97.5), (5.0, 95.0))


def dimension_setting(dim: str) -> Setting:
    """The settings-table row a grid dimension is named after (the first row whose ``grid`` is ``dim``)."""
    for st in SETTINGS:
        if st.grid == dim:
            return st
    raise KeyError(dim)


def dimension_label(dim: str) -> str:
    """A grid dimension's label as a person reads it (from the settings table)."""
    try:
        return dimension_setting(dim).label
    except KeyError:
        return dim.replace("_", " ")


def _pair_code(lo: float, hi: float) -> str:
    return f"winsorise:{lo:g}:{hi:g}"


def outlier_choices() -> tuple[tuple[str, str], ...]:
    """(code, words) of the outlier treatments the form offers: winsorising pairs, clipping, none."""
    rule, pair = SETTING_BY_NAME["outlier_rule"], SETTING_BY_NAME["winsor_percentiles"]
    out = [(_pair_code(lo, hi), f"{rule.words('winsorise')} {describe_value(pair, (lo, hi))}")
           for lo, hi in _WINSOR_PAIRS]
    out += [(c, rule.words(c)) for c in rule.codes if c != "winsorise"]
    return tuple(out)


def _outlier_value(code: Any) -> Any:
    """The grid file's value of an outlier code (a percentile pair, or the rule's code)."""
    if isinstance(code, str) and code.startswith("winsorise:"):
        parts = code.split(":")
        try:
            lo, hi = float(parts[1]), float(parts[2])
        except (IndexError, ValueError):
            return code
        return [lo, hi]
    return code


def _bool_value(code: Any) -> Any:
    """The settings table's on/off codes ("True"/"False") as booleans (booleans pass through)."""
    if isinstance(code, bool):
        return code
    return {"True": True, "False": False}.get(str(code), code)


def _number(code: Any) -> Any:
    if isinstance(code, bool):
        return code
    if isinstance(code, (int, float)):
        return int(code) if float(code).is_integer() else float(code)
    try:
        f = float(str(code))
    except ValueError:
        return code
    return int(f) if math.isfinite(f) and f.is_integer() else f


def _values(values: Mapping[str, Any], dim: str) -> list[Any]:
    raw = values.get(dim)
    if raw is None:
        return []
    vals = list(raw) if isinstance(raw, (list, tuple)) else [raw]
    if dim == "outliers":
        return [_outlier_value(v) for v in vals]
    if dim == "sector_neutral":
        return [_bool_value(v) for v in vals]
    if dim == "signal":
        return [str(v) for v in vals]
    return [_number(v) for v in vals]


def count_configurations(values: Mapping[str, Any]) -> int:
    """How many studies the chosen values cross to (before repeated configurations are counted once).

    Horizons are not counted: one study computes every horizon.  A dimension with nothing chosen
    makes the product 0.
    """
    n = 1
    for dim in FORM_DIMENSIONS:
        if dim != "horizons":
            n *= len(_values(values, dim))
    return n


def check_holdout(holdout: Any) -> str | None:
    """The hold-out month as ``YYYY-MM`` (None when left empty); ConfigError naming the control otherwise."""
    text = "" if holdout is None else str(holdout).strip()
    if not text:
        return None
    if not is_month(text):
        raise ConfigError(f"{HOLDOUT_LABEL}: {text!r} is not a month written YYYY-MM.",
                          hint="Write the first month of the hold-out, such as 2019-01, or leave it empty.",
                          setting="holdout")
    return text


def grid_from_controls(values: Mapping[str, Any], *, base: Mapping[str, Any] | None = None, name: str = "sweep",
                       max_points: int = MAX_IN_PROCESS_POINTS) -> SweepGrid:
    """The sweep grid of the form's chosen values, validated by :func:`parse_grid`.

    Parameters
    ----------
    values : mapping
        ``{dimension: list of chosen values}`` for the dimensions of :data:`FORM_DIMENSIONS`.
    base : mapping, optional
        The settings shared by every point (``StudyConfig.to_dict()`` form; defaults otherwise).
        The settings a dimension sets are taken from the dimension, not from ``base``.
    name : str
        The sweep's name.
    max_points : int
        The most studies the form may ask for (:data:`MAX_IN_PROCESS_POINTS`).

    Raises
    ------
    ConfigError
        A control with nothing chosen, a value a study does not allow, or more than ``max_points``
        studies; the message names the control by its label.
    """
    for dim in FORM_DIMENSIONS:
        if not _values(values, dim):
            raise ConfigError(f"{dimension_label(dim)}: nothing is chosen, so the sweep has no configuration.",
                              hint=f"Choose at least one value under {dimension_label(dim)}.",
                              setting=dimension_setting(dim).name)
    n = count_configurations(values)
    if n > max_points:
        widest = max((d for d in FORM_DIMENSIONS if d != "horizons"), key=lambda d: len(_values(values, d)))
        raise ConfigError(f"The choices cross to {n} configurations, more than the {max_points} a sweep run here "
                          f"may have.", hint=f"Choose fewer values, for example under {dimension_label(widest)} "
                                             f"({len(_values(values, widest))} chosen).",
                          setting=dimension_setting(widest).name)
    shared = dict(base or StudyConfig().to_dict())
    for dim in FORM_DIMENSIONS:
        for st in SETTINGS:
            if st.grid == dim:
                shared.pop(st.name, None)
    # A control with one value chosen is a shared setting (not a column of the table); horizons always vary.
    vary: dict[str, list[Any]] = {}
    for dim in FORM_DIMENSIONS:
        vals = _values(values, dim)
        if len(vals) > 1 or dim == "horizons":
            vary[dim] = vals
            continue
        try:
            one = DIMENSIONS[dim](vals[0])
        except ValueError as err:
            raise ConfigError(f"{dimension_label(dim)}: the value {vals[0]!r} is not allowed.",
                              hint=f"Allowed: {err}.", setting=dimension_setting(dim).name) from err
        shared.update({k: list(v) if isinstance(v, tuple) else v for k, v in one.items()})
    if len(vary) == 1:  # only horizons: the grid still needs one dimension to cross
        dim = "signal"
        vary = {dim: _values(values, dim), **vary}
        shared.pop("signal", None)
    try:
        return parse_grid({"sweep": {"name": str(name)}, "study": shared, "vary": vary}, "the sweep form",
                          max_points=max_points)
    except ConfigError as err:
        raise _in_words(err, vary) from err


def _in_words(err: ConfigError, vary: Mapping[str, list[Any]]) -> ConfigError:
    """A grid error re-worded for the form: the study's own sentence (it names the setting by its label)."""
    inner = err.__cause__ if isinstance(err.__cause__, ConfigError) else err
    msg = inner.message
    for dim in sorted(vary, key=len, reverse=True):
        msg = msg.replace(f"[vary] {dim!r}", dimension_label(dim))
    msg = msg.replace("the sweep form: ", "")
    return ConfigError(msg, hint=inner.hint or "Change that value.", setting=getattr(inner, "setting", None))
