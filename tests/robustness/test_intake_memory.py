"""Reading one upload stays within about 4x the file size in traced memory (the dashboard review's limit).

The figure itself, with Arrow's pool, the resident set and pandas side by side, is printed by
``python -m tests.benchmarks.intake_memory``; this test only keeps the traced peak (numpy arrays and
Python objects, ``tracemalloc``) of one wide and one long daily price file under the limit.  Memory,
not time: the same file allocates the same arrays on every run.  Invented data (seeded).
"""

from __future__ import annotations

import gc
import io
import tracemalloc

import pandas as pd
import pytest

from tests.benchmarks.upload_memory import big_file
from valuesift.core.intake import ReadOptions, read_table

LIMIT = 4.0  # traced peak / file size


def _files() -> dict[str, bytes]:
    wide = big_file(6)
    long = pd.read_csv(io.BytesIO(wide)).melt(id_vars="date", var_name="security", value_name="close")
    return {"wide": wide, "long": long.iloc[: len(long) // 2].to_csv(index=False).encode()}


@pytest.mark.parametrize("layout", ["wide", "long"])
def test_traced_peak_of_one_read_is_within_four_times_the_file(layout: str) -> None:
    raw = _files()[layout]
    gc.collect()
    tracemalloc.start()
    try:
        pf = read_table(raw, name=f"prices-{layout}.csv", options=ReadOptions(max_bytes=10 ** 9))
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert pf.report.layout == layout and pf.report.cells_parsed == pf.report.cells_total
    assert peak <= LIMIT * len(raw), f"{peak / len(raw):.1f}x the file"
