"""The template layers that draw a series' points: the line through them and the points whose
shape and colour mark signals (plain chart) or change marks (chart by period).
"""

from __future__ import annotations

import json

from .. import style, vl
from ..base.templates import list_slot, slot
from ..base.xaxis import x_encoding
from .marks import _MARK_DOMAIN, MARK_ASIDE, MARK_ORDINARY, MARK_OWN_SIGNAL, MARK_SIGNAL

_SIGNAL_TEST = "datum.signals ? '" + MARK_SIGNAL + "' : '" + MARK_ORDINARY + "'"
_STAGED_MARK = "datum.mark || '" + MARK_ORDINARY + "'"


def _y(field: str, y_slot: str) -> dict:
    return vl.field(f"{field}:Q", scale={"zero": False}, axis={"title": slot(y_slot)})


def _x_tip(is_time: bool) -> dict:
    if is_time:
        return vl.tip("when:N", "date")  # text made in the view (_value_layers), in UTC
    return vl.tip("label:N", "point")


def _value_layers(
    is_time: bool,
    suf: str,
    y_slot: str,
    with_limits: bool,
    staged: bool = False,
    aside: bool = False,
) -> list[dict]:
    """Line broken at segment changes and gaps, plus points whose shape marks signals.

    Staged chart: a point's mark ("mark" in ``point_info``) says whether it is evidence of a
    change (a signal against the baseline's limits carried forward) and in which direction; a
    point in a signal on limits of its own period ("own") gets a large diamond beneath it, so
    that a point can show both. Both layers share one legend (one scale, ``MARK_*`` words)."""
    v = f"v{suf}"
    valid = {"filter": {"field": v, "valid": True}}
    line = vl.view(
        "points",
        vl.mark("line", color=style.DATA, strokeWidth=1.3),
        {"x": x_encoding(is_time), "y": _y(v, y_slot), "detail": vl.field(f"g{suf}:N")},
        transform=[valid],
    )
    transform = _point_transform(is_time, suf, valid, with_limits, staged, aside)
    tooltip = _tooltip(is_time, v, with_limits, staged)
    scales, size, mark = _staged_look(aside) if staged else _plain_look(aside)

    def marks(size_enc: dict, mark_def: dict, more: list) -> dict:
        return vl.view(
            "points",
            mark_def,
            {
                "x": x_encoding(is_time),
                "y": _y(v, y_slot),
                "shape": vl.field("marker:N", scale=dict(scales[0]), legend=dict(legend)),
                "color": vl.field("marker:N", scale=dict(scales[1]), legend=dict(legend)),
                "size": size_enc,
                "tooltip": tooltip,
            },
            transform=transform + more,
        )

    # the staged chart's words are longer than Vega's default label width of 160 px, and its
    # marks are listed one under the other on a narrow chart
    legend = (
        {"title": None, "labelLimit": 300, "columns": {"expr": "width < 560 ? 1 : 5"}}
        if staged
        else {"title": None}
    )
    points = marks(size, mark, [])
    if not staged:
        return [line, points]
    # beneath the points: the diamond of a signal on the point's own limits. Every point is in
    # this layer, at size 0 (not drawn, not hovered) unless it is in such a signal: a layer
    # filtered down to no rows makes Vega warn of an infinite extent of its fields.
    own = marks(
        {"condition": {"test": "datum.own", "value": style.SIZE_OWN_SIGNAL}, "value": 0},
        vl.mark("point", filled=True, opacity=1),
        # a JSON string is a Vega expression string (the words hold an apostrophe)
        [
            {
                "calculate": f"datum.own ? {json.dumps(MARK_OWN_SIGNAL)} : datum.marker",
                "as": "marker",
            }
        ],
    )
    return [line, own, points]


