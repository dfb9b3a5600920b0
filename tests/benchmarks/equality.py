"""The study's numbers before and after a speed change: a fingerprint of every result field, compared to 1e-12.

    python -m tests.benchmarks.equality --write   # store the reference (run it with the code before the change)

The reference (``study_L_reference.npz``) holds, for the L benchmark panel
(:func:`tests.benchmarks.synth.monthly_panel` 3,000 x 360, seed 0, default
settings): every numeric table of the :class:`StudyResult` in full when it has at
most 200,000 cells, else its NaN count, sum, sum of squares and 2,000 fixed
cells; every text part (notes, warnings, flags, labels) as a SHA-256 digest.
It was first written by the code as it stood before issue 15's speed work, and written again on
2026-12-04 at main ad69114: issues 11-13 had since added result fields (decay, periods, regimes,
sectors, controls, the cap-weighted backtest) and reworded notes, which the old reference reported
as the only differences ("only in new" and the notes' text); every number it held was unchanged.
"""

from __future__ import annotations

import dataclasses
import hashlib
import sys
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

__all__ = ["fingerprint", "compare_fingerprints", "REFERENCE"]

REFERENCE = Path(__file__).resolve().parent / "study_L_reference.npz"
FULL_LIMIT = 200_000
TOL = 1e-12


def _digest(x: Any) -> np.ndarray:
    return np.frombuffer(hashlib.sha256(repr(x).encode("utf-8")).digest(), dtype=np.uint8).copy()


def _numeric(key: str, a: np.ndarray, out: dict[str, np.ndarray]) -> None:
    a = np.asarray(a, dtype=float)
    if a.size <= FULL_LIMIT:
        out[key] = a
        return
    flat = a.reshape(-1)
    fin = np.isfinite(flat)
    pos = np.random.default_rng(0).integers(0, flat.size, 2000)
    out[key + "#stats"] = np.array([float((~fin).sum()), flat[fin].sum(), (flat[fin] ** 2).sum()])
    out[key + "#cells"] = flat[pos]


def _frame(key: str, f: pd.DataFrame | pd.Series, out: dict[str, np.ndarray]) -> None:
    f = f.to_frame() if isinstance(f, pd.Series) else f
    out[key + "#labels"] = _digest((list(map(str, f.index[:50])), len(f.index), list(map(str, f.columns))))
    num, text = [], []
    for c in f.columns:
        s = f[c]
        if pd.api.types.is_bool_dtype(s.dtype) or pd.api.types.is_numeric_dtype(s.dtype):
            num.append(c)
        elif pd.api.types.is_datetime64_any_dtype(s.dtype):
            num.append(c)
        else:
            text.append(c)
    if num:
        block = np.column_stack([
            (f[c].to_numpy(dtype="datetime64[ns]").view(np.int64).astype(float)
             if pd.api.types.is_datetime64_any_dtype(f[c].dtype) else f[c].to_numpy(dtype=float, na_value=np.nan))
            for c in num])
        _numeric(key, block, out)
    if text:
        out[key + "#text"] = _digest([f[c].astype(str).tolist() for c in text])


def _walk(key: str, v: Any, out: dict[str, np.ndarray]) -> None:
    if isinstance(v, (pd.DataFrame, pd.Series)):
        _frame(key, v, out)
    elif isinstance(v, dict):
        for k in sorted(v, key=str):
            _walk(f"{key}[{k}]", v[k], out)
    elif dataclasses.is_dataclass(v) and not isinstance(v, type):
        for fld in dataclasses.fields(v):
            _walk(f"{key}.{fld.name}", getattr(v, fld.name), out)
    elif isinstance(v, np.ndarray) and v.dtype.kind in "fiub":
        _numeric(key, v, out)
    elif isinstance(v, (int, float, np.floating, np.integer)) and not isinstance(v, bool):
        out[key] = np.array([float(v)])
    else:
        out[key + "#text"] = _digest(v)


def fingerprint(result: Any) -> dict[str, np.ndarray]:
    """Every field of a :class:`StudyResult` as arrays (see the module note)."""
    out: dict[str, np.ndarray] = {}
    for fld in dataclasses.fields(result):
        if fld.name == "config":
            continue
        _walk(fld.name, getattr(result, fld.name), out)
    return out


def compare_fingerprints(old: dict[str, np.ndarray], new: dict[str, np.ndarray], tol: float = TOL) -> dict[str, Any]:
    """Largest difference per part; ``ok`` when every part agrees (text exactly, numbers to ``tol``)."""
    bad: list[str] = []
    worst = 0.0
    for k in sorted(set(old) | set(new)):
        if k not in old or k not in new:
            bad.append(f"{k}: only in {'new' if k in new else 'old'}")
            continue
        a, b = old[k], new[k]
        if k.endswith("#text") or k.endswith("#labels"):
            if not np.array_equal(a, b):
                bad.append(f"{k}: text differs")
            continue
        if a.shape != b.shape or not np.array_equal(np.isnan(a), np.isnan(b)):
            bad.append(f"{k}: shape or missing cells differ")
            continue
        fa = np.isfinite(a)
        if not np.array_equal(a[~fa & ~np.isnan(a)], b[~fa & ~np.isnan(b)]):
            bad.append(f"{k}: infinite cells differ")
            continue
        if fa.any():
            d = np.abs(a[fa] - b[fa])
            scale = np.maximum(1.0, np.abs(a[fa])) if k.endswith("#stats") else 1.0
            rel = float(np.max(d / scale))
            worst = max(worst, rel)
            if rel > tol:
                bad.append(f"{k}: differs by {rel:.2e}")
    return {"ok": not bad, "max_abs_diff": worst, "parts": len(old), "problems": bad[:20]}


def reference_result() -> Any:
    from valuesift.core.config import StudyConfig
    from valuesift.core.study import run_study
    from tests.benchmarks.synth import monthly_panel

    return run_study(monthly_panel(3000, 360, seed=0), StudyConfig())


if __name__ == "__main__":
    fp = fingerprint(reference_result())
    if "--write" in sys.argv:
        np.savez_compressed(REFERENCE, **fp)
        print(f"wrote {len(fp)} parts to {REFERENCE} ({REFERENCE.stat().st_size:,} bytes)")
    else:
        old = dict(np.load(REFERENCE))
        print(compare_fingerprints(old, fp))
