"""Time-ordered displays: the run chart and control charts (with their dispersion companion)."""

from __future__ import annotations

import itertools
import json
import math
from collections.abc import Sequence
from typing import NamedTuple

import numpy as np

from ..memo import by_identity
from ..stats.evidence import PointEvidence, change_counts, point_evidence
from ..stats.results import ControlChart, RunChartAnalysis, Signal
from ..vocab import (
    RunRules,
    chart_name,
    control_chart_kind,
    is_proportion_unit,
    items_of,
    proportion_text,
    proportion_unit,
)
from . import style, vl
from .base import (
    ChartSpec,
    ColumnTable,
    SeriesContext,
    XAxis,
    axis_title,
    band_layers,
    band_rows,
    band_values,
    cached_template,
    disp,
    disp_list,
    event_layers,
    event_rows,
    finish_template,
    fmt,
    headroom_layer,
    headroom_rows,
    list_slot,
    make_spec,
    num,
    num_list,
    plural,
    slot,
    stage_runs,
    titled,
    with_unit,
    x_axis,
    x_encoding,
)

MARK_ORDINARY = "point"
MARK_SIGNAL = "part of a signal"
# a point set aside (`set_aside` in project.toml): drawn, left out of the baseline's statistics
MARK_ASIDE = "set aside"
_MARK_DOMAIN = [MARK_ORDINARY, MARK_SIGNAL]
# The control chart by phase tells a change from instability: a point outside the baseline
# judged against the baseline's limits carried forward, in a signal there, is evidence of a
# change (better / worse by the metric's "better"); a point in a signal on limits of its own
# period (the baseline on the baseline's, the after phase on its own) is a signal of
# instability. The same words are used in the legend, the sentences under the chart and the
# README.
MARK_CHANGE_BETTER = "baseline limits: change, better"
MARK_CHANGE_WORSE = "baseline limits: change, worse"
MARK_CHANGE_UNJUDGED = "baseline limits: change, direction not judged"
MARK_OWN_SIGNAL = "signal on its own period's limits"
CHANGE_MARKS = {
    "better": MARK_CHANGE_BETTER,
    "worse": MARK_CHANGE_WORSE,
    "not judged": MARK_CHANGE_UNJUDGED,
}
# legend order, shapes and colours of the staged chart's marks
_STAGED_MARKS = (
    (MARK_ORDINARY, style.SHAPE_POINT, style.DATA),
    (MARK_CHANGE_BETTER, style.SHAPE_CHANGE_BETTER, style.CHANGE_BETTER),
    (MARK_CHANGE_WORSE, style.SHAPE_CHANGE_WORSE, style.CHANGE_WORSE),
    (MARK_CHANGE_UNJUDGED, style.SHAPE_CHANGE_UNJUDGED, style.CHANGE_UNJUDGED),
    (MARK_OWN_SIGNAL, style.SHAPE_SIGNAL, style.SIGNAL),
)

_LIMIT_KINDS = ("centre line", "UCL", "LCL")
_LIMIT_SHORT = {"centre line": "CL", "UCL": "UCL", "LCL": "LCL"}
_SECONDARY_SHORT = {"moving-range": "mR", "range": "R", "stdev": "S"}
# Charts whose plotted statistic is in the metric's own unit.
_UNIT_KINDS = {"individuals", "xbar", "moving-range", "range", "stdev"}

# Datasets built at display precision already (values from disp_list, integer or text x).
_EXACT = ("points",)


def _exact(ctx: SeriesContext, datasets: dict) -> tuple[str, ...]:
    """Datasets already at display precision. On a time axis every dataset of a series chart
    is (values from disp/disp_list, positions as text); on a point-number axis the limit
    lines' and labels' positions are plain floats and are rounded with the rest."""
    return tuple(datasets) if ctx.x_is_time else _EXACT


# ------------------------------------------------------------------------------------------------
# Templates
# ------------------------------------------------------------------------------------------------
#
# Data layout (kept small: a page embeds only what is drawn). One row per plotted position in
# ``points``: "x", the main chart's value "v", line piece "g" and key "k" into ``point_info``; a
# control chart adds key "i" into ``limit_info`` (the limits at the point, as text); a chart with a
# dispersion companion adds "v2", "g2", "k2", "i2" to the same rows, so that positions are written
# once. ``point_info`` holds the distinct (phase, used for limits, signals) combinations that the
# tooltips show; the marker is computed in the view from them. Limit lines
# are "step-after" lines with one vertex per change ("p", "x", "y"), their pieces named once in
# ``limit_parts``.

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
    fields = ["stage", "fitted", "signals"] if with_limits else ["stage", "signals"]
    if staged:
        fields += ["mark", "own"]
    if aside:  # the chart of a metric with points set aside: a mark of their own
        fields.append("aside")
    line = vl.view(
        "points",
        vl.mark("line", color=style.DATA, strokeWidth=1.3),
        {"x": x_encoding(is_time), "y": _y(v, y_slot), "detail": vl.field(f"g{suf}:N")},
        transform=[valid],
    )
    transform = [
        dict(valid),
        {
            "lookup": f"k{suf}",
            "from": {"data": {"name": "point_info"}, "key": "k", "fields": fields},
        },
        *(
            [
                {
                    "lookup": f"i{suf}",
                    "from": {"data": {"name": "limit_info"}, "key": "i", "fields": ["info"]},
                }
            ]
            if with_limits
            else []
        ),
        {
            "calculate": (
                f"datum.aside ? '{MARK_ASIDE}' : ({_STAGED_MARK})" if aside else _STAGED_MARK
            )
            if staged
            else (f"datum.aside ? '{MARK_ASIDE}' : ({_SIGNAL_TEST})" if aside else _SIGNAL_TEST),
            "as": "marker",
        },
        {"calculate": "datum.signals || 'none'", "as": "signals"},
        # the point's time as text for the tooltip: Vega's own formatting of a UTC time, as
        # precise as the positions are (Vega-Lite's formatType "utc" compiled to a call that
        # gave NaN)
        *([{"calculate": slot("x_when"), "as": "when"}] if is_time else []),
    ]
    tooltip = [
        _x_tip(is_time),
        vl.tip(f"{v}:Q", "value", ",.4~g"),
        vl.tip("stage:N", "phase"),
    ]
    if with_limits:
        tooltip += [vl.tip("info:N", "limits"), vl.tip("fitted:N", "used for limits")]
    if staged:
        tooltip.append(vl.tip("marker:N", "mark"))
    tooltip.append(vl.tip("signals:N", "signals"))
    if staged:
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
    else:
        scales = (
            {"domain": list(_MARK_DOMAIN), "range": [style.SHAPE_POINT, style.SHAPE_SIGNAL]},
            {"domain": list(_MARK_DOMAIN), "range": [style.DATA, style.SIGNAL]},
        )
        size = {
            "condition": {"test": f"datum.marker == '{MARK_SIGNAL}'", "value": style.SIZE_SIGNAL},
            "value": style.SIZE_POINT,
        }
        if aside:
            scales[0]["domain"].append(MARK_ASIDE)
            scales[0]["range"].append(style.SHAPE_ASIDE)
            scales[1]["domain"].append(MARK_ASIDE)
            scales[1]["range"].append(style.ASIDE)
            size = {
                "condition": [
                    dict(size["condition"]),
                    {"test": f"datum.marker == '{MARK_ASIDE}'", "value": style.SIZE_ASIDE},
                ],
                "value": style.SIZE_POINT,
            }
        mark = vl.mark("point", filled=True, opacity=1)

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


