"""The dashboard's comparisons: each signal's study through the study cache, saved studies added by name.

Thin: the studies come from :class:`valuesift.app.services.AppState` (so a comparison reuses the studies
already run on the Study page), the comparison from :func:`valuesift.core.compare.compare_results`.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import replace
from typing import Any, Callable

from valuesift.app.saved_studies import saved_study
from valuesift.app.services import LRU, current_owner, normalise_selection
from valuesift.core.compare import CompareResult, compare_results
from valuesift.core.config import StudyConfig
from valuesift.core.errors import ConfigError

__all__ = ["compare_now", "start_compare", "compare_result", "last_comparison", "SAVED_PREFIX"]

#: Label prefix of a saved study in a comparison.
SAVED_PREFIX = "saved: "
_CACHE = LRU(16)
_LAST = LRU(64)          # each browser session's latest comparison key (the Export page offers it)


def _entries(st: Any, sel_raw: Any, config: StudyConfig, signals: list[str], saved: list[str]
             ) -> tuple[list[tuple[str, Any, StudyConfig]], list[str], Any, str]:
    """The comparison's entries ``(label, selection, config)``, notes on saved studies left out, the
    selection and the comparison's cache key.  ConfigError for fewer than two or more than eight entries."""
    sel = normalise_selection(sel_raw)
    owner = current_owner()
    entries: list[tuple[str, Any, StudyConfig]] = [(s, sel, replace(config, signal=s)) for s in signals]
    left_out: list[str] = []
    for name in saved:
        rec = saved_study(st.workspace, name, owner)
        if rec is None:
            left_out.append(f"The saved study {name!r} no longer exists.")
            continue
        s_sel, s_cfg = rec
        if normalise_selection(s_sel) != sel:
            left_out.append(f"The saved study {name!r} was run on other data than the data in use now; open that "
                            f"data on the Data page to compare it.")
            continue
        entries.append((SAVED_PREFIX + name, normalise_selection(s_sel), s_cfg))
    if not 2 <= len(entries) <= 8:
        raise ConfigError(f"A comparison needs 2 to 8 signals or saved studies; {len(entries)} chosen.",
                          hint="Tick two or more signals, or add saved studies.", setting="signal")
    keys = [st.study_key(st.visible(e[1]), e[2]) for e in entries]
    ckey = hashlib.sha256(json.dumps([[e[0] for e in entries], keys]).encode()).hexdigest()
    return entries, left_out, sel, f"{owner}:{ckey}"


def compare_now(st: Any, sel_raw: Any, config: StudyConfig, signals: list[str], saved: list[str]
                ) -> tuple[CompareResult, list[str]]:
    """Run (or fetch) the comparison in the calling thread; returns it and notes on saved studies left out.

    Raises ConfigError for fewer than two or more than eight entries.
    """
    entries, left_out, sel, ckey = _entries(st, sel_raw, config, signals, saved)
    hit = _CACHE.get(ckey)
    if hit is None:
        results = {label: st.run_now(s, cfg)[1] for label, s, cfg in entries}
        hit = compare_results(st.panel(st.visible(sel)), results)
        _CACHE.put(ckey, hit)
    _LAST.put(str(current_owner()), ckey)
    return hit, left_out


def start_compare(st: Any, sel_raw: Any, config: StudyConfig, signals: list[str], saved: list[str],
                  words: Callable[[str], str] = str) -> tuple[Any, str, list[str]]:
    """Start the comparison on the job runner (or find it finished in the cache).

    Returns ``(job, key, left_out)``: ``job`` is None when the comparison is already in the cache, else the
    runner's job (progress: one step per study); ``key`` fetches the finished comparison with
    :func:`compare_result`.  ``words`` names a signal in the progress text.  Raises ConfigError as
    :func:`compare_now`, and :class:`~valuesift.app.jobs.Busy` when the queue is full.
    """
    entries, left_out, sel, ckey = _entries(st, sel_raw, config, signals, saved)
    owner = str(current_owner())
    if _CACHE.get(ckey) is not None:
        _LAST.put(owner, ckey)
        return None, ckey, left_out
    vis = st.visible(sel)

    def finish(results: dict[str, Any], _job: Any) -> str:
        _CACHE.put(ckey, compare_results(st.panel(vis), results))
        _LAST.put(owner, ckey)
        return ckey

    named = [(label, words(label), s, cfg) for label, s, cfg in entries]
    return st.start_studies("comparison", named, finish, key="compare-" + ckey), ckey, left_out


def compare_result(key: Any) -> CompareResult | None:
    """A finished comparison of the current session by its key (None when unknown, evicted or another's)."""
    if not isinstance(key, str) or not key.startswith(f"{current_owner()}:"):
        return None
    hit = _CACHE.get(key)
    return hit if isinstance(hit, CompareResult) else None


def last_comparison() -> CompareResult | None:
    """The current session's latest finished comparison (None when there is none in memory)."""
    key = _LAST.get(str(current_owner()))
    return compare_result(key) if key else None
