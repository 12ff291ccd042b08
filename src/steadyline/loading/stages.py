"""Which period each point falls in (baseline, after, or between them), and which points and
individual values the metric's ``[[metric.set_aside]]`` days set aside; a day no point falls on,
or a baseline left with no point, is a problem of project.toml."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..config import MetricSpec, Period
from ..errors import Problem
from .problems import _Rows

STAGE_BASELINE, STAGE_AFTER, STAGE_OTHER = 0, 1, 2
STAGE_NAMES = {STAGE_BASELINE: "Baseline", STAGE_AFTER: "After", STAGE_OTHER: "Between periods"}


def assign_stage(
    times: pd.Series | np.ndarray, baseline: Period | None, after: Period | None
) -> np.ndarray:
    """Stage of each time: 0 baseline, 1 after, 2 between / outside both periods.

    *times*: a Series (naive or with a time zone) or a numpy datetime64 array (naive). Without
    a baseline period every point is baseline. Dates are inclusive at both ends.
    """
    if baseline is None:
        return np.zeros(len(times), dtype=int)
    t = times
    if isinstance(t, pd.Series):
        if len(t) and t.dt.tz is not None:
            t = t.dt.tz_localize(None)  # the wall-clock date in the series' own zone
        t = t.to_numpy()
    d = t.astype("datetime64[D]")  # the calendar day (NaT stays NaT: no stage)
    stage = np.full(len(times), STAGE_OTHER, dtype=int)

    def within(p: Period) -> np.ndarray:
        m = d >= np.datetime64(p.start, "D")
        if p.end is not None:
            m &= d <= np.datetime64(p.end, "D")
        return m

    stage[within(baseline)] = STAGE_BASELINE
    if after is not None:
        stage[within(after)] = STAGE_AFTER
    return stage


def _days(times: pd.Series | np.ndarray) -> np.ndarray:
    """Each time's calendar day (wall-clock, in the series' own zone), as assign_stage
    reads it."""
    t = times
    if isinstance(t, pd.Series):
        if len(t) and t.dt.tz is not None:
            t = t.dt.tz_localize(None)
        t = t.to_numpy()
    return np.asarray(t).astype("datetime64[D]")


def _set_aside(spec: MetricSpec, period: np.ndarray, stage: np.ndarray, out: _Rows) -> np.ndarray:
    """Per point: set aside or not. A point is set aside when its date (the first day of its
    period, by which it also falls in the baseline) is one of an entry's days. An entry no point
    falls on, and entries that leave no baseline point, are errors of project.toml."""
    days = _days(period)
    aside = np.zeros(len(days), dtype=bool)
    first, last = (str(days.min()), str(days.max())) if len(days) else ("", "")
    for e in spec.set_aside:
        hit = (days >= np.datetime64(e.start, "D")) & (days <= np.datetime64(e.end, "D"))
        if not hit.any():
            span = f"the data run {first} to {last}" if first else "the metric has no data"
            per = (
                ""
                if spec.rollup is None
                else (f" (a point is dated by the first day of its {spec.rollup.period})")
            )
            out.problems.append(
                Problem(
                    e.source,
                    e.line,
                    f"{e.where}.dates",
                    f"no point of {spec.file_rel!r} falls on {e.label()}{per}; {span}",
                )
            )
        aside |= hit
    base = stage == STAGE_BASELINE
    if base.any() and aside[base].all():
        e = spec.set_aside[0]
        out.problems.append(
            Problem(
                e.source,
                e.line,
                e.where.rsplit("[", 1)[0],
                f"every point of the baseline of {spec.file_rel!r} is set aside; no point would be "
                "left to compute the centre line and limits from",
            )
        )
    return aside


def _values_aside(
    frame: pd.DataFrame,
    spec: MetricSpec,
    aside: np.ndarray,
    period: np.ndarray,
    subgroups: bool,
    by_period: bool,
) -> np.ndarray:
    """Per individual value: whether the point it belongs to is set aside, so that the
    histogram, box plot and capability of the baseline leave out the same rows as its charts."""
    if subgroups:  # the user's subgroups, numbered as _subgroups numbers them
        if spec.subgroup is not None:
            codes = pd.factorize(frame["subgroup"], sort=False)[0]
        else:
            codes = np.arange(len(frame)) // (spec.subgroup_size or 1)
        return aside[codes]
    if not by_period:  # one point per row
        return aside.copy()
    # periods: each row belongs to the last period that starts on or before its day
    at = np.searchsorted(_days(period), _days(frame["t"]), side="right") - 1
    return aside[np.clip(at, 0, len(aside) - 1)]
