"""Counting every cell by outcome, with the first few locations per reason."""

from __future__ import annotations

from typing import Callable

import numpy as np
import pandas as pd

from valuesift.core.errors import Reason

__all__ = ["Tally", "CATEGORY", "MAX_EXAMPLES"]

MAX_EXAMPLES = 5

#: reason -> report category (parsed cells are not listed by reason)
CATEGORY: dict[Reason, str] = {
    Reason.BLANK: "blank",
    Reason.MISSING_MARKER: "blank",
    Reason.UNPARSEABLE_NUMBER: "unparseable",
    Reason.UNPARSEABLE_DATE: "unparseable",
    Reason.NON_FINITE: "unparseable",
    Reason.OUT_OF_RANGE: "unparseable",
    Reason.NON_POSITIVE_PRICE: "dropped",
    Reason.NEGATIVE_AMOUNT: "dropped",
    Reason.ROW_WITHOUT_DATE: "dropped",
    Reason.ROW_WITHOUT_SECURITY: "dropped",
    Reason.DUPLICATE_ENTRY: "dropped",
    Reason.EXCLUDED_COLUMN: "dropped",
    Reason.UNUSED_COLUMN: "dropped",
    Reason.EXTRA_FIELD: "dropped",
}

Locator = Callable[[np.ndarray], tuple[np.ndarray, np.ndarray, np.ndarray]]


class Tally:
    """Mutable counter used while one file is tidied (never leaves intake)."""

    def __init__(self) -> None:
        self.parsed = 0
        self.counts: dict[Reason, int] = {}
        self.examples: list[tuple[str, int, str, str]] = []

    def add_parsed(self, k: int) -> None:
        self.parsed += int(k)

    def add(self, reason: Reason, mask: np.ndarray, locate: Locator | None = None) -> None:
        """Count the True cells of ``mask`` under ``reason``; ``locate(idx)`` gives (rows, columns, values)."""
        idx = np.flatnonzero(mask)
        self.add_count(reason, int(idx.size))
        if idx.size and locate is not None:
            have = sum(1 for e in self.examples if e[0] == reason.value)
            take = idx[: max(0, MAX_EXAMPLES - have)]
            if take.size:
                rows, cols, vals = locate(take)
                for r, c, v in zip(rows, cols, vals):
                    self.examples.append((reason.value, int(r), str(c), "" if v is None else str(v)))

    def add_count(self, reason: Reason, k: int, examples: tuple[tuple[int, str, str], ...] = ()) -> None:
        if k <= 0:
            return
        self.counts[reason] = self.counts.get(reason, 0) + int(k)
        for r, c, v in examples[:MAX_EXAMPLES]:
            self.examples.append((reason.value, int(r), c, v))

    def total_in(self, category: str) -> int:
        return sum(v for k, v in self.counts.items() if CATEGORY[k] == category)

    def by_reason(self) -> pd.DataFrame:
        rows = [(k.value, CATEGORY[k], v) for k, v in self.counts.items()]
        order = {"blank": 0, "unparseable": 1, "dropped": 2}
        rows.sort(key=lambda r: (order[r[1]], -r[2], r[0]))
        return pd.DataFrame(rows, columns=["reason", "category", "count"]).astype({"count": "int64"})

    def example_frame(self) -> pd.DataFrame:
        return pd.DataFrame(self.examples, columns=["reason", "row", "column", "value"]).astype({"row": "int64"})
