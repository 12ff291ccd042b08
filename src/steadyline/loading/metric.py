"""A metric's table of text cells -> MetricData: its columns read and checked, rows that cannot
be used left out, rows put in time order, and the points formed (one per row, the user's
subgroups, a roll-up, or drawn by period), each with its label, period (baseline, after,
between) and, when project.toml sets days aside, whether it is set aside.

:func:`load_metric` reads the metric's file; :func:`load_frame` takes a DataFrame (the
notebook) through the same checks and shaping. Either raises ProjectError with every problem."""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from ..config import MetricSpec, PortfolioSettings
from .cells import _text, clean_label
from .data import ByPeriod, MetricData
from .drawing import DRAWN_POINTS_MAX, _by_period
from .frames import _frame_table
from .grouping import _rollup, _subgroups
from .header import _columns_of, _require_column
from .numbers import _numbers
from .periods import _labels, _period_labels
from .problems import _Rows
from .reading import _read_table
from .stages import _set_aside, _values_aside, assign_stage
from .times import _times


def load_metric(spec: MetricSpec, settings: PortfolioSettings | None = None) -> MetricData:
    """Read, validate and shape one metric's data. Raises ProjectError with every problem."""
    settings = settings or PortfolioSettings()
    out = _Rows(spec)
    cols = _columns_of(spec)
    df, header = _read_table(spec, settings, out, [c for c in cols.values() if c is not None])
    if df is None:
        out.raise_if_failed()
    assert df is not None
    return _shape(spec, df, header, out)


def load_frame(spec: MetricSpec, frame: pd.DataFrame) -> MetricData:
    """:func:`load_metric` for data already in a DataFrame: every cell is written as the text
    a CSV file would hold (numbers as Python writes them, times in ISO 8601, missing values
    blank) and then read by the same checks and shaping, rows numbered as the lines of a CSV
    file with a header (the frame's first row is line 2). Raises ProjectError with every
    problem; the frame is not changed."""
    df, out = _frame_table(spec, frame)
    return _shape(spec, df, list(df.columns), out)


def _has_gap(v) -> bool:
    """Whether a column (a Series or a scalar filling one) has a missing value."""
    if not isinstance(v, pd.Series):
        return False
    a = v.to_numpy()
    if a.dtype.kind == "f":
        return bool(np.isnan(a).any())
    if a.dtype.kind == "M":
        return bool(np.isnat(a).any())
    return bool(v.hasnans)


def _shape(spec: MetricSpec, df: pd.DataFrame, header: list[str], out: _Rows) -> MetricData:
    """A metric's table of text cells (indexed by line number) checked and shaped."""
    ok = all([_require_column(header, k, c, spec, out) for k, c in _columns_of(spec).items()])
    if not ok:
        out.raise_if_failed()
    raw_rows = len(df)
    kind = spec.type
    flags = False
    if kind == "continuous" and spec.rollup and spec.rollup.statistic == "proportion":
        kind, flags = "defectives", True
    elif kind == "defectives" and spec.value is not None and spec.rollup is not None:
        flags = True

    fc = _read_columns(df, spec, kind, flags, out)
    index = df.index
    del df  # the text of the file is not needed any more: freed before the roll-up's arrays
    out.raise_if_failed()

    frame = pd.DataFrame(fc, index=index)
    gaps = any(_has_gap(v) for v in fc.values())
    del fc  # the table holds its own copy of the columns
    frame = _usable_rows(frame, gaps, spec, kind, flags, out)
    if "t" in frame:
        frame = _in_time_order(frame, spec, out)
    if kind == "categories":
        return _categories(spec, frame, raw_rows, out)
    return _points(spec, frame, kind, flags, raw_rows, out)


