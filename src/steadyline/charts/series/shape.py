"""Lengths of a series and its control chart checked against each other, and the dispersion
companion's arrays aligned with the main chart's points (it may start one point later).
"""

from __future__ import annotations

import numpy as np

from ...stats.results import ControlChart
from ..base.types import SeriesContext


def _check_len(name: str, arr, n: int) -> None:
    if len(arr) != n:
        raise ValueError(f"{name} has {len(arr)} entries, the series has {n} points")


def _check_chart(ctx: SeriesContext, chart: ControlChart, what: str = "chart") -> int:
    """Lengths of a control chart against the series; the companion chart's offset (0 or 1)."""
    n = len(ctx.x)
    for name in ("values", "centre", "lower", "upper", "fitted"):
        _check_len(f"{what}.{name}", getattr(chart, name), n)
    sec = chart.secondary
    offset = 0
    if sec is not None:
        offset = n - len(sec.values)
        if offset not in (0, 1):
            raise ValueError(
                f"the secondary chart has {len(sec.values)} points; expected {n} or {n - 1}"
            )
        for name in ("centre", "lower", "upper"):
            _check_len(f"{what}.secondary.{name}", getattr(sec, name), len(sec.values))
    return offset


def _companion(chart: ControlChart) -> ControlChart:
    """The chart's dispersion companion; asked for only where the chart has one."""
    if chart.secondary is None:
        raise ValueError(f"the {chart.label} has no dispersion chart")
    return chart.secondary


def _secondary_fitted(chart: ControlChart, offset: int) -> np.ndarray:
    sec = _companion(chart)
    if len(sec.fitted) == len(sec.values):
        return np.asarray(sec.fitted, dtype=bool)
    return np.asarray(chart.fitted, dtype=bool)[offset:]


def _secondary_aside(chart: ControlChart, offset: int) -> np.ndarray | None:
    """The companion chart's set-aside mask, aligned with its values (None when none)."""
    sec = _companion(chart)
    if sec.set_aside is not None and len(sec.set_aside) == len(sec.values):
        return np.asarray(sec.set_aside, dtype=bool)
    if chart.set_aside is None:
        return None
    return np.asarray(chart.set_aside, dtype=bool)[offset:]


def _secondary_stage(chart: ControlChart, offset: int) -> np.ndarray:
    sec = _companion(chart)
    if len(sec.stage) == len(sec.values):
        return np.asarray(sec.stage, dtype=int)
    return np.asarray(chart.stage, dtype=int)[offset:]