def _reference_layers(is_time: bool, prefix: str, y_slot: str, staged: bool = False) -> list:
    """Centre line and limits as per-point step segments, labelled at the right end.

    Plain control chart: the centre line solid, the limits dashed, all grey. Staged chart: the
    baseline set grey (solid centre line over the baseline, everything dashed where carried
    forward), the after phase's own set dark and solid, its labels at the start of the phase."""
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
    # Plain chart: labels right of the plot. Staged chart: the carried "baseline UCL ..." labels
    # sit inside the plot, right-aligned just above their lines; the after phase's own labels
    # go right of the plot, beside their lines, so the two sets never print over each other.
    # In a narrow box (the page sets the parameter NARROW) the labels right of the plot move
    # inside it, right-aligned above the end of their lines, so that the plot keeps the width.
    # In a narrow box the after phase's own labels move inside the plot, to the right end where
    # the carried ones are: the carried labels then move to the start of the after phase (x0).
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


def _series_view(
    is_time: bool, suf: str, y_slot: str, height: int, refs: str, aside: bool = False
) -> dict:
    prefix = "secondary_" if suf else ""
    layers = band_layers(is_time) + event_layers(is_time, labelled=not suf)
    if refs == "limits":
        layers += _reference_layers(is_time, prefix, y_slot)
    elif refs == "staged":
        layers += _reference_layers(is_time, prefix, y_slot, staged=True)
    else:
        layers += _median_layers(is_time, y_slot)
    if not suf:  # room above the points for the event labels (the chart beneath has none)
        layers.append(headroom_layer(_y("y", y_slot)))
    layers += _value_layers(
        is_time, suf, y_slot, with_limits=refs != "median", staged=refs == "staged", aside=aside
    )
    return vl.layer(*layers, width="container", height=height)


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


def _run_template(is_time: bool, aside: bool = False) -> dict:
    chart = _series_view(is_time, "", "y_title", style.HEIGHT_MAIN, refs="median", aside=aside)
    return finish_template(chart, "run-chart")


def _control_template(
    is_time: bool, has_secondary: bool, refs: str = "limits", aside: bool = False
) -> dict:
    display = "staged-control-chart" if refs == "staged" else "control-chart"
    main = _series_view(is_time, "", "y_title", style.HEIGHT_MAIN, refs=refs, aside=aside)
    narrow = [{"name": NARROW, "value": False}]
    if not has_secondary:
        return finish_template({**main, "params": narrow}, display)
    second = _series_view(is_time, "2", "y2_title", style.HEIGHT_SECONDARY, refs=refs, aside=aside)
    chart = {
        "params": narrow,
        "vconcat": [main, second],
        "spacing": 18,
        "resolve": {"scale": {"x": "shared"}},
    }
    return finish_template(chart, display)


# ------------------------------------------------------------------------------------------------
# Rows
# ------------------------------------------------------------------------------------------------


class _Coded(NamedTuple):
    """A text per point, held as a code per point into a list of texts. Limit texts: every
    point has one, code c is ``texts[c]``. Signal texts: code 0 is a point in no signal, code
    c is ``texts[c - 1]``."""

    codes: np.ndarray
    texts: list[str]


@by_identity(4)
def _marked_pair(signals: Sequence[Signal], n: int, offset: int, has_sec: bool) -> tuple:
    """Signal texts per point of the main and the companion chart (the project page's and the
    history page's control charts of a metric mark the same signals)."""
    main_signals = [s for s in signals if s.chart != "secondary"]
    sec_signals = [s for s in signals if s.chart == "secondary"]
    return (
        _signal_text(main_signals, n),
        _signal_text(sec_signals, n, offset) if has_sec else _signal_text((), n),
    )


# The phase bands and event rules of a series, the same on its run chart and both control
# charts (the rows are not changed once made).
_bands = by_identity(4)(band_rows)
_events = by_identity(4)(event_rows)


@by_identity(4)
def _shown(values) -> list:
    """:func:`disp_list` of a chart's values (both pages draw the same arrays)."""
    return disp_list(values)


def _signal_text(signals: Sequence[Signal], n: int, offset: int = 0) -> _Coded:
    """Per point, the descriptions of the signals it takes part in, joined by "; " in the
    order of the first signal naming each; as a code per point (0: in no signal) into the
    distinct texts (code c is ``texts[c - 1]``). Worked out for all points at once: a
    description per (point, signal) pair, the first of each (point, description) kept, and
    the distinct sequences of descriptions found as the distinct rows of a table."""
    codes = np.zeros(n, dtype=np.int64)
    lengths = [len(s.indices) for s in signals]
    if not sum(lengths):
        return _Coded(codes, [])
    names: dict[str, int] = {}
    desc = np.array([names.setdefault(s.description, len(names)) for s in signals])
    pos = (
        np.fromiter(
            itertools.chain.from_iterable(s.indices for s in signals),
            dtype=np.int64,
            count=sum(lengths),
        )
        + offset
    )
    order = np.repeat(np.arange(len(signals)), lengths)
    inside = (pos >= 0) & (pos < n)
    pos, order = pos[inside], order[inside]
    if not pos.size:
        return _Coded(codes, [])
    by_point = np.argsort(pos * len(signals) + order, kind="stable")  # by point, then signal
    pos, d = pos[by_point], desc[order[by_point]]
    # the first pair of each (point, description): the earliest signal naming it there
    _, first = np.unique(pos * len(names) + d, return_index=True)
    first.sort()
    pos, d = pos[first], d[first]
    starts = np.flatnonzero(np.concatenate([[True], pos[1:] != pos[:-1]]))
    rank = np.arange(pos.size) - np.repeat(starts, np.diff(np.append(starts, pos.size)))
    # a point's descriptions in order, as one number: digit k (base: descriptions + 1) is
    # the k-th description's code + 1
    base = len(names) + 1
    if base ** (int(rank.max()) + 1) < 2**62:
        seq = np.add.reduceat((d + 1) * base**rank, starts)
        distinct, which = np.unique(seq, return_inverse=True)
        rows = []
        for number in distinct.tolist():
            row = []
            while number:
                number, digit = divmod(number, base)
                row.append(digit - 1)
            rows.append(row)
    else:  # more distinct descriptions than one number holds: the rows of a table
        table = np.full((starts.size, int(rank.max()) + 1), -1, dtype=np.int64)
        table[np.repeat(np.arange(starts.size), np.diff(np.append(starts, pos.size))), rank] = d
        distinct, which = np.unique(table, axis=0, return_inverse=True)
        rows = [[c for c in row if c >= 0] for row in distinct.tolist()]
    listed = list(names)
    texts = ["; ".join(listed[c] for c in row) for row in rows]
    codes[pos[starts]] = which.ravel() + 1
    return _Coded(codes, texts)


def _x_format(ctx: SeriesContext) -> str:
    """The tooltip's date format: as precise as the positions are."""
    xs = [s.strip() for s in ctx.x]
    if all(len(s) == 10 for s in xs):
        return "%Y-%m-%d"
    xa = x_axis(ctx)
    if xa.has_seconds():
        return "%Y-%m-%d %H:%M:%S"
    return "%Y-%m-%d %H:%M"


