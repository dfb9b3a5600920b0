"""The dashboard's comparisons: each signal's study through the study cache, saved studies added by name.

Thin: the studies come from :class:`valuesift.app.services.AppState` (so a comparison reuses the studies
already run on the Study page), the comparison from :func:`valuesift.core.compare.compare_results`.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import replace
from typing import Any

from valuesift.app.saved_studies import saved_study
from valuesift.app.services import LRU, current_owner, normalise_selection
from valuesift.core.compare import CompareResult, compare_results
from valuesift.core.config import StudyConfig
from valuesift.core.errors import ConfigError

__all__ = ["compare_now", "SAVED_PREFIX"]

#: Label prefix of a saved study in a comparison.
SAVED_PREFIX = "saved: "
_CACHE = LRU(16)


def compare_now(st: Any, sel_raw: Any, config: StudyConfig, signals: list[str], saved: list[str]
                ) -> tuple[CompareResult, list[str]]:
    """Run (or fetch) the comparison; returns it and notes on saved studies left out.

    Raises ConfigError for fewer than two or more than eight entries.
    """
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
    hit = _CACHE.get(f"{owner}:{ckey}")
    if hit is not None:
        return hit, left_out
    results = {label: st.run_now(s, cfg)[1] for label, s, cfg in entries}
    cmp = compare_results(st.panel(st.visible(sel)), results)
    _CACHE.put(f"{owner}:{ckey}", cmp)
    return cmp, left_out
