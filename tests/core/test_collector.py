"""The garbage collector is held off only while a large piece of work runs, and always comes back on."""

from __future__ import annotations

import gc
import threading

import numpy as np
import pandas as pd
import pytest

from valuesift.core.collector import collector_paused
from valuesift.core.errors import IntakeError
from valuesift.core.intake import ReadOptions, read_table
from valuesift.core.intake.align import align_to_months


def test_nested_and_concurrent_pauses_end_with_the_collector_on() -> None:
    assert gc.isenabled()
    started, release = threading.Event(), threading.Event()

    def other() -> None:
        with collector_paused():
            started.set()
            release.wait(5)

    t = threading.Thread(target=other)
    with collector_paused():
        with collector_paused():
            assert not gc.isenabled()
        assert not gc.isenabled()  # the outer block is still running
        t.start()
        started.wait(5)
    assert not gc.isenabled()  # the other thread's block is still running
    release.set()
    t.join(5)
    assert gc.isenabled()


def test_a_program_that_keeps_the_collector_off_keeps_it_off() -> None:
    gc.disable()
    try:
        with collector_paused():
            pass
        assert not gc.isenabled()
    finally:
        gc.enable()


def test_a_read_turns_the_collector_back_on_after_an_error() -> None:
    with pytest.raises(IntakeError):
        read_table(b"", name="empty.csv")
    assert gc.isenabled()
    pf = read_table(b"date,AB1\n2020-01-31,1\n2020-02-29,2\n", name="prices.csv", options=ReadOptions(kind="prices"))
    assert len(pf.data) == 2 and gc.isenabled()


def test_month_end_alignment_does_not_depend_on_the_rows_order() -> None:
    # the alignment skips its sort for rows already in (security, date) order: the same grid either way
    rng = np.random.default_rng(7)
    days = pd.date_range("2019-01-01", "2020-12-31", freq="D")
    # (one row per security and date, as intake hands it over: a repeated entry is set aside before)
    parts = [pd.DataFrame({"date": rng.choice(days.to_numpy(), 400, replace=False), "security": sec})
             for sec in ("A1", "B2", "C3", "D4")]
    data = pd.concat(parts, ignore_index=True).sample(frac=1.0, random_state=3).reset_index(drop=True)
    data = data.assign(security=data["security"].astype("str"), value=rng.normal(size=len(data)))
    cal = pd.date_range("2019-01-31", "2020-11-30", freq="ME")
    in_order = data.sort_values(["security", "date"], kind="stable").reset_index(drop=True)
    a = align_to_months(in_order, cal, staleness_days=7, frequency="daily")
    b = align_to_months(data.iloc[::-1].reset_index(drop=True), cal, staleness_days=7, frequency="daily")
    c = align_to_months(data, cal, staleness_days=7, frequency="daily")
    for other in (b, c):
        pd.testing.assert_frame_equal(a.values, other.values)
        pd.testing.assert_frame_equal(a.stale, other.stale)
        assert (a.superseded, a.n_stale, a.outside) == (other.superseded, other.n_stale, other.outside)
    # every observation inside the calendar but one per (month, security) is superseded (pandas groupby)
    inside = in_order[in_order["date"].dt.to_period("M").isin(cal.to_period("M"))]
    groups = inside.groupby([inside["date"].dt.to_period("M"), "security"]).ngroups
    assert a.superseded == len(inside) - groups
    assert a.outside == len(in_order) - len(inside)