def _read_columns(
    df: pd.DataFrame, spec: MetricSpec, kind: str, flags: bool, out: _Rows
) -> dict[str, Any]:
    """The metric's columns read from their text: times, numbers, labels (each problem added
    to *out*). They are gathered first and made into one table at once (each column added to
    a table on its own costs pandas more than reading it)."""
    fc: dict[str, Any] = {}
    if spec.time is not None:
        fc["t"] = _times(df, spec.time, spec, out)
    if kind == "categories":
        cat = _text(df[spec.category]).map(clean_label)
        blank = cat == ""
        out.rows(
            list(df.index[blank]),
            f"column '{spec.category}'",
            "blank category; counted as '(blank)'",
            severity="warning",
        )
        fc["category"] = cat.where(~blank, "(blank)")
        fc["weight"] = (
            _numbers(df, spec.count, spec, out, minimum=0, what="a count") if spec.count else 1.0
        )
    elif flags:
        assert spec.value is not None  # a roll-up to a proportion reads the value column
        v = _numbers(df, spec.value, spec, out, what="0 or 1")
        va = v.to_numpy()
        badflag = ~np.isnan(va) & (va != 0.0) & (va != 1.0)
        out.rows(
            list(df.index[badflag]), f"column '{spec.value}'", "expected 0 (fine) or 1 (defective)"
        )
        fc["value"] = v
    else:
        if spec.value is not None:
            fc["value"] = _numbers(df, spec.value, spec, out)
        if spec.subgroup is not None:
            fc["subgroup"] = _text(df[spec.subgroup]).map(clean_label)
        if spec.count is not None:
            fc["count"] = _numbers(
                df, spec.count, spec, out, integer=True, minimum=0, what="a count"
            )
        if spec.size is not None:
            fc["size"] = _numbers(
                df, spec.size, spec, out, minimum=0, what="a number of items or an area"
            )
    return fc


def _usable_rows(
    frame: pd.DataFrame, gaps: bool, spec: MetricSpec, kind: str, flags: bool, out: _Rows
) -> pd.DataFrame:
    """The rows that can be used: rows with a blank or refused cell, and rows with nothing
    checked, left out (with warnings); more defectives than items is an error."""
    if gaps:
        frame = frame.dropna(how="any")
    if kind == "defectives" and not flags:
        over = frame["count"] > frame["size"]
        out.rows(
            list(frame.index[over]),
            f"column '{spec.count}'",
            f"more defectives than items checked ('{spec.size}')",
        )
    if (kind == "defectives" and not flags) or (kind == "defects" and "size" in frame):
        zero = frame["size"] <= 0
        nothing = (
            "no items checked (size 0)" if kind == "defectives" else "area of opportunity is zero"
        )
        out.rows(
            list(frame.index[zero]),
            f"column '{spec.size}'",
            f"{nothing}; the row is left out",
            severity="warning",
        )
        frame = frame[~zero]
    out.raise_if_failed()
    if len(frame) == 0:
        out.add(
            None,
            "",
            "no usable data rows are left after leaving out blank cells and rows "
            "with nothing checked; see the warnings",
        )
        out.raise_if_failed()
    return frame


def _in_time_order(frame: pd.DataFrame, spec: MetricSpec, out: _Rows) -> pd.DataFrame:
    """The rows sorted by time (stable), with a warning naming the first row out of order."""
    if frame["t"].is_monotonic_increasing:
        return frame
    first_bad = int(np.argmax(np.diff(frame["t"].to_numpy()) < np.timedelta64(0))) + 1
    out.add(
        int(frame.index[first_bad]),
        f"column '{spec.time}'",
        "rows are not in time order; they were sorted by time",
        severity="warning",
    )
    return frame.sort_values("t", kind="stable")


def _categories(spec: MetricSpec, frame: pd.DataFrame, raw_rows: int, out: _Rows) -> MetricData:
    """A categories metric: one point per row (category, weight, stage, and its time if any)."""
    stage = (
        assign_stage(frame["t"].to_numpy(), spec.baseline, spec.after)
        if "t" in frame
        else np.zeros(len(frame), dtype=int)
    )
    pts = pd.DataFrame(
        {
            "category": frame["category"].to_numpy(),
            "weight": frame["weight"].to_numpy(dtype=float),
            "stage": stage,
        }
    )
    if "t" in frame:
        pts["period"] = frame["t"].to_numpy()
    return MetricData(
        spec,
        kind="categories",
        points=pts,
        raw_rows=raw_rows,
        problems=[p for p in out.problems if p.severity != "error"],
    )


