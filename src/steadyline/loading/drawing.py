"""A series with more points than a chart shows legibly, and no roll-up of its own, drawn by
period: the finest calendar period that brings it under DRAWN_POINTS_MAX, each period's values
as one subgroup, one mean or its totals, and the sentence the pages give for it."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..config import MetricSpec
from .data import ByPeriod
from .periods import _period_labels, _segments_for_periods, period_start

# The most points a time-based chart draws one by one. Our choice: a card's chart is some 600 to
# 900 px wide, so 400 points leave about 2 px each, where markers start to merge into a band and
# the signals can no longer be told apart. A metric without a roll-up of its own that has more
# points is drawn by period instead (see choose_period).
DRAWN_POINTS_MAX = 400
# The periods tried, finest first; "year" is for series too long even by quarter.
AUTO_PERIODS = ("day", "week", "month", "quarter", "year")


def choose_period(t: pd.Series, limit: int = DRAWN_POINTS_MAX) -> tuple[str, np.ndarray, int]:
    """The finest period of :data:`AUTO_PERIODS` with at most *limit* periods holding data, for
    times in order: (period, each time's period start, number of periods). The coarsest when
    none is fine enough."""
    for per in AUTO_PERIODS:
        key = period_start(t, per).to_numpy()
        count = int((key[1:] != key[:-1]).sum()) + 1 if len(key) else 0
        if count <= limit:
            break
    return per, key, count


_PLURAL = {
    "day": "days",
    "week": "weeks",
    "month": "months",
    "quarter": "quarters",
    "year": "years",
}


def _by_period(
    frame: pd.DataFrame, spec: MetricSpec, kind: str, points: int
) -> tuple[ByPeriod, dict, list[np.ndarray] | None]:
    """A series with more points than a chart shows legibly, drawn by period (rows in time
    order, as load_metric leaves them).

    Measured values: each period's values form one subgroup, charted by Xbar-S (or Xbar-R when
    every period holds the same number, 2 to 10) with limits that step with the size. This is
    the second way of forming rational subgroups in Montgomery, Introduction to Statistical
    Quality Control, chapter 5, "Rational subgroups" (from memory): each subgroup
    represents all the units made since the last one. He warns that a shift inside a period
    then widens the within-subgroup spread and so the limits; the pages say how the points were
    formed. With an X-mR chart set in `chart`, each period's mean instead (a continuous metric
    only; the user's subgroups are always pooled). Defectives and defects: the period's totals
    (p and u charts need them: a mean of row proportions would weigh a row of 3 items checked
    like one of 3,000)."""
    per, key, count = choose_period(frame["t"])
    n = len(key)
    starts = np.flatnonzero(np.concatenate([[True], key[1:] != key[:-1]]))
    sizes = np.diff(np.append(starts, n))
    period = key[starts]
    segment = _segments_for_periods(period, per)
    word = "values" if kind == "continuous" else ("subgroups" if kind == "subgroups" else "rows")
    head = (
        f"{points} {word} are more points than a chart shows legibly ({DRAWN_POINTS_MAX} "
        f"at most), so the time-based charts show one point per {per} ({count} "
        f"{_PLURAL[per] if count != 1 else per})"
    )
    groups = None
    cols: dict = {"period": period}
    if kind == "subgroups" or (kind == "continuous" and spec.chart != "xmr"):
        vals = frame["value"].to_numpy(dtype=float)
        groups = np.split(vals, starts[1:])
        cols["value"] = np.add.reduceat(vals, starts) / sizes
        cols["n"] = sizes
        cols["subgroup"] = _period_labels(period, per).tolist()
        how = "subgroups"
        pooled = " (the subgroups of a period pooled)" if kind == "subgroups" else ""
        tail = (
            f": each {per}'s values form one subgroup{pooled}, drawn as its mean, with "
            "control limits from the subgroups' standard deviations that step with each "
            "subgroup's size"
        )
    elif kind == "continuous":
        vals = frame["value"].to_numpy(dtype=float)
        cols["value"] = np.add.reduceat(vals, starts) / sizes
        cols["n"] = sizes
        how = "mean"
        tail = f": the mean of each {per}'s values, as an X-mR chart is set for this metric"
    else:
        how = "totals"
        tail = _period_totals(frame, kind, per, starts, sizes, cols)
    cols["segment"] = segment
    reason = (
        f"{head}{tail}. The histogram, box plot and capability use every value; the "
        "full-resolution data stay in the metric's own file."
    )
    if kind in ("defectives", "defects"):
        reason = f"{head}{tail}."
    return ByPeriod(per, points, count, DRAWN_POINTS_MAX, how, reason), cols, groups


def _period_totals(
    frame: pd.DataFrame, kind: str, per: str, starts: np.ndarray, sizes: np.ndarray, cols: dict
) -> str:
    """Each period's defectives or defects (count) over its items or area (size), added to
    *cols* with the rows behind each (n); the words that say so."""
    cols["count"] = np.add.reduceat(frame["count"].to_numpy(dtype=float), starts)
    if "size" in frame:
        cols["size"] = np.add.reduceat(frame["size"].to_numpy(dtype=float), starts)
        what = (
            "defectives over its items checked"
            if kind == "defectives"
            else "defects over its area of opportunity"
        )
    else:  # defects counted per row: each row is one unit inspected
        cols["size"] = sizes.astype(float)
        what = "defects per row (each row one unit inspected)"
    cols["n"] = sizes
    return f": the {per}'s {what}"
