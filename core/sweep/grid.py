"""Sweep grid files: TOML in, a list of validated study configurations (grid points) out.

File format (our own; every section optional except ``[vary]``)::

    [sweep]
    name = "yield sweep"          # used in output titles

    [study]                       # settings shared by every point (StudyConfig names)
    min_breadth = 10
    horizons = [1, 3, 12]         # used when [vary] has no 'horizons'

    [vary]                        # dimensions crossed with each other
    signal = ["earnings_yield", "dividend_yield"]
    universe = ["all", "holdings", ["Mills", "Ports"]]   # a list = those sectors
    horizons = [1, 3, 12]
    quantiles = [5, 10]
    outliers = [[1, 99], [5, 95], "none", "clip_robust_z"]  # a pair = winsorise there
    zscore = ["mean_std", "median_mad"]
    sector_neutral = [false, true]
    reporting_lag = [0, 3]
    cost_bps = [0, 25]

Any :class:`core.study.StudyConfig` field name may also be used as a
dimension.  ``horizons`` is special: one study computes every horizon at once
(the numbers of one horizon do not depend on the others), so the horizon
values become rows of the comparison table rather than separate studies.
"""

from __future__ import annotations

import hashlib
import itertools
import json
import tomllib
from dataclasses import dataclass, fields
from pathlib import Path
from typing import Any, Callable

from valuesift.core.errors import ConfigError
from valuesift.core.config import StudyConfig
from valuesift.core.settings import SETTINGS

__all__ = ["GridPoint", "SweepGrid", "DIMENSIONS", "parse_grid", "read_grid", "config_id", "MAX_POINTS",
           "MAX_IN_PROCESS_POINTS"]

#: The most studies one grid may ask for (a guard against a typo that crosses too much).
MAX_POINTS = 5000
#: The most studies a sweep run in this process (one after another, as the dashboard runs it) may ask for:
#: one study of a few hundred names over twenty years takes about a second, so this is minutes of work.
MAX_IN_PROCESS_POINTS = 120


def _universe(v: Any) -> dict[str, Any]:
    if v in ("all", "holdings"):
        return {"universe": v, "universe_sectors": ()}
    if isinstance(v, str) and v:
        return {"universe": "sectors", "universe_sectors": (v,)}
    if isinstance(v, list) and v and all(isinstance(s, str) and s for s in v):
        return {"universe": "sectors", "universe_sectors": tuple(v)}
    raise ValueError("'all', 'holdings', a sector name or a list of sector names")


def _outliers(v: Any) -> dict[str, Any]:
    if v in ("none", "clip_robust_z"):
        return {"outlier_rule": v}
    if isinstance(v, list) and len(v) == 2 and all(isinstance(x, (int, float)) and not isinstance(x, bool)
                                                   for x in v):
        return {"outlier_rule": "winsorise", "winsor_percentiles": (float(v[0]), float(v[1]))}
    raise ValueError("a pair of percentiles such as [1, 99], 'none' or 'clip_robust_z'")


def _field(name: str) -> Callable[[Any], dict[str, Any]]:
    def f(v: Any) -> dict[str, Any]:
        return {name: tuple(v) if isinstance(v, list) else v}
    return f


#: Grid names that set more than one setting (the universe with its sectors, outliers with their percentiles).
_COMBINED: dict[str, Callable[[Any], dict[str, Any]]] = {"universe": _universe, "outliers": _outliers}


def _dimensions() -> dict[str, Callable[[Any], dict[str, Any]]]:
    out: dict[str, Callable[[Any], dict[str, Any]]] = {}
    for st in SETTINGS:
        if st.grid is None or st.grid == "horizons":  # horizons are the tests of every point, not a dimension
            continue
        out.setdefault(st.grid, _COMBINED.get(st.grid) or _field(st.name))
    return out


#: Plain dimension names of the grid file and the study settings each one sets (from the settings table's
#: ``grid`` names).
DIMENSIONS: dict[str, Callable[[Any], dict[str, Any]]] = _dimensions()
_CONFIG_FIELDS = {f.name for f in fields(StudyConfig)}


def config_id(config: StudyConfig) -> str:
    """Stable id of a configuration: the first 12 hex digits of SHA-256 of its sorted JSON settings."""
    blob = json.dumps(config.to_dict(), sort_keys=True, separators=(",", ":"), default=str)
    return hashlib.sha256(blob.encode("utf-8")).hexdigest()[:12]


def _label(v: Any) -> str:
    if isinstance(v, list):
        return "[" + ", ".join(_label(x) for x in v) + "]"
    if isinstance(v, bool):
        return "true" if v else "false"
    return str(v)


@dataclass(frozen=True)
class GridPoint:
    """One study of the sweep.

    Attributes
    ----------
    id : str
        :func:`config_id` of ``config``.
    config : StudyConfig
    varied : tuple of (dimension, value label)
        The values this point takes on the varied dimensions (``horizons`` excluded).
    """

    id: str
    config: StudyConfig
    varied: tuple[tuple[str, str], ...]


@dataclass(frozen=True)
class SweepGrid:
    """A parsed, validated grid: its name, dimensions and points (in file order)."""

    name: str
    source: str
    dimensions: tuple[str, ...]
    horizons: tuple[int, ...]
    points: tuple[GridPoint, ...]
    #: Combinations of the grid that repeated a configuration already in it (counted once, left out).
    duplicates: int = 0

    @property
    def n_tests(self) -> int:
        """Studies x horizons: the number of hypotheses the sweep tries."""
        return len(self.points) * len(self.horizons)


def _err(source: str, where: str, message: str, hint: str) -> ConfigError:
    return ConfigError(f"{source}: {where}: {message}", hint=hint)


