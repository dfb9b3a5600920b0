"""One escape for user text that enters chart text.

The chart library reads a subset of HTML in every piece of chart text
(titles, legends, hover labels, tick labels, annotations): ``<a href>``
becomes a live link, ``<b>`` and ``<br>`` change the layout.  Identifiers,
sector names, file names, signal names and notes come from the user's files,
so every figure function passes them through :func:`chart_text` (one value)
or :func:`chart_texts` (an array) before they reach the figure.  The chart
library turns the entities back into the characters when it draws, so the
reader sees the text exactly as it was written, never as markup.

The PDF report escapes with ``xml.sax.saxutils.escape`` in its own layer;
slide text is plain text (nothing there reads markup); tables of the
dashboard are rendered by React as text.
"""

from __future__ import annotations

from typing import Any, Iterable

import numpy as np

__all__ = ["chart_text", "chart_texts"]

_ENTITIES = {"&": "&amp;", "<": "&lt;", ">": "&gt;"}


def chart_text(value: Any) -> str:
    """``value`` as chart text that cannot become markup (``<``, ``>`` and ``&`` as entities)."""
    s = str(value)
    if not any(ch in s for ch in _ENTITIES):
        return s
    return "".join(_ENTITIES.get(ch, ch) for ch in s)


def chart_texts(values: Iterable[Any]) -> np.ndarray:
    """:func:`chart_text` of every value (an object array, for trace data such as category labels)."""
    return np.array([chart_text(v) for v in values], dtype=object)
