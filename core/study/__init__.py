"""The study entry point: a validated configuration in, one result object out.

Everything the dashboard, the headless command and the chart bundle show is
held by :class:`valuesift.core.result.StudyResult`; none of them recomputes.  The
formulas are in ``docs/methodology.md`` and in the docstrings of the domain folders.

Pipeline (:func:`run_study`, steps in :mod:`valuesift.core.study.steps`)
-------------------------------------------------------------------------
1. ``core.signals``: reporting lag on earnings, raw signals, universe per date,
   outlier treatment and cross-sectional z-scores (optionally sector-neutral).
2. ``core.returns``: total-return index and forward returns per horizon.
3. ``core.correlation``, ``core.quantiles``, ``core.regression``: information
   coefficients, quantile portfolios, Fama-MacBeth; ``core.inference`` for their
   standard errors.
4. ``core.portfolio``: overlapping-cohort portfolios.
5. ``core.reporting.screen``: the screen table for the latest date.
6. :mod:`valuesift.core.study.derived`: the fields derived for display (fitted lines, bands,
   rolling spread, Sharpe t, cohort and drawdown records, coverage).
7. :mod:`valuesift.core.study.stability`: relative to the comparison, by period, regime and sector,
   decay, Fama-MacBeth with controls, cap-weighted view.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Callable

import pandas as pd

from valuesift.core.collector import collector_paused
from valuesift.core.config import BUILTIN_SIGNALS, StudyConfig
from valuesift.core.errors import ConfigError
from valuesift.core.panel import Panel
from valuesift.core.reporting.screen import screen_table
from valuesift.core.reporting.summary import ic_by_date_frame, summary_dict
from valuesift.core.result import StudyResult
from valuesift.core.study.derived import derived_fields
from valuesift.core.study.stability import stability_fields
from valuesift.core.study.steps import compute_study

__all__ = ["StudyConfig", "StudyResult", "run_study", "summary_dict", "ic_by_date_frame", "BUILTIN_SIGNALS"]


def run_study(
    panel: Panel,
    config: StudyConfig,
    progress: Callable[[str, float], None] | None = None,
    *,
    detail: bool = True,
) -> StudyResult:
    """Run a full study of ``config.signal`` on ``panel``.

    Parameters
    ----------
    panel : Panel
        The data (never modified).
    config : StudyConfig
        Validated settings.
    progress : callable(stage: str, fraction: float), optional
        Called at the start of each stage with the fraction done (0..1).
    detail : bool, default True
        False leaves out the fields that only the study's own pages and report read (the screen, the
        derived display fields and the stability fields of :mod:`valuesift.core.study.stability`):
        a comparison of several signals uses it.  Every other number is the same either way.

    Returns
    -------
    StudyResult

    Raises
    ------
    ConfigError
        A setting does not fit this panel (unknown signal, no sectors for a
        sector setting, no benchmark for a benchmark setting, ...).
    InsufficientDataError
        A horizon as long as the history, a universe filter that leaves
        nothing, fewer names than quantiles on every date.

    Notes
    -----
    See ``docs/methodology.md`` for every formula; each step's docstring in
    ``core.signals``, ``core.returns``, ``core.evaluate`` and ``core.backtest``
    states its own.

    References
    ----------
    Fama & MacBeth (1973), JPE 81(3); Newey & West (1987), Econometrica 55(3);
    Jegadeesh & Titman (1993), J. Finance 48(1).
    """
    if not isinstance(config, StudyConfig):
        raise ConfigError("run_study needs a StudyConfig.", hint="Build one with StudyConfig(...).")
    if not isinstance(panel, Panel):
        raise ConfigError("run_study needs a Panel.", hint="Build one with intake or core.panel.Panel(...).")
    with collector_paused():  # (see core.collector)
        fields = compute_study(panel, config, progress)
        res = StudyResult(config=config, screen=pd.DataFrame(), **fields)
        if detail:
            res = replace(res, screen=screen_table(res))
            res = replace(res, **derived_fields(res, panel))
            if progress is not None:
                progress("stability, decay and controls", 0.97)
            res = replace(res, **stability_fields(res, panel))
    if progress is not None:
        progress("done", 1.0)
    return res
