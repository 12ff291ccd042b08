"""Positions along a series chart's x axis (times on a UTC scale, or point numbers labelled with
the points' labels), the midpoints between them where steps and bands change, and the shared
x channel of the series charts.
"""

from __future__ import annotations

import functools
import math
from datetime import UTC, date, datetime

import numpy as np

from .. import vl
from .templates import list_slot, slot
from .times import _DATE_RE, _plain_stamps, event_time, parse_time, time_text, utc_text
from .types import SeriesContext


@functools.lru_cache(maxsize=32)
def x_axis(ctx: SeriesContext) -> XAxis:
    """The x positions of a series, shared by the charts of one metric (computed once)."""
    return XAxis(ctx)


class XAxis:
    """Positions along the x axis of a series chart.

    Time-based series place points at their dates (temporal, UTC scale); other series place
    point i at i (quantitative) and label the axis with the point labels.
    """

    def __init__(self, ctx: SeriesContext):
        self.ctx = ctx
        self.n = len(ctx.x)
        self.is_time = ctx.x_is_time
        self._mids: list | None = None
        self._stamps: np.ndarray | None = None  # whole-second UTC times, when all are plain
        self._dts: list[datetime] | None = None
        if self.is_time:
            given = ctx.stamps
            self._stamps = (
                given if given is not None and len(given) == self.n else _plain_stamps(ctx.x)
            )
            if self._stamps is not None:
                texts = np.datetime_as_string(self._stamps, unit="s").tolist()
                self.pos = [
                    x if _DATE_RE.match(x) else t + "Z" for x, t in zip(ctx.x, texts, strict=True)
                ]
            else:
                self.pos = [time_text(s) for s in ctx.x]
                self._dts = [parse_time(s) for s in ctx.x]  # refuses bad values now
        else:
            self.pos = list(range(self.n))

    @property
    def _dt(self) -> list[datetime]:
        """The positions as aware UTC datetimes (time-based series)."""
        if self._dts is None:
            self._dts = [parse_time(s) for s in self.ctx.x]
        return self._dts

    def has_seconds(self) -> bool:
        """Whether any time has seconds (or finer) past the minute."""
        if self._stamps is not None:
            return bool((self._stamps.astype("datetime64[m]") != self._stamps).any())
        return any(d.second or d.microsecond for d in self._dt)

    def at(self, i: int):
        return self.pos[i]

    def midpoints(self) -> list:
        """mids[i]: halfway between point i-1 and point i; mids[0] and mids[n] are the ends."""
        if self._mids is None:
            n = self.n
            if self.is_time and self._stamps is not None and n:
                us = self._stamps.astype("datetime64[us]")
                # whole seconds apart, so the half is a whole number of microseconds: the same
                # instant datetime arithmetic gives
                half = us[:-1] + (us[1:] - us[:-1]) // 2
                whole = half.astype("datetime64[s]") == half
                secs = np.datetime_as_string(half, unit="s").tolist()
                millis = np.datetime_as_string(half, unit="ms").tolist()
                mids = [self.pos[0]]
                mids += [
                    (a if w else b) + "Z"
                    for a, b, w in zip(secs, millis, whole.tolist(), strict=True)
                ]
                mids.append(self.pos[n - 1])
            elif self.is_time:
                dt = self._dt
                mids = [self.pos[0]] if n else []
                mids += [utc_text(dt[i - 1] + (dt[i] - dt[i - 1]) / 2) for i in range(1, n)]
                if n:
                    mids.append(self.pos[n - 1])
            else:
                mids = [i - 0.5 for i in range(n + 1)]
            self._mids = mids
        return self._mids

    def half_before(self, i: int):
        """Position halfway between point i-1 and point i (the first point: its own place)."""
        return self.midpoints()[max(0, min(i, self.n))]

    def half_after(self, i: int):
        """Position halfway between point i and point i+1 (the last point: its own place)."""
        return self.midpoints()[max(0, min(i + 1, self.n))]

    def axis_values(self) -> dict:
        """Placeholder values for a label axis (non-time series)."""
        labels = [str(s) for s in self.ctx.x]
        step = max(1, math.ceil(self.n / 30))
        values = list(range(0, self.n, step))
        expr = f"{_js_list(labels)}[datum.value] || ''"
        return {"x_values": values, "x_label_expr": expr}

    def time_at(self, i: int) -> datetime:
        """Point i's time as an aware UTC datetime (time-based series): from the typed times
        when the series has them, else read back from its position's text."""
        if self._stamps is not None:
            return self._stamps[i].astype("datetime64[us]").item().replace(tzinfo=UTC)
        return parse_time(self.pos[i])

    def in_range(self, when: str | date) -> bool:
        if not self.is_time or self.n == 0:
            return False
        try:
            d = event_time(when)
        except ValueError:
            return False
        if self._stamps is not None:
            t = np.datetime64(d.replace(tzinfo=None), "us")
            return bool(self._stamps.min() <= t <= self._stamps.max())
        return min(self._dt) <= d <= max(self._dt)


def _js_list(items: list[str]) -> str:
    import json

    return json.dumps(items, ensure_ascii=True)


def x_encoding(is_time: bool, field: str = "x", title: str | None = None) -> dict:
    """The shared x channel of series charts (temporal UTC or indexed with label axis)."""
    if is_time:
        return vl.field(
            f"{field}:T",
            scale={"type": "utc"},
            # day ticks as "Mar 14" (Vega's default "Sat 14" hides the month), hours on a
            # 24-hour clock; coarser ticks keep Vega's own month and year labels
            axis={
                "title": title,
                "labelOverlap": True,
                "grid": False,
                "format": {"date": "%b %d", "hours": "%H:%M"},
            },
        )
    return vl.field(
        f"{field}:Q",
        scale={"zero": False, "nice": False},
        axis={
            "title": title,
            "values": list_slot("x_values"),
            "labelExpr": slot("x_label_expr"),
            "labelOverlap": True,
            "grid": False,
        },
    )