class _Keys:
    """Distinct tooltip texts of the points, each written once and keyed 0, 1, ... in order of
    first use: ``point_info`` rows (phase, used for limits, signals) under "k" and
    ``limit_info`` rows (the limits at the point) under "i"."""

    def __init__(self, staged: bool = False) -> None:
        self.points: dict[tuple, int] = {}
        self.limits: dict[str, int] = {}
        self.staged = staged  # every row says its mark and whether it is in an own signal

    def key(
        self,
        stage: str,
        fitted: bool | None,
        signals: str,
        mark: str = "",
        own: bool = False,
        aside: bool = False,
    ) -> int:
        t = (stage, fitted, signals, mark, own, aside)
        k = self.points.get(t)
        if k is None:
            k = self.points[t] = len(self.points)
        return k

    def info(self, text: str) -> int:
        i = self.limits.get(text)
        if i is None:
            i = self.limits[text] = len(self.limits)
        return i

    def point_rows(self) -> list[dict]:
        out = []
        for (stage, fitted, signals, mark, own, aside), k in self.points.items():
            row: dict = {"k": k, "stage": stage}
            if fitted is not None:
                row["fitted"] = "yes" if fitted else "no"
            if signals:
                row["signals"] = signals
            if self.staged:
                row["mark"] = mark
                row["own"] = own
            if aside:  # only on a chart with points set aside: others stay as they were
                row["aside"] = True
            out.append(row)
        return out

    def limit_rows(self) -> list[dict]:
        return [{"i": i, "info": text} for text, i in self.limits.items()]


# The staged chart's mark of a point as one code: 2 * change + own, where change is 0 (none) or
# 1 + the index of its direction in _CHANGES, and own is 1 when the point is in a signal on
# its own period's limits.
_CHANGES = ("better", "worse", "not judged")
_MARK_TEXTS = ("",) + tuple(CHANGE_MARKS[c] for c in _CHANGES)
_MARK_CODES = 2 * len(_MARK_TEXTS)


def _mark_codes(evidence) -> np.ndarray:
    """Per point of a chart, its mark code from its :class:`stats.evidence.PointEvidence`."""
    change = np.zeros(len(evidence.change), dtype=np.int64)
    for k, c in enumerate(_CHANGES):
        change[evidence.change == c] = k + 1
    return 2 * change + np.asarray(evidence.unstable, dtype=np.int64)


class _Series(NamedTuple):
    """One plotted series, column by column: per drawn point (in index order) its position,
    value, line piece, point key and limits key (``lim`` is None when the chart has none)."""

    idx: list[int]
    v: list
    g: list
    k: list
    lim: list[int] | None


@by_identity(4)
def _stage_codes(stage: tuple[str, ...]) -> tuple[tuple[str, ...], np.ndarray]:
    """The distinct phase names of a series in order of first appearance, and a code per point."""
    names = tuple(dict.fromkeys(stage))
    code = {s: c for c, s in enumerate(names)}
    return names, np.fromiter(map(code.__getitem__, stage), dtype=np.int64, count=len(stage))


def _first_use(codes: np.ndarray) -> list[tuple[int, int]]:
    """(first position, code) of each distinct code, in order of first position."""
    if not len(codes):
        return []
    distinct, first = np.unique(codes, return_index=True)
    return sorted(zip(first.tolist(), distinct.tolist(), strict=True))


def _series_rows(
    ctx: SeriesContext,
    values: Sequence,
    marked: _Coded,
    keys: _Keys,
    offset: int = 0,
    info: _Coded | None = None,
    fitted: Sequence[bool] | None = None,
    marks: np.ndarray | None = None,
    aside: np.ndarray | None = None,
) -> _Series:
    """The drawn points of a series (finite values), with line pieces that break at segment
    changes and at missing values, and their keys into ``keys``. Keys are numbered in order of
    first use, point by point; the Python work is done per distinct (phase, used for limits,
    signal text, mark) combination and per distinct limits text, not per point.

    marks: the staged chart's code per point of the series (``_mark_codes``), else None."""
    arr = np.asarray(values, dtype=float).ravel()
    vals = _shown(values) if isinstance(values, np.ndarray) else disp_list(arr)
    kp = np.flatnonzero(np.isfinite(arr))  # the points drawn, in order
    if not len(kp):
        return _Series([], [], [], [], None if info is None else [])
    if len(kp) < len(vals):
        vals = [vals[k] for k in kp.tolist()]
    ip = kp + offset
    seg = np.asarray(ctx.segment, dtype=np.int64)[ip]
    # a new piece where the segment changes or a missing value comes between
    new = (seg[1:] != seg[:-1]) | (kp[1:] != kp[:-1] + 1)
    groups = np.concatenate([[0], np.cumsum(new)]).tolist()
    idx = ip.tolist()

    # point keys: (phase, used for limits, signals), coded per point as one number
    names, stage_code = _stage_codes(ctx.stage)
    fit = None if fitted is None else np.asarray(fitted, dtype=bool)[kp]
    text_code, texts = marked
    width = len(texts) + 1
    code = (stage_code[ip] * 3 + (2 if fit is None else fit.astype(np.int64))) * width
    code += text_code[ip]
    code *= _MARK_CODES
    if marks is not None:
        code += np.asarray(marks, dtype=np.int64)[kp]
    code *= 2
    if aside is not None:
        code += np.asarray(aside, dtype=np.int64)[kp]
    distinct, first, point_key = np.unique(code, return_index=True, return_inverse=True)
    key_of = np.zeros(len(distinct), dtype=np.int64)
    for j in np.argsort(first, kind="stable").tolist():  # in order of first use
        rest, put = divmod(int(distinct[j]), 2)
        rest, m = divmod(rest, _MARK_CODES)
        pair, t = divmod(rest, width)
        s, f = divmod(pair, 3)
        change, own = divmod(m, 2)
        key_of[j] = keys.key(
            names[s],
            None if f == 2 else bool(f),
            texts[t - 1] if t else "",
            _MARK_TEXTS[change],
            bool(own),
            bool(put),
        )
    point_key = key_of[point_key.ravel()]

    lim = None
    if info is not None:
        code = info.codes[kp]
        key_of_code = np.zeros(len(info.texts), dtype=np.int64)
        for _, c in _first_use(code):
            key_of_code[c] = keys.info(info.texts[c])
        lim = key_of_code[code].tolist()
    return _Series(idx, vals, groups, point_key.tolist(), lim)


def _point_rows(xa: XAxis, ctx: SeriesContext, main: _Series, second: _Series | None = None):
    """Merge the main and the companion series into one row per position."""
    at = xa.pos
    labels = None if xa.is_time else ctx.x
    if labels is None and (not second or second.idx == main.idx):
        # the common shapes, one dict display per row: a time axis, the companion (if any) at
        # the same positions
        xs = at if len(main.idx) == len(at) else [at[i] for i in main.idx]
        v, g, k, lim = main.v, main.g, main.k, main.lim
        if not second:
            if lim is not None:
                return [
                    {"x": a, "v": b, "g": c, "k": d, "i": e}
                    for a, b, c, d, e in zip(xs, v, g, k, lim, strict=True)
                ]
            return [
                {"x": a, "v": b, "g": c, "k": d} for a, b, c, d in zip(xs, v, g, k, strict=True)
            ]
        if lim is not None and second.lim is not None:
            return [
                {"x": a, "v": b, "g": c, "k": d, "i": e, "v2": b2, "g2": c2, "k2": d2, "i2": e2}
                for a, b, c, d, e, b2, c2, d2, e2 in zip(
                    xs, v, g, k, lim, second.v, second.g, second.k, second.lim, strict=True
                )
            ]
    rows = []
    add = rows.append
    series = [main] if not second else [main, second]
    where = [dict(zip(s.idx, range(len(s.idx)), strict=True)) for s in series]
    positions = main.idx if not second else sorted(set(main.idx) | set(second.idx))
    for i in positions:
        row: dict = {"x": at[i]}
        if labels is not None:
            row["label"] = labels[i]
        for s, w, suf in zip(series, where, ("", "2"), strict=False):
            j = w.get(i)
            if j is not None:
                row["v" + suf], row["g" + suf], row["k" + suf] = s.v[j], s.g[j], s.k[j]
                if s.lim is not None:
                    row["i" + suf] = s.lim[j]
        add(row)
    return rows


