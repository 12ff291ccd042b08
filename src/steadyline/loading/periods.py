"""Calendar periods of a roll-up or of drawing by period: where each time's period starts, the
period's label (2026-01-05, 2026-W02, 2026-01, 2026-Q1, 2026), the labels of points not rolled
up, and the segments a gap of whole periods starts (so that lines are not joined across it)."""

from __future__ import annotations

from typing import Literal

import numpy as np
import pandas as pd

_PERIOD_FREQ = {"day": "D", "week": "W-MON", "month": "MS", "quarter": "QS", "year": "YS"}


def period_start(t: pd.Series, period: str) -> pd.Series:
    d = t.dt.normalize()
    if period == "day":
        return d
    if period == "week":  # ISO weeks start on Monday
        return d - pd.to_timedelta(d.dt.day_of_week, unit="D")
    if period == "month":
        return d.dt.to_period("M").dt.start_time
    if period == "year":
        return d.dt.to_period("Y").dt.start_time
    return d.dt.to_period("Q").dt.start_time


def period_label(start: pd.Series, period: str) -> pd.Series:
    if period in ("day", "month"):
        return pd.Series(
            _iso_array(start.to_numpy(), "D" if period == "day" else "M"), index=start.index
        )
    if period == "week":
        iso = start.dt.isocalendar()
        return iso["year"].astype(str) + "-W" + iso["week"].astype(str).str.zfill(2)
    if period == "year":
        return start.dt.year.astype(str)
    return start.dt.year.astype(str) + "-Q" + start.dt.quarter.astype(str)


def _period_labels(start: np.ndarray, period: str) -> np.ndarray:
    """:func:`period_label` of naive period starts held in a numpy array, as an array."""
    if period in ("day", "month"):
        return _iso_array(start, "D" if period == "day" else "M")
    return period_label(pd.Series(start), period).to_numpy(dtype=object)


def _iso_array(t: np.ndarray, unit: Literal["D", "M", "m"]) -> np.ndarray:
    """ISO 8601 text of naive times to the given numpy unit ("D" 2026-01-05, "M" 2026-01,
    "m" 2026-01-05 06:30), written by numpy in one pass (pandas' strftime goes value by
    value), as an object array of str."""
    text = np.datetime_as_string(t.astype(f"datetime64[{unit}]"), unit=unit)
    if unit == "m":
        text = np.char.replace(text, "T", " ")
    return text.astype(object)


def _segments_for_periods(starts: pd.Series | np.ndarray, period: str) -> np.ndarray:
    """A new segment starts wherever one or more whole periods are missing."""
    starts = np.asarray(starts)
    if len(starts) == 0:
        return np.zeros(0, dtype=int)
    if period == "day":
        days = starts.astype("datetime64[D]").astype(np.int64)
        return np.cumsum(np.diff(days, prepend=days[0]) > 1)
    full = pd.date_range(starts[0], starts[-1], freq=_PERIOD_FREQ[period])
    pos = full.get_indexer(pd.DatetimeIndex(starts))
    gaps = np.diff(pos, prepend=pos[0]) > 1
    return np.cumsum(gaps)


def _labels(a: np.ndarray) -> np.ndarray:
    """Labels of unrolled points: the date, or the date and time when any point has one."""
    has_time = bool((a.astype("datetime64[D]") != a).any())
    return _iso_array(a, "m" if has_time else "D")