def _points(
    spec: MetricSpec, frame: pd.DataFrame, kind: str, flags: bool, raw_rows: int, out: _Rows
) -> MetricData:
    """A time-based metric's points, labelled, with their period and, when days are set
    aside, whether each point (and each individual value) is set aside."""
    values = None
    if kind in ("continuous", "subgroups"):
        values = pd.DataFrame(
            {
                "value": frame["value"].to_numpy(dtype=float),
                "stage": assign_stage(frame["t"].to_numpy(), spec.baseline, spec.after),
            }
        )
    cols, subgroups, by_period, kind = _point_columns(frame, spec, kind, flags, out)
    period_of_points = spec.rollup.period if spec.rollup is not None else None
    if by_period is not None:
        period_of_points = by_period.period
    if kind in ("defectives", "defects"):
        cols["value"] = cols["count"] / cols["size"]
    period = np.asarray(cols["period"])
    cols["label"] = (
        _labels(period) if period_of_points is None else _period_labels(period, period_of_points)
    )
    cols["stage"] = assign_stage(period, spec.baseline, spec.after)
    if spec.set_aside:
        cols["aside"] = _set_aside(spec, period, cols["stage"], out)
        if values is not None:
            values["aside"] = _values_aside(
                frame,
                spec,
                cols["aside"],
                period,
                kind == "subgroups" and by_period is None,
                period_of_points is not None,
            )
    pts = pd.DataFrame(cols)
    out.raise_if_failed()
    return MetricData(
        spec,
        kind,
        pts,
        subgroups=subgroups,
        values=values,
        raw_rows=raw_rows,
        problems=[p for p in out.problems if p.severity != "error"],
        by_period=by_period,
    )


def _point_columns(
    frame: pd.DataFrame, spec: MetricSpec, kind: str, flags: bool, out: _Rows
) -> tuple[dict[str, Any], list[np.ndarray] | None, ByPeriod | None, str]:
    """(the points' columns, in this order: period, the values, n, (subgroup), segment; the
    values of each subgroup; how the series is drawn by period, or None; the kind, which
    becomes "subgroups" when measured values are drawn by period as subgroups)."""
    subgroups = None
    by_period = None
    if kind == "subgroups":
        cols, subgroups = _subgroups(frame, spec, out)
        if len(subgroups) > DRAWN_POINTS_MAX:
            by_period, cols, subgroups = _by_period(frame, spec, kind, len(subgroups))
    elif spec.rollup is not None:
        cols = _rollup(frame, spec, kind, flags)
    elif len(frame) > DRAWN_POINTS_MAX:
        by_period, cols, subgroups = _by_period(frame, spec, kind, len(frame))
        if by_period.how == "subgroups":
            kind = "subgroups"
    else:
        cols = _row_points(frame, spec, kind, out)
    return cols, subgroups, by_period, kind


def _row_points(frame: pd.DataFrame, spec: MetricSpec, kind: str, out: _Rows) -> dict[str, Any]:
    """One point per row: period, the value (or count and size), n, segment."""
    if kind == "continuous":
        dups = frame["t"].duplicated(keep=False)
        out.rows(
            list(frame.index[dups]),
            f"column '{spec.time}'",
            "several rows share the same time; each is plotted as its own point",
            severity="warning",
        )
    cols: dict[str, Any] = {"period": frame["t"].to_numpy()}
    if kind == "continuous":
        cols["value"] = frame["value"].to_numpy()
    else:
        cols["count"] = frame["count"].to_numpy()
        cols["size"] = frame["size"].to_numpy() if "size" in frame else 1.0
    cols["n"] = 1
    cols["segment"] = 0
    return cols