class _Parts:
    """Pieces of the limit lines of one chart (main and companion), each named once in
    ``limit_parts``: kind, the name its tooltip shows, and for the staged chart set and look."""

    def __init__(self) -> None:
        self.rows: list[dict] = []

    def new(self, kind: str, name: str, set_name: str | None, look: str | None) -> int:
        p = len(self.rows)
        row = {"p": p, "kind": kind, "name": name}
        if set_name:
            row["set"] = set_name
            row["look"] = look
        self.rows.append(row)
        return p


def _limit_rows(
    xa: XAxis,
    chart: ControlChart,
    offset: int,
    parts: _Parts,
    *,
    drawn=None,
    carried=None,
    set_name: str | None = None,
    label_prefix: str = "",
    solid: bool = False,
) -> tuple[list[dict], list[dict]]:
    """Step lines of CL/UCL/LCL as vertices of a "step-after" line, and the end labels.

    Each run of equal values is one horizontal step from the midpoint before its first point to
    the midpoint after its last; a piece ("p") holds consecutive runs, so the line steps up or
    down between them (stepped p/u limits, limits recomputed per phase). One vertex per run
    start and one at the piece's end. A nan ends the piece and draws nothing until the next
    finite value.

    drawn:   per point whether the line is drawn there (default: everywhere).
    carried: per point whether the limits there are carried forward from the baseline (a new
             piece starts where this changes; carried pieces are dashed and named "baseline").
    set_name: when given ("baseline" / "after"), the parts carry "set" and "look" (staged chart).
    """
    rows: list[dict] = []
    labels: list[dict] = []
    arrays = {"centre line": chart.centre, "UCL": chart.upper, "LCL": chart.lower}
    m = len(chart.values)
    if m == 0:
        return rows, labels
    on = None if drawn is None else np.asarray(drawn, dtype=bool).ravel()
    car = np.zeros(m, dtype=bool) if carried is None else np.asarray(carried, dtype=bool).ravel()
    x_end = xa.at(m - 1 + offset)
    mids = xa.midpoints()
    last_mid = len(mids) - 1
    first = np.ones(1, dtype=bool)
    car_change = np.concatenate([first, car[1:] != car[:-1]])

    def name_at(kind: str, i: int) -> str:
        return ("baseline " if car[i] else label_prefix) + _LIMIT_SHORT[kind]

    for kind in _LIMIT_KINDS:
        raw = np.asarray(arrays[kind], dtype=float).ravel()
        fin = np.isfinite(raw)
        if on is not None:
            fin &= on
        if not fin.any():
            continue
        # A piece runs while values are finite (and drawn) and the carried flag stays the same;
        # within a piece a vertex goes where the displayed value changes, and one more at the
        # piece's end. Displayed values are rounded only where the raw value changes: between
        # such places the value, and so its rounding, stays the same.
        start = fin & np.concatenate([first, ~fin[:-1]]) | fin & car_change
        end = fin & np.concatenate([~fin[1:] | start[1:], first])
        cand = np.flatnonzero(fin & (start | np.concatenate([first, raw[1:] != raw[:-1]])))
        shown = disp_list(raw[cand])
        shown_f = np.asarray(shown, dtype=float)
        keep = start[cand] | np.concatenate([first, shown_f[1:] != shown_f[:-1]])
        vertices = cand[keep]
        starts = np.flatnonzero(start)
        ends = np.flatnonzero(end)
        # the shown value at a piece's end: that of the last candidate at or before it
        end_shown = np.searchsorted(cand, ends, side="right") - 1
        piece_ids = []
        for k in starts.tolist():
            look = "solid" if solid or (kind == "centre line" and not car[k]) else "dashed"
            piece_ids.append(parts.new(kind, name_at(kind, k), set_name, look))
        # vertices, then each piece's end vertex after its own vertices
        at = np.concatenate([vertices * 2, ends * 2 + 1])
        order = np.argsort(at, kind="stable")
        pos = np.concatenate([vertices + offset, ends + offset + 1])[order]
        piece = np.concatenate(
            [np.searchsorted(starts, vertices, side="right") - 1, np.arange(len(ends))]
        )[order]
        which = np.concatenate([np.flatnonzero(keep), end_shown])[order]
        ids = np.asarray(piece_ids, dtype=np.int64)[piece]
        rows += [
            {"p": p, "x": mids[x], "y": shown[w]}
            for p, x, w in zip(
                ids.tolist(), np.clip(pos, 0, last_mid).tolist(), which.tolist(), strict=True
            )
        ]
        i = int(np.flatnonzero(fin)[-1])
        y = shown[int(np.searchsorted(cand, i, side="right") - 1)]
        label = {"x": x_end, "y": y, "text": f"{name_at(kind, i)} {fmt(y)}", "kind": kind}
        if carried is not None:
            # where the last piece starts: in a narrow box a carried label sits there, at the
            # start of the after phase, so as not to print over the after phase's own labels
            # at the right end
            label["x0"] = xa.at(int(starts[starts <= i][-1]) + offset)
        labels.append(label)
    return rows, labels


@by_identity(4)
def _limits_info(chart: ControlChart) -> _Coded:
    """Per point, the limits there as text ("LCL 1.2, CL 3.4, UCL 5.6"), each distinct
    combination written once."""
    cols = [np.asarray(a, dtype=float).ravel() for a in (chart.lower, chart.centre, chart.upper)]
    if len(cols[0]) == 0:
        return _Coded(np.zeros(0, dtype=np.int64), [])
    grid = np.column_stack([np.where(np.isfinite(c), c, np.inf) for c in cols])  # inf: none
    # limits mostly hold steady over runs of points: a text per run (one per distinct
    # combination), repeated over the run
    starts = np.flatnonzero(np.concatenate([[True], (grid[1:] != grid[:-1]).any(axis=1)]))
    memo: dict[tuple, int] = {}
    texts: list[str] = []
    run_codes = []
    for key in map(tuple, grid[starts].tolist()):
        code = memo.get(key)
        if code is None:
            lo, c, hi = key
            parts = []
            if lo != math.inf:
                parts.append(f"LCL {fmt(lo)}")
            if c != math.inf:
                parts.append(f"CL {fmt(c)}")
            if hi != math.inf:
                parts.append(f"UCL {fmt(hi)}")
            code = memo[key] = len(texts)
            texts.append(", ".join(parts))
        run_codes.append(code)
    lengths = np.diff(np.concatenate([starts, [len(grid)]]))
    return _Coded(np.repeat(np.asarray(run_codes, dtype=np.int64), lengths), texts)


def _when(x: str) -> str:
    """A point's time as a reader writes it: '2026-02-02 14:53' for '2026-02-02T14:53:00'."""
    day, sep, clock = x.partition("T")
    if not sep:
        return x
    return f"{day} {clock[:5] if clock.endswith(':00') and len(clock) == 8 else clock}"


