"""Many rows -> one point: the user's subgroups (named by a column, or of a fixed size) and the
roll-ups of ``[metric.rollup]`` by period (sums over runs of equal periods for rows in time
order, pandas' groupby for the rest)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..config import MetricSpec
from .periods import _segments_for_periods, period_start
from .problems import _Rows


def _rollup_sorted(
    frame: pd.DataFrame, key: np.ndarray, stat: str, kind: str, flags: bool
) -> dict | None:
    """The roll-up by sums over runs of equal periods, for rows in time order (as load_metric
    leaves them): the same columns pandas' groupby gives (sums and means add each period's
    values in row order), without its overhead. None for what it does not cover (the median,
    rows out of order), which then goes through groupby."""
    n = len(key)
    if n == 0 or stat == "median" or not (key[1:] >= key[:-1]).all():
        return None
    starts = np.flatnonzero(np.concatenate([[True], key[1:] != key[:-1]]))
    sizes = np.diff(np.append(starts, n))
    cols: dict = {"period": key[starts]}
    if flags:
        cols["count"] = np.add.reduceat(frame["value"].to_numpy(dtype=float), starts)
        cols["size"] = sizes
    elif kind in ("defectives", "defects"):
        cols["count"] = np.add.reduceat(frame["count"].to_numpy(dtype=float), starts)
        cols["size"] = (
            np.add.reduceat(frame["size"].to_numpy(dtype=float), starts) if "size" in frame else 1.0
        )
    elif stat == "count":
        cols["value"] = sizes
    else:
        total = np.add.reduceat(frame["value"].to_numpy(dtype=float), starts)
        cols["value"] = total / sizes if stat == "mean" else total
    cols["n"] = sizes
    return cols


def _rollup(frame: pd.DataFrame, spec: MetricSpec, kind: str, flags: bool) -> dict:
    """The points' columns of a rolled-up metric: period, the values, n, segment."""
    assert spec.rollup is not None
    per = spec.rollup.period
    key = period_start(frame["t"], per)
    fast = _rollup_sorted(frame, key.to_numpy(), spec.rollup.statistic, kind, flags)
    if fast is not None:
        fast["segment"] = _segments_for_periods(fast["period"], per)
        return fast
    g = frame.groupby(key.to_numpy(), sort=True)
    if flags:
        pts = pd.DataFrame({"count": g["value"].sum(), "size": g["value"].count()})
    elif kind in ("defectives", "defects"):
        pts = pd.DataFrame({"count": g["count"].sum()})
        pts["size"] = g["size"].sum() if "size" in frame else 1.0
    else:
        stat = spec.rollup.statistic
        pts = pd.DataFrame(
            {"value": getattr(g["value"], stat)() if stat != "count" else g["value"].count()}
        )
    pts["n"] = g.size()
    cols = {"period": pts.index.to_numpy()}
    cols.update((c, pts[c].to_numpy()) for c in pts.columns)
    cols["segment"] = _segments_for_periods(cols["period"], per)
    return cols


def _subgroups(frame: pd.DataFrame, spec: MetricSpec, out: _Rows):
    """Subgroups in order of first appearance, with numpy (a million rows in well under a second).

    Each subgroup's time is its earliest row's time; a subgroup named by a column may gather
    rows that are not next to each other.
    """
    vals = frame["value"].to_numpy(dtype=float)
    times = frame["t"].to_numpy()
    if spec.subgroup is not None:
        codes, uniques = pd.factorize(frame["subgroup"], sort=False)  # first-appearance order
        order = np.argsort(codes, kind="stable")
        sizes = np.bincount(codes, minlength=len(uniques))
        labels = [str(u) for u in uniques]
    else:
        k = spec.subgroup_size or 1
        n = len(frame)
        if n % k:
            out.add(
                None,
                "subgroup_size",
                f"the last subgroup has {n % k} of {k} rows; it is used as a smaller subgroup",
                severity="warning",
            )
        codes = np.arange(n) // k
        order = np.arange(n)
        sizes = np.bincount(codes) if n else np.zeros(0, dtype=int)
        labels = [str(i + 1) for i in range(sizes.size)]
    bounds = np.concatenate([[0], np.cumsum(sizes)])
    sorted_vals = vals[order]
    values = [sorted_vals[a:b] for a, b in zip(bounds[:-1], bounds[1:], strict=True)]
    sums = np.add.reduceat(sorted_vals, bounds[:-1]) if sizes.size else np.zeros(0)
    if spec.subgroup is None and (times[1:] >= times[:-1]).all():
        first = times[bounds[:-1]]  # consecutive rows in time order: the earliest is the first
    else:
        first = (
            pd.Series(times[order])
            .groupby(np.repeat(np.arange(sizes.size), sizes))
            .min()
            .to_numpy()
        )
    cols = {
        "period": first,
        "value": sums / sizes,
        "n": sizes.astype(int),
        "subgroup": labels,
        "segment": 0,
    }
    return cols, values
