"""Events drawn on time-based series charts as dotted rules labelled near the top, and the
invisible point that keeps room for their labels above the plotted values.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import date

import numpy as np

from .. import style, vl
from .numbers import disp
from .times import event_text, event_time, utc_text
from .xaxis import XAxis, x_encoding

# Event labels step down one line each over this many lines near the top of the plot.
EVENT_LINES = 3


def event_rows(xa: XAxis, events: Sequence[tuple[str | date, str]]) -> list[dict]:
    """Events within the plotted time range (outside it they would stretch the axis), in time
    order. Successive events step down one line each (``EVENT_LINES`` lines), so that labels of
    events close in time do not print over each other.

    A label reads rightwards from its rule in the left half of the chart and leftwards in the
    right half (``align``, the end of the text that sits at the rule), so that a recent event
    keeps room for its words. It may run as far as ``edge``: towards the neighbouring label on
    its line, the whole gap when that label faces away and half of it when it faces this one,
    or to the chart's end. Beyond that it is cut with an ellipsis, its whole text in the
    tooltip."""
    inside = sorted(
        (
            (event_time(when), event_text(when), str(label), str(when))
            for when, label in events
            if xa.in_range(when)
        ),
        key=lambda e: e[0],
    )
    if not inside:
        return []
    first, last = xa.time_at(0), xa.time_at(xa.n - 1)
    span = (last - first).total_seconds() or 1.0
    leftwards = [(t - first).total_seconds() / span > 0.5 for t, *_ in inside]
    rows = []
    for k, (t, x, label, when) in enumerate(inside):
        j = k - EVENT_LINES if leftwards[k] else k + EVENT_LINES  # the neighbour on this line
        if not 0 <= j < len(inside):
            edge = first if leftwards[k] else last
        elif leftwards[j] == leftwards[k]:
            edge = inside[j][0]  # it faces the same way: the whole gap
        else:
            edge = t + (inside[j][0] - t) / 2  # it faces this one: half the gap each
        rows.append(
            {
                "x": x,
                "label": label,
                "when": when,
                "y": 16 + 12 * (k % EVENT_LINES),
                "align": "right" if leftwards[k] else "left",
                "edge": utc_text(edge),
            }
        )
    return rows


def headroom_rows(events: list[dict], height: int, values) -> list[dict]:
    """An invisible point that lifts the top of the y scale just enough to keep the event labels
    (``event_rows``, in lines from the top of the plot) above every plotted value and line,
    instead of printed over them; none when no event is drawn. ``values``: every y drawn."""
    if not events:
        return []
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    if not v.size:
        return []
    lo, hi = float(v.min()), float(v.max())
    lines = min(EVENT_LINES, len(events))
    # of the plot's height: the label lines from 16 px down, 12 px each, and a margin for the
    # largest point marker
    share = (28 + 12 * lines) / height
    span = hi - lo if hi > lo else (abs(hi) or 1.0) * 0.1
    return [{"y": disp(hi + span * share / (1 - share))}]


def headroom_layer(y: dict) -> dict:
    """The layer drawing :func:`headroom_rows`: nothing visible, only the y scale's reach."""
    return vl.view("headroom", vl.mark("square", opacity=0, size=1), {"y": y})


def event_layers(is_time: bool, labelled: bool = True) -> list[dict]:
    """Events as dotted vertical rules labelled near the top (time-based series only); the
    chart beneath a control chart draws the rules without the labels, which the chart above
    already prints."""
    if not is_time:
        return []
    rule = vl.view(
        "events",
        vl.mark("rule", color=style.EVENT, strokeDash=list(style.DASH_EVENT), strokeWidth=1.5),
        {
            "x": x_encoding(is_time),
            "tooltip": [vl.tip("when:N", "date"), vl.tip("label:N", "event")],
        },
    )
    label = vl.view(
        "events",
        vl.mark(
            "text",
            baseline="top",
            color=style.EVENT,
            fontStyle="italic",
            # right of the rule or left of it, no further than its edge (event_rows), in pixels
            align={"expr": "datum.align"},
            dx={"expr": "datum.align == 'right' ? -3 : 3"},
            limit={
                "expr": "max(12, abs(scale('x', toDate(datum.edge)) - "
                "scale('x', toDate(datum.x))) - 8)"
            },
        ),
        {
            "x": x_encoding(is_time),
            "y": vl.field("y:Q", scale=None),
            "text": vl.field("label:N"),
            "tooltip": [vl.tip("when:N", "date"), vl.tip("label:N", "event")],
        },
    )
    return [rule, label] if labelled else [rule]