def _fitted_sentence(
    ctx: SeriesContext, fitted: np.ndarray, aside: np.ndarray | None = None
) -> str:
    """The period(s) the limits come from; with ``aside``, the points set aside are counted
    in the period they lie in ("(50 points, 3 set aside)"): that period is named whole."""
    if aside is not None:
        fitted = np.asarray(fitted, dtype=bool) | aside
    mask = [bool(b) for b in np.asarray(fitted, dtype=bool)]
    n = len(mask)

    def but(a: int, b: int) -> str:
        k = 0 if aside is None else int(np.count_nonzero(aside[a : b + 1]))
        return f", {_aside_words(k)}" if k else ""

    if n and all(mask):
        span = f"{_when(ctx.x[0])} to {_when(ctx.x[-1])}"
        return f"limits from all {n} points ({span}{but(0, n - 1)})"
    if not any(mask):
        return "limits given in advance, not computed from these points"
    parts = []
    for a, b, on in stage_runs(mask):
        if not on:
            continue
        name = ctx.stage[a]
        span = f"{_when(ctx.x[a])} to {_when(ctx.x[b])}" if b > a else _when(ctx.x[a])
        count = plural(b - a + 1, "point") + but(a, b)
        parts.append(f"{name}, {span} ({count})" if name else f"{span} ({count})")
    return "limits from " + "; ".join(parts)


def _aside_words(k: int) -> str:
    """The subtitle's words for the points set aside: '3 set aside'."""
    return f"{k} set aside"


def _signals_sentence(signals: Sequence[Signal], max_kinds: int | None = None) -> str:
    """'3 signals: beyond the limits (2); 8 in a row ...', listing at most ``max_kinds`` kinds."""
    if not signals:
        return "no signals"
    counts: dict[str, int] = {}
    for s in signals:
        counts[s.description] = counts.get(s.description, 0) + 1
    parts = [f"{d} ({c})" if c > 1 else d for d, c in counts.items()]
    if max_kinds is not None and len(parts) > max_kinds:
        rest = len(parts) - max_kinds
        parts = parts[:max_kinds] + [f"and {plural(rest, 'more kind')} (see the data table)"]
    return f"{plural(len(signals), 'signal')}: " + "; ".join(parts)


def _check_len(name: str, arr, n: int) -> None:
    if len(arr) != n:
        raise ValueError(f"{name} has {len(arr)} entries, the series has {n} points")


# ------------------------------------------------------------------------------------------------
# Public builders
# ------------------------------------------------------------------------------------------------


def run_chart(
    ctx: SeriesContext, values, analysis: RunChartAnalysis, aside: np.ndarray | None = None
) -> ChartSpec:
    """Values over time with their median; points in a run/shift/trend signal marked by shape.

    ``aside``: per point, set aside (a known cause found and removed): drawn in a mark of
    their own, left out of the median (``analysis`` was computed so)."""
    vals = list(values)
    n = len(ctx.x)
    _check_len("values", vals, n)
    if aside is not None:
        _check_len("aside", aside, n)
        aside = np.asarray(aside, dtype=bool) if np.any(aside) else None
    xa = x_axis(ctx)
    has = aside is not None
    tpl = cached_template(
        ("run-chart", ctx.x_is_time) + (("aside",) if has else ()),
        lambda: _run_template(ctx.x_is_time, aside=has),
    )

    # Mark points of pattern signals; a signal spanning every point (too few / too many
    # crossings) is a statement about the whole series and is named in the subtitle only.
    local = [s for s in analysis.signals if 0 < len(s.indices) < n]
    marked = _signal_text(local, n)
    keys = _Keys()
    points = _point_rows(xa, ctx, _series_rows(ctx, vals, marked, keys, aside=aside))
    median = num(analysis.median)
    median_text = "median " + (
        proportion_text(median, ctx.unit, fmt)
        if is_proportion_unit(ctx.unit)
        else with_unit(fmt(median), ctx.unit)
    )
    centre = (
        [{"y": disp(median), "x": xa.at(n - 1), "text": median_text}]
        if median is not None and n
        else []
    )
    datasets = {
        "points": points,
        "point_info": keys.point_rows(),
        "centre": centre,
        "bands": _bands(xa, ctx.stage),
        "events": _events(xa, ctx.events),
    }
    datasets["headroom"] = (
        headroom_rows(
            datasets["events"], style.HEIGHT_MAIN, np.append(np.asarray(vals, dtype=float), median)
        )
        if datasets["events"] and median is not None
        else []
    )
    values_map = {"y_title": axis_title(_measure_title(ctx, "individuals"), style.HEIGHT_MAIN)}
    values_map.update(_x_values(ctx, xa))  # copied: the remembered dict stays as it is
    values_map.update(band_values(datasets["bands"]))

    rules = RunRules(analysis.rule_set).label
    facts = [median_text, f"longest run {analysis.longest_run}"]
    if analysis.longest_run_limit is not None:
        facts[-1] += f" (signal above {analysis.longest_run_limit})"
    if analysis.crossings_limit is not None:
        facts.append(f"{analysis.crossings} crossings (signal below {analysis.crossings_limit})")
    elif analysis.runs_limits is not None:
        lo, hi = analysis.runs_limits
        facts.append(f"{analysis.runs} runs (expected {lo + 1} to {hi - 1})")
    # The subtitle names the values the chart is judged by; what signals is said once, in the
    # sentences of its card (site.cards), and the notes go with the card's method.
    subtitle = [
        *([ctx.points_note] if ctx.points_note else []),
        f"{rules}: " + ", ".join(facts),
    ]
    if has:
        subtitle[-1] += f"; {_aside_words(int(aside.sum()))}"
    spec = make_spec(
        tpl,
        values_map,
        datasets,
        f"{ctx.metric_name} \u2014 run chart",
        subtitle,
        exact=_exact(ctx, datasets),
    )

    x_col = "date" if ctx.x_is_time else "point"
    has_stage = any(ctx.stage)
    all_marked = _signal_text(analysis.signals, n)
    columns = (x_col,) + (("phase",) if has_stage else ()) + ("value", "median", "signals")
    cells = {
        x_col: ctx.x,
        "phase": ctx.stage,
        "value": num_list(vals),
        "median": [median] * n,
        "signals": _signal_column(n, all_marked),
    }
    if has:
        columns += ("set aside",)
        cells["set aside"] = _yes_no(aside)
    table = ColumnTable(columns, cells)
    summary = (
        f"Run chart of {ctx.metric_name}: {plural(n, 'point')}, {median_text}; "
        f"{_signals_sentence(analysis.signals)}."
    )
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)


@by_identity(4)
def _x_values(ctx: SeriesContext, xa: XAxis) -> dict:
    if ctx.x_is_time:
        return {"x_when": f"utcFormat(datum.x, '{_x_format(ctx)}')"}
    return xa.axis_values()


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


def _secondary_fitted(chart: ControlChart, offset: int) -> np.ndarray:
    sec = chart.secondary
    if len(sec.fitted) == len(sec.values):
        return np.asarray(sec.fitted, dtype=bool)
    return np.asarray(chart.fitted, dtype=bool)[offset:]


def _secondary_aside(chart: ControlChart, offset: int) -> np.ndarray | None:
    """The companion chart's set-aside mask, aligned with its values (None when none)."""
    sec = chart.secondary
    if sec.set_aside is not None and len(sec.set_aside) == len(sec.values):
        return np.asarray(sec.set_aside, dtype=bool)
    if chart.set_aside is None:
        return None
    return np.asarray(chart.set_aside, dtype=bool)[offset:]


def _secondary_stage(chart: ControlChart, offset: int) -> np.ndarray:
    sec = chart.secondary
    if len(sec.stage) == len(sec.values):
        return np.asarray(sec.stage, dtype=int)
    return np.asarray(chart.stage, dtype=int)[offset:]


