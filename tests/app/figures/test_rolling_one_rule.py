"""One rule for the 12-date rolling means: the chart draws the result's field and the sentence reads it."""

from __future__ import annotations

import numpy as np

from valuesift.app.bundle.text import CHART_READINGS
from valuesift.app.figures import study as fs
from valuesift.app.figures.common import fmt_num, fmt_pct


def test_spread_chart_and_sentence_use_the_rolling_field(small_result) -> None:  # type: ignore[no-untyped-def]
    h = 3
    field = small_result.rolling_spread[(h, 12)]
    fig = fs.spread_over_time_figure(small_result, h)
    line = next(t for t in fig.data if t.name == "rolling mean, 12 dates")
    np.testing.assert_array_equal(np.asarray(line.y, dtype=float), field.to_numpy(dtype=float))
    text = " ".join(CHART_READINGS["spread_over_time"](small_result, h, None))
    assert fmt_pct(field.max(), 1) in text and fmt_pct(field.min(), 1) in text


def test_ic_chart_and_sentence_use_the_rolling_field(small_result) -> None:  # type: ignore[no-untyped-def]
    h = 1
    field = small_result.rolling_ic[(h, 12)]
    fig = fs.ic_over_time_figure(small_result, h)
    line = next(t for t in fig.data if t.name == "rolling mean, 12 dates")
    np.testing.assert_array_equal(np.asarray(line.y, dtype=float), field.to_numpy(dtype=float))
    text = " ".join(CHART_READINGS["ic_over_time"](small_result, h, None))
    assert fmt_num(field.max(), 3) in text and fmt_num(field.min(), 3) in text