def parse_grid(data: dict[str, Any], source: str = "grid", *, max_points: int | None = None) -> SweepGrid:
    """Validate a grid already read from TOML and cross its dimensions.

    Parameters
    ----------
    data : dict
        The TOML document as :func:`tomllib.loads` returns it.
    source : str
        File name used in error messages.
    max_points : int, optional
        The most studies the grid may cross to (default :data:`MAX_POINTS`, for a file run on a cluster).

    Returns
    -------
    SweepGrid

    Raises
    ------
    ConfigError
        Unknown section or dimension, a value a study does not allow (the
        message names the dimension and the value), or more than ``max_points`` points.

    Notes
    -----
    Points are the Cartesian product of the ``[vary]`` lists in file order;
    each is ``StudyConfig.from_dict(study settings | dimension settings)``.
    Two points with identical settings (e.g. a dimension that does not change
    the configuration) are kept once.
    """
    unknown = sorted(set(data) - {"sweep", "study", "vary"})
    if unknown:
        raise _err(source, "sections", f"unknown section(s) {', '.join(repr(u) for u in unknown)}",
                   "Use [sweep], [study] and [vary].")
    meta = data.get("sweep", {})
    base = dict(data.get("study", {}))
    vary = data.get("vary")
    if not isinstance(vary, dict) or not vary:
        raise _err(source, "[vary]", "no dimensions to vary", "Add a [vary] section, e.g. signal = [\"earnings_yield\"].")
    for dim in vary:
        if dim not in DIMENSIONS and dim not in _CONFIG_FIELDS:
            raise _err(source, f"[vary] {dim!r}", "unknown dimension",
                       "Known dimensions: " + ", ".join(sorted(DIMENSIONS) + ["horizons"])
                       + ", or any study setting name.")
        if not isinstance(vary[dim], list) or not vary[dim]:
            raise _err(source, f"[vary] {dim!r}", f"needs a non-empty list of values, found {vary[dim]!r}",
                       f"Write e.g. {dim} = [value1, value2].")
    try:
        base_cfg = StudyConfig.from_dict({k: v for k, v in base.items()})
    except ConfigError as err:
        raise _err(source, "[study]", str(err), "Fix the shared study settings.") from err
    horizons: tuple[int, ...] = base_cfg.horizons
    if "horizons" in vary:
        hs = vary["horizons"]
        if not all(isinstance(h, int) and not isinstance(h, bool) for h in hs):  # a text, a list, a fraction...
            raise _err(source, "[vary] 'horizons'", f"{hs!r} are not all whole numbers of months",
                       "Use distinct whole months from 1 to 120.")
        try:
            horizons = StudyConfig(horizons=tuple(hs)).horizons
        except ConfigError as err:
            raise _err(source, "[vary] 'horizons'", str(err), "Use distinct whole months from 1 to 120.") from err
    dims = [d for d in vary if d != "horizons"]
    # Each value on its own first, so an error names its dimension.
    settings_of: dict[str, list[tuple[str, dict[str, Any]]]] = {}
    for dim in dims:
        conv = DIMENSIONS.get(dim) or _field(dim)
        opts = []
        for v in vary[dim]:
            try:
                s = conv(v)
            except ValueError as err:
                raise _err(source, f"[vary] {dim!r}", f"the value {v!r} is not allowed", f"Allowed: {err}.") from err
            try:
                StudyConfig.from_dict({**base_cfg.to_dict(), **_listify(s), "horizons": list(horizons)})
            except ConfigError as err:
                raise _err(source, f"[vary] {dim!r}", f"the value {v!r} is not allowed ({err.message})",
                           err.hint or "Change this value.") from err
            opts.append((_label(v), s))
        settings_of[dim] = opts
    n = 1
    for dim in dims:
        n *= len(settings_of[dim])
    limit = MAX_POINTS if max_points is None else int(max_points)
    if n > limit:
        raise _err(source, "[vary]", f"the dimensions cross to {n} studies, more than {limit}",
                   "Vary fewer settings at once or split the grid into several files.")
    points: list[GridPoint] = []
    seen: set[str] = set()
    dup = 0
    for combo in itertools.product(*(settings_of[d] for d in dims)):
        merged: dict[str, Any] = {**base_cfg.to_dict(), "horizons": list(horizons)}
        for _, s in combo:
            merged.update(_listify(s))
        try:
            cfg = StudyConfig.from_dict(merged)
        except ConfigError as err:
            where = ", ".join(f"{d}={lab}" for d, (lab, _) in zip(dims, combo))
            raise _err(source, f"[vary] combination {where}", err.message, err.hint or "Change one of these values.") from err
        cid = config_id(cfg)
        if cid in seen:
            dup += 1
            continue
        seen.add(cid)
        points.append(GridPoint(cid, cfg, tuple((d, lab) for d, (lab, _) in zip(dims, combo))))
    name = meta.get("name", Path(source).stem) if isinstance(meta, dict) else Path(source).stem
    return SweepGrid(str(name), source, tuple(dims), horizons, tuple(points), duplicates=dup)


def _listify(s: dict[str, Any]) -> dict[str, Any]:
    return {k: list(v) if isinstance(v, tuple) else v for k, v in s.items()}


def read_grid(path: str | Path) -> SweepGrid:
    """Read and validate a grid file (see the module docstring for the format).

    Raises
    ------
    ConfigError
        The file is missing, is not valid TOML, or fails :func:`parse_grid`.
    """
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except OSError as err:
        raise ConfigError(f"{p}: the grid file cannot be read ({err.strerror}).",
                          hint="Check the path given to --grid.") from err
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise ConfigError(f"{p.name}: not a valid TOML file ({err}).",
                          hint="See docs/sweep_example.toml for the format.") from err
    return parse_grid(data, p.name)