def _pairs(a: np.ndarray, b: np.ndarray, b_size: int) -> tuple[np.ndarray, list[tuple]]:
    """Per point a code for its pair of codes (a, b), where every b is below ``b_size``, and
    the distinct pairs in code order: so that texts made from two coded texts are made once per
    distinct pair, not once per point."""
    distinct, where = np.unique(a * b_size + b, return_inverse=True)
    return where.ravel().astype(np.int64), [divmod(j, b_size) for j in distinct.tolist()]


def _join_info(info: _Coded, own: _Coded, after: np.ndarray) -> _Coded:
    """The limits text per point, with the after phase's own limits added where ``after``:
    "LCL 1, CL 2, UCL 3; after: LCL ..."."""
    code, pairs = _pairs(info.codes, np.where(after, own.codes + 1, 0), len(own.texts) + 1)
    return _Coded(
        code,
        [
            f"{info.texts[a]}; after: {own.texts[b - 1]}"
            if b and own.texts[b - 1]
            else info.texts[a]
            for a, b in pairs
        ],
    )


def _staged_text(marked: _Coded, carried: np.ndarray, own: _Coded) -> _Coded:
    """The staged chart's signal texts per point: the signals against the baseline's limits
    (named so where the point's limits are carried forward) and those on the after phase's own
    limits."""
    a = marked.codes * 2 + np.asarray(carried, dtype=np.int64)
    code, pairs = _pairs(a, own.codes, len(own.texts) + 1)
    texts = []
    for ac, b in pairs:
        m, car = divmod(ac, 2)
        parts = []
        if m:
            parts.append(("against the baseline's limits: " if car else "") + marked.texts[m - 1])
        if b:
            parts.append("on its own limits: " + own.texts[b - 1])
        texts.append("; ".join(parts))
    if texts and texts[0] == "":  # code 0 is "in no signal"
        return _Coded(code, texts[1:])
    return _Coded(code + 1, texts)


