"""The cyclic garbage collector held off while one large piece of work runs.

Reading a wide file or running a study makes hundreds of thousands of short-lived objects (a Series per
column, Arrow arrays, small tuples); each batch of them triggers a collection that walks every object the
process holds, and on the L benchmark pair those walks were about a tenth of an intake's time and of a
whole-process study's (measured in ``tests/benchmarks/whole.py``; README "Where the user waits").  Objects
are still freed as soon as nothing refers to them (reference counting); only garbage caught in reference
cycles waits until the work ends, when the collector is turned back on (a few MB on the L study).

Nested and concurrent uses share one count: the collector comes back on when the last of them ends, and
only if it was on when the first began (a program that keeps it off keeps it off).
"""

from __future__ import annotations

import gc
import threading
from contextlib import contextmanager
from typing import Iterator

__all__ = ["collector_paused"]

_lock = threading.Lock()
_depth = 0
_was_on = False


@contextmanager
def collector_paused() -> Iterator[None]:
    """Hold off the cyclic garbage collector for the ``with`` block (see the module note).

    Examples
    --------
    >>> import gc
    >>> with collector_paused():
    ...     inside = gc.isenabled()
    >>> inside, gc.isenabled()
    (False, True)
    """
    global _depth, _was_on
    with _lock:
        if _depth == 0:
            _was_on = gc.isenabled()
            gc.disable()
        _depth += 1
    try:
        yield
    finally:
        with _lock:
            _depth -= 1
            if _depth == 0 and _was_on:
                gc.enable()
