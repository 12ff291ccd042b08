"""The template layers that draw a series chart's reference lines: a control chart's centre
line and limits (plain or by period) with their labels, and a run chart's median.
"""

from __future__ import annotations

from .. import style, vl
from ..base.xaxis import x_encoding
from .limit_rows import _LIMIT_KINDS
from .point_layers import _y


def _reference_layers(is_time: bool, prefix: str, y_slot: str, staged: bool = False) -> list:
    """Centre line and limits as per-point step segments, labelled at the right end.

    Plain control chart: the centre line solid, the limits dashed, all grey. Staged chart: the
    baseline set grey (solid centre line over the baseline, everything dashed where carried
    forward), the after period's own set dark and solid, its labels at the start of the period."""
    dash, colour, seg_mark, parts_fields = _line_look(staged)
    segs = vl.view(
        f"{prefix}limits",
        seg_mark,
        {
            "x": x_encoding(is_time),
            "y": _y("y", y_slot),
            "detail": vl.field("p:N"),
            "strokeDash": dash,
            **colour,
            "tooltip": [vl.tip("name:N", "line"), vl.tip("y:Q", "value", ",.4~g")],
        },
        transform=[
            {
                "lookup": "p",
                "from": {"data": {"name": "limit_parts"}, "key": "p", "fields": parts_fields},
            }
        ],
    )
    labels = _label_layers(is_time, prefix, y_slot, staged)
    layers = [segs, *labels]
    if staged:
        layers.append(
            vl.view(
                f"{prefix}own_labels",
                vl.mark("text", **_BESIDE_OR_INSIDE, color=style.OWN_LIMIT),
                {"x": x_encoding(is_time), "y": _y("y", y_slot), "text": vl.field("text:N")},
            )
        )
    return layers


def _line_look(staged: bool) -> tuple[dict, dict, dict, list[str]]:
    """The limit lines' dash channel, stroke colour, mark and the fields of their pieces."""
    if staged:
        dash = vl.field(
            "look:N",
            scale={"domain": ["solid", "dashed"], "range": [[1, 0], list(style.DASH_LIMIT)]},
            legend=None,
        )
        # "stroke", not "color": the point layer's colour scale (marker) must stay its own; and
        # a condition, not a scale: a stroke scale without a legend would meet the bands'
        # fill legend ("period") and be merged with it
        colour = {
            "stroke": {
                "condition": {"test": "datum.set == 'after'", "value": style.OWN_LIMIT},
                "value": style.LIMIT,
            }
        }
        seg_mark = vl.mark("line", strokeWidth=1.4, interpolate="step-after")
        parts_fields = ["kind", "name", "set", "look"]
    else:
        dash = vl.field(
            "kind:N",
            scale={
                "domain": list(_LIMIT_KINDS),
                "range": [[1, 0], list(style.DASH_LIMIT), list(style.DASH_LIMIT)],
            },
            legend=None,
        )
        colour = {}
        seg_mark = vl.mark("line", strokeWidth=1.4, color=style.LIMIT, interpolate="step-after")
        parts_fields = ["kind", "name"]
    return dash, colour, seg_mark, parts_fields


def _label_layers(is_time: bool, prefix: str, y_slot: str, staged: bool) -> list[dict]:
    """The labels at the ends of the limit lines."""
    # Plain chart: labels right of the plot. Staged chart: the carried "baseline UCL ..." labels
    # sit inside the plot, right-aligned just above their lines; the after period's own labels
    # go right of the plot, beside their lines, so the two sets never print over each other.
    # In a narrow box (the page sets the parameter NARROW) the labels right of the plot move
    # inside it, right-aligned above the end of their lines, so that the plot keeps the width.
    # In a narrow box the after period's own labels move inside the plot, to the right end where
    # the carried ones are: the carried labels then move to the start of the after period (x0).
    # Two layers shown by turns (no transform: a layer's own data flow would make Vega warn of
    # an empty extent where a chart has no such labels).
    xy = {"y": _y("y", y_slot), "text": vl.field("text:N")}
    if staged:
        labels = [
            vl.view(
                f"{prefix}labels",
                vl.mark(
                    "text",
                    align="right",
                    baseline="bottom",
                    dx=-2,
                    dy=-2,
                    color=style.INK,
                    opacity={"expr": f"{NARROW} ? 0 : 1"},
                ),
                {"x": x_encoding(is_time), **xy},
            ),
            vl.view(
                f"{prefix}labels",
                vl.mark(
                    "text",
                    align="left",
                    baseline="bottom",
                    dx=2,
                    dy=-2,
                    color=style.INK,
                    opacity={"expr": f"{NARROW} ? 1 : 0"},
                ),
                {"x": x_encoding(is_time, field="x0"), **xy},
            ),
        ]
    else:
        labels = [
            vl.view(
                f"{prefix}labels",
                vl.mark("text", **_BESIDE_OR_INSIDE, color=style.INK),
                {"x": x_encoding(is_time), **xy},
            )
        ]
    return labels


def _median_layers(is_time: bool, y_slot: str) -> list[dict]:
    rule = vl.view(
        "centre",
        vl.mark("rule", color=style.CENTRE, strokeWidth=1.6),
        {"y": _y("y", y_slot), "tooltip": [vl.tip("text:N", "centre line")]},
    )
    # inside the plot, right-aligned just above the line at its end: the chart keeps its whole
    # width for the points (a label beside the plot took a third of a phone's screen)
    label = vl.view(
        "centre",
        vl.mark("text", align="right", baseline="bottom", dx=-2, dy=-2, color=style.INK),
        {"x": x_encoding(is_time), "y": _y("y", y_slot), "text": vl.field("text:N")},
    )
    return [rule, label]


# The page script sets this parameter to true when it draws the chart in a narrow box.
NARROW = "narrow"
_BESIDE_OR_INSIDE = {
    "align": {"expr": f"{NARROW} ? 'right' : 'left'"},
    "baseline": {"expr": f"{NARROW} ? 'bottom' : 'middle'"},
    "dx": {"expr": f"{NARROW} ? -2 : 5"},
    "dy": {"expr": f"{NARROW} ? -2 : 0"},
}