def _staged_mark_values(main_marks, sec_marks) -> dict:
    """The staged chart's legend: the ordinary point and every mark drawn on either chart."""
    codes = main_marks if sec_marks is None else np.concatenate([main_marks, sec_marks])
    present = set(np.unique(codes).tolist())
    changes = {_MARK_TEXTS[m // 2] for m in present if m // 2}
    own = any(m % 2 for m in present)
    rows = [
        r
        for r in _STAGED_MARKS
        if r[0] == MARK_ORDINARY or r[0] in changes or (own and r[0] == MARK_OWN_SIGNAL)
    ]
    return {
        "mark_domain": [r[0] for r in rows],
        "mark_shapes": [r[1] for r in rows],
        "mark_colours": [r[2] for r in rows],
    }


def _control_parts(
    ctx: SeriesContext,
    chart: ControlChart,
    signals: Sequence[Signal],
    offset: int,
    own: ControlChart | None = None,
    staged: bool = False,
    evidence=None,
    own_signals: Sequence[Signal] = (),
):
    """Datasets, template values, per-point signal texts of a control chart (plain or staged).

    Staged: ``evidence`` is the pair of :class:`stats.evidence.PointEvidence` of the chart and
    its companion; ``own_signals`` the after phase's signals on its own limits."""
    n = len(ctx.x)
    xa = x_axis(ctx)
    sec = chart.secondary
    marked, sec_marked = _marked_pair(signals, n, offset, sec is not None)
    main_marks = sec_marks = None
    if staged:
        ev_main, ev_sec = evidence
        own_marked, own_sec_marked = _marked_pair(tuple(own_signals), n, offset, sec is not None)
        marked = _staged_text(marked, ev_main.carried, own_marked)
        main_marks = _mark_codes(ev_main)
        if sec is not None and ev_sec is not None:
            pad = np.zeros(offset, dtype=bool)
            sec_marked = _staged_text(
                sec_marked, np.concatenate([pad, ev_sec.carried]), own_sec_marked
            )
            sec_marks = _mark_codes(ev_sec)
    keys = _Keys(staged)
    parts = _Parts()

    def info_of(c: ControlChart, o: ControlChart | None, stage_arr) -> _Coded:
        info = _limits_info(c)
        if o is None:
            return info
        return _join_info(info, _limits_info(o), np.asarray(stage_arr) == 1)

    def carried_mask(c: ControlChart, stage_arr, fitted) -> np.ndarray | None:
        if not staged:
            return None
        return (np.asarray(stage_arr, dtype=int) != 0) & ~np.asarray(fitted, dtype=bool)

    set_name = "baseline" if staged else None
    own_stage = np.asarray(own.stage, dtype=int) if own is not None else None
    main = _series_rows(
        ctx,
        chart.values,
        marked,
        keys,
        info=info_of(chart, own, own_stage),
        fitted=chart.fitted,
        marks=main_marks,
        aside=chart.set_aside,
    )
    limits, labels = _limit_rows(
        xa,
        chart,
        0,
        parts,
        carried=carried_mask(chart, chart.stage, chart.fitted),
        set_name=set_name,
    )
    datasets = {"limits": limits, "labels": labels}
    if staged:
        datasets["own_labels"] = []
        if own is not None:
            o_rows, o_labels = _own_rows(xa, own, own_stage, 0, parts)
            datasets["limits"] = limits + o_rows
            datasets["own_labels"] = o_labels
    second = None
    if sec is not None:
        sfit = _secondary_fitted(chart, offset)
        sstage = _secondary_stage(chart, offset)
        own_sec = own.secondary if own is not None else None
        if own_sec is not None and len(own_sec.values) != len(sec.values):
            own_sec = None
        osstage = _secondary_stage(own, offset) if own_sec is not None else None
        second = _series_rows(
            ctx,
            sec.values,
            sec_marked,
            keys,
            offset=offset,
            info=info_of(sec, own_sec, osstage),
            fitted=sfit,
            marks=sec_marks,
            aside=_secondary_aside(chart, offset),
        )
        s_limits, s_labels = _limit_rows(
            xa, sec, offset, parts, carried=carried_mask(sec, sstage, sfit), set_name=set_name
        )
        datasets["secondary_limits"] = s_limits
        datasets["secondary_labels"] = s_labels
        if staged:
            datasets["secondary_own_labels"] = []
            if own_sec is not None:
                o_rows, o_labels = _own_rows(xa, own_sec, osstage, offset, parts)
                datasets["secondary_limits"] = s_limits + o_rows
                datasets["secondary_own_labels"] = o_labels
    datasets["points"] = _point_rows(xa, ctx, main, second)
    datasets["point_info"] = keys.point_rows()
    datasets["limit_info"] = keys.limit_rows()
    datasets["limit_parts"] = parts.rows
    datasets["bands"] = _bands(xa, ctx.stage)
    datasets["events"] = _events(xa, ctx.events)
    datasets["headroom"] = []
    if datasets["events"]:
        drawn = [chart.values, chart.centre, chart.upper, chart.lower]
        if own is not None:
            drawn += [own.centre, own.upper, own.lower]
        datasets["headroom"] = headroom_rows(
            datasets["events"],
            style.HEIGHT_MAIN,
            np.concatenate([np.asarray(a, dtype=float).ravel() for a in drawn]),
        )

    values_map = {"y_title": axis_title(_measure_title(ctx, chart.kind), style.HEIGHT_MAIN)}
    if sec is not None:
        values_map["y2_title"] = axis_title(
            titled(sec.label, ctx.unit if sec.kind in _UNIT_KINDS else ""), style.HEIGHT_SECONDARY
        )
    values_map.update(_x_values(ctx, xa))  # copied: the remembered dict stays as it is
    values_map.update(band_values(datasets["bands"]))
    if staged:
        values_map.update(_staged_mark_values(main_marks, sec_marks))
    return datasets, values_map, marked, sec_marked, labels


def _own_rows(xa: XAxis, own: ControlChart, stage_arr, offset: int, parts: _Parts):
    """The after phase's own limits (stage 1 only), solid, labelled right of the phase's last
    point: in the margin beside the plot when the after phase ends the chart, clear of the
    phase's name, the events and the points at its start."""
    drawn = np.asarray(stage_arr, dtype=int) == 1
    rows, _ = _limit_rows(
        xa, own, offset, parts, drawn=drawn, set_name="after", label_prefix="after ", solid=True
    )
    labels = []
    last = int(np.flatnonzero(drawn)[-1]) if drawn.any() else None
    if last is not None:
        arrays = {"centre line": own.centre, "UCL": own.upper, "LCL": own.lower}
        for kind in _LIMIT_KINDS:
            y = disp(arrays[kind][last])
            if y is not None:
                labels.append(
                    {
                        "x": xa.at(last + offset),
                        "y": y,
                        "text": f"after {_LIMIT_SHORT[kind]} {fmt(y)}",
                        "kind": kind,
                    }
                )
    return rows, labels


_NO_YES = np.array(["no", "yes"], dtype=object)

# The project page's control chart and the history page's staged one have most table columns in
# common: they are made once (the same list objects), so the CSV and HTML cells made from them
# are too (site.cards).


@by_identity(16)
def _signal_column(n: int, main: _Coded, second: _Coded | None = None) -> list[str]:
    """The table's "signals" cell per point: the texts of the points in signals of the main
    chart, then of the companion, joined."""
    other = second if second is not None else _Coded(np.zeros(n, dtype=np.int64), [])
    code, pairs = _pairs(main.codes, other.codes, len(other.texts) + 1)
    texts = ["; ".join([m.texts[c - 1] for m, c in ((main, a), (other, b)) if c]) for a, b in pairs]
    return np.array(texts, dtype=object)[code].tolist()


@by_identity(16)
def _table_numbers(values, pad: int = 0) -> list[float | None]:
    """:func:`num_list` of a chart's array, after ``pad`` empty cells."""
    return [None] * pad + num_list(values) if pad else num_list(values)


@by_identity(4)
def _yes_no(fitted) -> list[str]:
    return _NO_YES[np.asarray(fitted, dtype=bool).astype(np.intp)].tolist()


def _control_table(
    ctx,
    chart,
    offset,
    marked,
    sec_marked,
    own: ControlChart | None = None,
    marks: list[str] | None = None,
):
    n = len(ctx.x)
    sec = chart.secondary
    x_col = "date" if ctx.x_is_time else "point"
    has_stage = any(ctx.stage)
    abbr = _SECONDARY_SHORT.get(sec.kind, sec.label) if sec is not None else ""
    columns: list[str] = [x_col]
    if has_stage:
        columns.append("phase")
    if chart.sizes is not None:
        columns.append("subgroup size")
    columns += ["value", "centre line", "LCL", "UCL", "used for limits"]
    cols: dict[str, list] = {}
    if chart.sizes is not None:
        cols["subgroup size"] = _table_numbers(chart.sizes)
    cols["value"] = _table_numbers(chart.values)
    cols["centre line"] = _table_numbers(chart.centre)
    cols["LCL"] = _table_numbers(chart.lower)
    cols["UCL"] = _table_numbers(chart.upper)
    if own is not None:
        after = np.asarray(own.stage, dtype=int) == 1
        for name, arr in (("centre line", own.centre), ("LCL", own.lower), ("UCL", own.upper)):
            cols[f"after {name}"] = num_list(np.where(after, arr, np.nan))
            columns.append(f"after {name}")
    columns.append("signals")
    if sec is not None:
        pad = [None] * offset
        columns += [abbr, f"{abbr} centre line", f"{abbr} LCL", f"{abbr} UCL"]
        cols[abbr] = _table_numbers(sec.values, offset)
        cols[f"{abbr} centre line"] = _table_numbers(sec.centre, offset)
        cols[f"{abbr} LCL"] = _table_numbers(sec.lower, offset)
        cols[f"{abbr} UCL"] = _table_numbers(sec.upper, offset)
        own_sec = own.secondary if own is not None else None
        if own_sec is not None and len(own_sec.values) == len(sec.values):
            after = _secondary_stage(own, offset) == 1
            for name, arr in (
                ("centre line", own_sec.centre),
                ("LCL", own_sec.lower),
                ("UCL", own_sec.upper),
            ):
                cols[f"after {abbr} {name}"] = pad + num_list(np.where(after, arr, np.nan))
                columns.append(f"after {abbr} {name}")
    cols[x_col] = ctx.x
    if has_stage:
        cols["phase"] = ctx.stage
    cols["used for limits"] = _yes_no(chart.fitted)
    cols["signals"] = _signal_column(n, marked, sec_marked)
    if marks is not None:
        columns.insert(columns.index("signals") + 1, "mark")
        cols["mark"] = marks
    return ColumnTable(columns, cols), tuple(columns)


def _kind_name(chart: ControlChart) -> str:
    """'Xbar-R chart', 'Laney p′ chart': the vocabulary's name of the chart's kind."""
    sec = chart.secondary.kind if chart.secondary is not None else None
    try:
        return control_chart_kind(chart.kind, sec).label
    except ValueError:  # a kind the vocabulary does not hold: the chart's own label
        return chart_name(chart.label)


def _measure_title(ctx: SeriesContext, kind: str) -> str:
    """A series chart's y-axis title: the measure its points are, with their unit (never the
    chart's name). A p chart plots the proportion of the items checked (``ctx.unit`` says so),
    an np chart the number of them, an X-bar chart the subgroup means."""
    if kind == "xbar":
        return titled(f"{ctx.metric_name}, subgroup mean", ctx.unit)
    if kind == "np":
        return titled(ctx.metric_name, items_of(ctx.unit))
    if kind in ("p", "laney-p") or is_proportion_unit(ctx.unit):
        # the metric's name names the items already ("Frames with weld porosity"): the axis
        # says "proportion" (never a count's unit on a share); sentences say "7% of frames"
        return titled(ctx.metric_name, proportion_unit(""))
    return titled(ctx.metric_name, ctx.unit)


def control_chart(ctx: SeriesContext, chart: ControlChart, signals: Sequence[Signal]) -> ChartSpec:
    """The control chart with centre line and limits per point; its mR/R/S chart beneath."""
    n = len(ctx.x)
    offset = _check_chart(ctx, chart)
    sec = chart.secondary
    is_time = ctx.x_is_time
    has_sec = sec is not None
    aside = chart.set_aside if chart.set_aside is not None and np.any(chart.set_aside) else None
    has = aside is not None
    tpl = cached_template(
        ("control-chart", is_time, has_sec) + (("aside",) if has else ()),
        lambda: _control_template(is_time, has_sec, aside=has),
    )
    datasets, values_map, marked, sec_marked, labels = _control_parts(ctx, chart, signals, offset)

    # the chart named once, by the vocabulary's name of its kind
    name = _kind_name(chart)
    title = f"{ctx.metric_name} \u2014 {name}"
    # the period and values the limits come from; the signals are the card's sentences
    # the period the limits come from, whole: the points set aside inside it said apart
    said = _fitted_sentence(ctx, chart.fitted, aside)
    subtitle = [
        *([ctx.points_note] if ctx.points_note else []),
        said + f"; sigma from {chart.sigma_method}" if chart.sigma_method else said,
    ]
    spec = make_spec(tpl, values_map, datasets, title, subtitle, exact=_exact(ctx, datasets))
    table, columns = _control_table(ctx, chart, offset, marked, sec_marked)
    if has:
        columns = columns + ("set aside",)
        table = ColumnTable(columns, {**table.cols, "set aside": _yes_no(aside)})

    last = {lab["kind"]: lab["text"] for lab in labels}
    lim = ", ".join(last[k] for k in ("LCL", "centre line", "UCL") if k in last)
    summary = (
        f"{name} of {ctx.metric_name}: {plural(n, 'point')}"
        + (f", {lim} (at the last point)" if lim else "")
        + f"; {_signals_sentence(signals)}."
    )
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)


def staged_control_chart(
    ctx: SeriesContext,
    carried: ControlChart,
    own: ControlChart | None,
    signals: Sequence[Signal],
    own_signals: Sequence[Signal] = (),
    evidence: tuple[PointEvidence, PointEvidence | None] | None = None,
) -> ChartSpec:
    """A control chart by phase: the baseline limits carried forward over the later phases
    (dashed, labelled "baseline UCL ..."), and, when ``own`` is given, the after phase's own
    centre line and limits drawn solid over the after phase only ("after UCL ...").

    ``signals`` are found on ``carried``; ``own_signals`` on the after phase's own limits.
    ``evidence`` (:func:`stats.evidence.point_evidence` of the two) says per point what its
    mark is: a point outside the baseline in a signal against the baseline's limits is evidence
    of a change (better / worse); a point in a signal on its own period's limits gets the signal
    diamond beneath it. Without ``evidence`` no direction is judged. The mR/R/S chart beneath
    is drawn the same way."""
    n = len(ctx.x)
    offset = _check_chart(ctx, carried, "carried")
    if own is not None:
        _check_len("own.stage", own.stage, n)
        own_offset = _check_chart(ctx, own, "own")
        if (own.secondary is None) != (carried.secondary is None) or (
            own.secondary is not None and own_offset != offset
        ):
            raise ValueError(
                "the own-limits chart must have the same companion chart as the carried one"
            )
    if evidence is None:
        evidence = point_evidence(carried, signals, own_signals, better="")
    sec = carried.secondary
    is_time = ctx.x_is_time
    has_sec = sec is not None
    aside = (
        carried.set_aside if carried.set_aside is not None and np.any(carried.set_aside) else None
    )
    has = aside is not None
    tpl = cached_template(
        ("staged-control-chart", is_time, has_sec) + (("aside",) if has else ()),
        lambda: _control_template(is_time, has_sec, refs="staged", aside=has),
    )
    datasets, values_map, marked, sec_marked, labels = _control_parts(
        ctx,
        carried,
        signals,
        offset,
        own=own,
        staged=True,
        evidence=evidence,
        own_signals=own_signals,
    )
    if has:  # the points set aside: a mark of their own, named in the legend
        values_map["mark_domain"] = [*values_map["mark_domain"], MARK_ASIDE]
        values_map["mark_shapes"] = [*values_map["mark_shapes"], style.SHAPE_ASIDE]
        values_map["mark_colours"] = [*values_map["mark_colours"], style.ASIDE]

    name = _kind_name(carried)
    title = f"{ctx.metric_name} \u2014 {name} by phase"
    after_idx = np.flatnonzero(np.asarray(own.stage, dtype=int) == 1) if own is not None else []
    subtitle = [
        *([ctx.points_note] if ctx.points_note else []),
        _fitted_sentence(ctx, carried.fitted, carried.set_aside) + ", dashed where carried forward",
    ]
    if len(after_idx):
        a, b = int(after_idx[0]), int(after_idx[-1])
        subtitle.append(
            f"after phase's own limits (solid) from {_when(ctx.x[a])} to {_when(ctx.x[b])} "
            f"({plural(len(after_idx), 'point')})"
        )
    # the periods and limits drawn; what they show is said in the card's sentences
    change = _change_sentence(evidence[0], carried)
    unstable = _own_signals_sentence(signals, own_signals, evidence)
    spec = make_spec(tpl, values_map, datasets, title, subtitle, exact=_exact(ctx, datasets))
    table, columns = _control_table(
        ctx, carried, offset, marked, sec_marked, own=own, marks=_mark_column(evidence, offset)
    )

    last = {lab["kind"]: lab["text"] for lab in labels}
    lim = ", ".join(last[k] for k in ("LCL", "centre line", "UCL") if k in last)
    own_last = {lab["kind"]: lab["text"] for lab in datasets.get("own_labels", [])}
    own_lim = ", ".join(own_last[k] for k in ("LCL", "centre line", "UCL") if k in own_last)
    summary = (
        f"{name} of {ctx.metric_name} by phase: {plural(n, 'point')}"
        + (f", {lim}" if lim else "")
        + (f"; {own_lim}" if own_lim else "")
        + f"; {change}; {unstable}."
    )
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)


