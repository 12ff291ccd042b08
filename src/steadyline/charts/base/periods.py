"""Periods of a series drawn as background bands, each filled by its kind of period (before,
baseline, between, after, later) and named in a legend.
"""

from __future__ import annotations

import itertools
from collections.abc import Hashable, Sequence
from typing import TypeVar

from .. import style, vl
from .templates import list_slot
from .xaxis import XAxis, x_encoding

_Name = TypeVar("_Name", bound=Hashable)


def stage_runs(stages: Sequence[_Name]) -> list[tuple[int, int, _Name]]:
    """Contiguous runs of equal stage names as (first index, last index, name); also of any
    other equal values in a row (the points used for limits, as booleans)."""
    n = len(stages)
    if not n:
        return []
    starts = [0] + [i for i, a, b in zip(itertools.count(1), stages, stages[1:]) if a != b]
    ends = [i - 1 for i in starts[1:]] + [n - 1]
    return [(a, b, stages[a]) for a, b in zip(starts, ends, strict=True)]


# Period names that say their kind of period; any other name is placed by where it lies.
_KIND_OF_STAGE = {"Baseline": style.PERIOD_BASELINE, "After": style.PERIOD_AFTER}


def period_kinds(names: Sequence[str]) -> list[str]:
    """The kind of period (``style.PERIOD_KINDS``) of each contiguous period, in order: the
    baseline and after periods by name, any other period by where it lies: before the first
    baseline period, after an after period, else between the periods."""
    kinds = [_KIND_OF_STAGE.get(n, "") for n in names]
    seen_baseline = seen_after = False
    out = []
    for k in kinds:
        if k == style.PERIOD_BASELINE:
            seen_baseline = True
        elif k == style.PERIOD_AFTER:
            seen_after = True
        elif seen_after:
            k = style.PERIOD_LATER
        elif seen_baseline:
            k = style.PERIOD_BETWEEN
        else:
            k = style.PERIOD_BEFORE
        out.append(k)
    return out


def band_rows(xa: XAxis, stages: Sequence[str]) -> list[dict]:
    """Background bands, one per contiguous period, each filled by its kind of period
    (``style.PERIOD_FILLS``, through the band layer's scale) and named by it."""
    runs = stage_runs(stages)
    if not runs or (len(runs) == 1 and not runs[0][2]):
        return []
    rows = []
    total = sum(b - a + 1 for a, b, _ in runs)
    for (a, b, _name), kind in zip(runs, period_kinds([r[2] for r in runs]), strict=True):
        # A band too narrow for its name keeps it in the tooltip only (labels would overlap).
        wide = len(runs) == 1 or (b - a + 1) >= max(3, 0.1 * total)
        rows.append(
            {
                "x": xa.half_before(a),
                "x2": xa.half_after(b),
                "kind": kind,
                "label": kind[:1].upper() + kind[1:] if wide else "",
            }
        )
    return rows


def band_values(bands: Sequence[dict]) -> dict:
    """The band layer's per-chart values: the kinds of period drawn, in time order of kinds,
    with their fills (the legend names only the kinds the chart has)."""
    drawn = {b["kind"] for b in bands}
    kinds = [k for k in style.PERIOD_KINDS if k in drawn]
    return {"period_kinds": kinds, "period_fills": [style.PERIOD_FILLS[k] for k in kinds]}


def band_layers(is_time: bool, legend: bool = True) -> list[dict]:
    """Period background bands, filled by kind of period and named in a legend ("period"),
    with their names at the top left. A chart beneath another (the dispersion chart of a
    control chart) draws the same bands under the same legend."""
    x = x_encoding(is_time)
    rect = vl.view(
        "bands",
        vl.mark("rect", opacity=1),
        {
            "x": x,
            "x2": {"field": "x2"},
            "fill": vl.field(
                "kind:N",
                scale={"domain": list_slot("period_kinds"), "range": list_slot("period_fills")},
                # above the plot: beside the marks' legend below it, the two ran off a
                # phone's screen; in two columns on a narrow chart
                legend={
                    "title": "period",
                    "symbolType": "square",
                    "orient": "top",
                    "columns": {"expr": "width < 560 ? 2 : 5"},
                    "symbolStrokeColor": style.LIMIT,
                    "symbolStrokeWidth": 1,
                }
                if legend
                else None,
            ),
            "tooltip": [vl.tip("kind:N", "period")],
        },
    )
    # a name no wider than its band (cut with an ellipsis), so neighbouring names never overlap
    ends = ("toDate(datum.x2)", "toDate(datum.x)") if is_time else ("datum.x2", "datum.x")
    room = f"max(12, scale('x', {ends[0]}) - scale('x', {ends[1]}) - 6)"
    label = vl.view(
        "bands",
        vl.mark(
            "text", align="left", baseline="top", dx=3, dy=2, fontWeight=600, limit={"expr": room}
        ),
        {
            "x": x_encoding(is_time),
            "y": {"value": 0},
            "text": vl.field("label:N"),
            "tooltip": [vl.tip("kind:N", "period")],
        },
    )
    return [rect, label]
