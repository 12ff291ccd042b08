"""Each appraiser's range chart of a measurement study."""

from __future__ import annotations

from collections.abc import Sequence

from ...stats.results_studies import AppraiserRanges
from .. import style, vl
from ..base.numbers import fmt, plural, titled
from ..base.templates import cached_template, finish_template, make_spec, slot
from ..base.types import ChartSpec
from ..categorical.categories import _KEY_LABEL, bar_keys
from .naming import _HEIGHT_STUDY, _legend_keyed, natural_order


def _ranges_template() -> dict:
    x = vl.field(
        "key:N",
        title=None,
        sort=None,
        axis={"labelExpr": _KEY_LABEL, "labelAngle": -60, "labelLimit": 60, "labelFontSize": 9},
    )
    y_title = slot("y_title")
    colour = vl.field(
        "appraiser_key:N",
        title=None,
        legend=_legend_keyed("appraiser"),
        scale={"range": list(style.SERIES)},
    )
    detail = vl.field("appraiser_key:N")
    tooltip = [
        vl.tip("appraiser:N", "appraiser"),
        vl.tip("part:N", "part"),
        vl.tip("range:Q", "range", ",.4~g"),
        vl.tip("centre:Q", "average range", ",.4~g"),
        vl.tip("upper:Q", "upper limit", ",.4~g"),
    ]
    upper = vl.view(
        "ranges",
        vl.mark("line", color=style.LIMIT, strokeDash=style.DASH_LIMIT, strokeWidth=1),
        {"x": x, "y": vl.field("upper:Q"), "detail": detail},
    )
    centre = vl.view(
        "ranges",
        vl.mark("line", color=style.CENTRE, strokeWidth=1),
        {"x": x, "y": vl.field("centre:Q"), "detail": detail},
    )
    line = vl.view(
        "ranges",
        vl.mark("line", point={"size": style.SIZE_POINT}),
        {
            "x": x,
            "y": vl.field("range:Q", title=y_title, scale={"zero": True}),
            "color": colour,
            "detail": detail,
            "tooltip": tooltip,
        },
    )
    # drawn on every range, seen on those above the limit: a layer filtered to none of them
    # would leave Vega an empty domain to warn about
    beyond = vl.view(
        "ranges",
        vl.mark(
            "point",
            shape=style.SHAPE_SIGNAL,
            size=style.SIZE_SIGNAL,
            filled=True,
            color=style.SIGNAL,
        ),
        {
            "x": x,
            "y": vl.field("range:Q"),
            "tooltip": tooltip,
            "opacity": {"condition": {"test": "datum.beyond", "value": 1}, "value": 0},
        },
    )
    chart = vl.layer(upper, centre, line, beyond, width="container", height=_HEIGHT_STUDY)
    return finish_template(chart, "study-ranges")


def ranges_chart(
    ranges: Sequence[AppraiserRanges], *, trials: int, unit: str = "", measure: str = "reading"
) -> ChartSpec:
    """One range chart per appraiser, side by side along one axis: each part's range over the
    appraiser's trials, the appraiser's average range (solid) and upper limit D4·R̄ (dashed);
    a range above its limit is marked. ``measure``: what was measured (the axis' title)."""
    tpl = cached_template(("study-ranges",), _ranges_template)
    appr_keys = bar_keys([r.appraiser for r in ranges])
    n_parts = len(ranges[0].parts) if ranges else 0
    order = [ranges[0].parts.index(p) for p in natural_order(ranges[0].parts)] if ranges else []
    width = len(str(len(ranges) * n_parts))
    rows, table = [], []
    k = 0
    for ak, r in zip(appr_keys, ranges, strict=True):
        for i in order:
            part, v = r.parts[i], r.ranges[i]
            k += 1
            out = i in r.beyond
            rows.append(
                {
                    "key": f"{k:0{width}d} {part}",
                    "part": part,
                    "appraiser": r.appraiser,
                    "appraiser_key": ak,
                    "range": v,
                    "centre": r.centre,
                    "upper": r.upper,
                    "beyond": out,
                }
            )
            table.append(
                {
                    "appraiser": r.appraiser,
                    "part": part,
                    "range": v,
                    "average range": r.centre,
                    "upper limit": r.upper,
                    "above the limit": "yes" if out else "",
                }
            )
    limits = "; ".join(f"{r.appraiser} {fmt(r.centre)} and {fmt(r.upper)}" for r in ranges)
    sub = [
        f"each part's range over {plural(trials, 'trial')}, by appraiser; average range and "
        f"upper limit (D4 × average range): {limits}"
    ]
    y_title = titled(f"Range of the {measure}s", unit)
    spec = make_spec(tpl, {"y_title": y_title}, {"ranges": rows}, "Ranges by appraiser", sub)
    n_beyond = sum(len(r.beyond) for r in ranges)
    summary = (
        f"Range chart of {plural(len(ranges), 'appraiser')} over "
        f"{plural(n_parts, 'part')}: {plural(n_beyond, 'range')} above its upper limit."
    )
    return ChartSpec(
        spec=spec, table=table, columns=tuple(table[0]) if table else (), summary=summary
    )