def _change_sentence(evidence: PointEvidence, chart: ControlChart) -> str:
    """The subtitle's account of the change marks: 'against the baseline's limits 12 of 14
    after points signal a change: 12 better'."""
    c = change_counts(evidence, chart.stage, chart.values)
    k = sum(c[d] for d in _CHANGES)
    if not c["points"]:
        return "no after points"
    if not k:
        return f"against the baseline's limits no after point signals a change (of {c['points']})"
    parts = [f"{c[d]} {d}" for d in _CHANGES if c[d]]
    return (
        f"against the baseline's limits {k} of {plural(c['points'], 'after point')} "
        f"signal a change: " + ", ".join(parts)
    )


def _own_signals_sentence(signals, own_signals, evidence) -> str:
    """The subtitle's account of the diamonds: signals judged on their own period's limits."""
    ev_main, ev_sec = evidence
    own_judged = []
    for s in signals:
        ev = ev_sec if s.chart == "secondary" else ev_main
        if ev is not None and s.indices and not ev.carried[s.indices[0]]:
            own_judged.append(s)
    own_judged += list(own_signals)
    return "on their own period's limits " + _signals_sentence(own_judged, max_kinds=2)


def _mark_column(evidence, offset: int) -> list[str]:
    """The table's "mark" cell per point: the change mark of the main chart (and of the
    dispersion chart, named so), and the signal diamond, in the legend's words; each distinct
    combination written once."""
    ev_main, ev_sec = evidence
    n = len(ev_main.change)
    code = _mark_codes(ev_main)  # 2 * change + own
    sec_code = np.zeros(n, dtype=np.int64)
    if ev_sec is not None:
        sec_code[offset : offset + len(ev_sec.change)] = _mark_codes(ev_sec)[: n - offset]
    distinct, which = np.unique(code * _MARK_CODES + sec_code, return_inverse=True)
    texts = []
    for c in distinct.tolist():
        (m_change, m_own), (s_change, s_own) = (divmod(x, 2) for x in divmod(c, _MARK_CODES))
        words = []
        if m_change:
            words.append(_MARK_TEXTS[m_change])
        if s_change:
            words.append(_MARK_TEXTS[s_change] + " (dispersion chart)")
        if m_own:
            words.append(MARK_OWN_SIGNAL)
        if s_own:
            words.append(MARK_OWN_SIGNAL + " (dispersion chart)")
        texts.append("; ".join(words))
    return np.array(texts, dtype=object)[which.ravel()].tolist()