def _point_transform(
    is_time: bool, suf: str, valid: dict, with_limits: bool, staged: bool, aside: bool
) -> list[dict]:
    """The points' own rows: their tooltip texts looked up by key, and their marker."""
    fields = ["stage", "fitted", "signals"] if with_limits else ["stage", "signals"]
    if staged:
        fields += ["mark", "own"]
    if aside:  # the chart of a metric with points set aside: a mark of their own
        fields.append("aside")
    marker = _STAGED_MARK if staged else _SIGNAL_TEST
    limits = [
        {
            "lookup": f"i{suf}",
            "from": {"data": {"name": "limit_info"}, "key": "i", "fields": ["info"]},
        }
    ]
    return [
        dict(valid),
        {
            "lookup": f"k{suf}",
            "from": {"data": {"name": "point_info"}, "key": "k", "fields": fields},
        },
        *(limits if with_limits else []),
        {
            "calculate": f"datum.aside ? '{MARK_ASIDE}' : ({marker})" if aside else marker,
            "as": "marker",
        },
        {"calculate": "datum.signals || 'none'", "as": "signals"},
        # the point's time as text for the tooltip: Vega's own formatting of a UTC time, as
        # precise as the positions are (Vega-Lite's formatType "utc" compiled to a call that
        # gave NaN)
        *([{"calculate": slot("x_when"), "as": "when"}] if is_time else []),
    ]


def _tooltip(is_time: bool, v: str, with_limits: bool, staged: bool) -> list[dict]:
    tooltip = [
        _x_tip(is_time),
        vl.tip(f"{v}:Q", "value", ",.4~g"),
        vl.tip("stage:N", "period"),
    ]
    if with_limits:
        tooltip += [vl.tip("info:N", "limits"), vl.tip("fitted:N", "used for limits")]
    if staged:
        tooltip.append(vl.tip("marker:N", "mark"))
    tooltip.append(vl.tip("signals:N", "signals"))
    return tooltip


def _staged_look(aside: bool) -> tuple[tuple[dict, dict], dict, dict]:
    """The staged chart's marker scales (shape, colour), size and mark: the legend's marks are
    the chart's own (template values), the change marks larger and outlined."""
    scales = (
        {"domain": list_slot("mark_domain"), "range": list_slot("mark_shapes")},
        {"domain": list_slot("mark_domain"), "range": list_slot("mark_colours")},
    )
    # a point set aside is drawn at the ordinary size, without the change marks' outline
    plain = (
        f"datum.marker == '{MARK_ORDINARY}' || datum.marker == '{MARK_ASIDE}'"
        if aside
        else f"datum.marker == '{MARK_ORDINARY}'"
    )
    size = {
        "condition": {"test": plain, "value": style.SIZE_POINT},
        "value": style.SIZE_CHANGE,
    }
    # a dark outline on the change marks, none on ordinary points (a mark property: a
    # "stroke" channel here would meet the limit lines' stroke in one legend)
    mark = vl.mark(
        "point",
        filled=True,
        opacity=1,
        strokeWidth=1,
        stroke={"expr": f"({plain}) ? null : '{style.CHANGE_OUTLINE}'"},
    )
    return scales, size, mark


def _plain_look(aside: bool) -> tuple[tuple[dict, dict], dict, dict]:
    """The plain chart's marker scales (shape, colour), size and mark: ordinary points, points
    in a signal larger, and points set aside in a mark of their own."""
    shapes: dict[str, list] = {
        "domain": list(_MARK_DOMAIN),
        "range": [style.SHAPE_POINT, style.SHAPE_SIGNAL],
    }
    colours: dict[str, list] = {"domain": list(_MARK_DOMAIN), "range": [style.DATA, style.SIGNAL]}
    signal = {"test": f"datum.marker == '{MARK_SIGNAL}'", "value": style.SIZE_SIGNAL}
    size: dict = {"condition": signal, "value": style.SIZE_POINT}
    if aside:
        shapes["domain"].append(MARK_ASIDE)
        shapes["range"].append(style.SHAPE_ASIDE)
        colours["domain"].append(MARK_ASIDE)
        colours["range"].append(style.ASIDE)
        size = {
            "condition": [
                dict(signal),
                {"test": f"datum.marker == '{MARK_ASIDE}'", "value": style.SIZE_ASIDE},
            ],
            "value": style.SIZE_POINT,
        }
    return (shapes, colours), size, vl.mark("point", filled=True, opacity=1)
