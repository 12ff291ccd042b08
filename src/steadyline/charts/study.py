"""A measurement system study's displays: the components of variation, each appraiser's range
chart, and the measurements by part and by appraiser.

Part and appraiser names are data, never code (see charts.categorical): each stands on a key
of our own, its place zero-padded then the name, and axes and legends show the name by the
fixed label expression that cuts the key off.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

import numpy as np

from ..stats.results_studies import AppraiserRanges, GaugeStudy
from . import style, vl
from .base.numbers import fmt, plural, titled
from .base.templates import cached_template, finish_template, make_spec, slot
from .base.types import ChartSpec
from .categorical import _KEY_LABEL, bar_keys

# The bands of the published acceptance guide for the measurement system's share, in percent
# (AIAG, Measurement Systems Analysis, 4th ed.; from memory): drawn as two reference lines.
GUIDE_LINES = (10.0, 30.0)
# The sources drawn as bars, in the order they stand (the study's own words).
SOURCES = ("repeatability", "reproducibility", "measurement system", "part-to-part")
SHARE_STUDY = "share of the study variation"
SHARE_CONTRIBUTION = "share of the variance (contribution)"
SHARE_TOLERANCE = "share of the tolerance"
_HEIGHT_STUDY = 190
_DIGITS = re.compile(r"(\d+)")


def natural_order(names) -> list[str]:
    """Part names in the order a reader looks for them: digits compared as numbers ("S2"
    before "S10"), the rest as text; the file's order of measuring is no order to read by.

    >>> natural_order(["S10", "S2", "b", "A"])
    ['A', 'b', 'S2', 'S10']
    """

    def key(name: str):
        return [
            (0, int(t), "") if t.isdigit() else (1, 0, t.casefold())
            for t in _DIGITS.split(name)
            if t
        ]

    return sorted(dict.fromkeys(names), key=key)


def _legend_keyed(title: str | None) -> dict:
    return {"title": title, "labelExpr": _KEY_LABEL, "labelLimit": 260}


# ------------------------------------------------------------------------------------------------
# Components of variation
# ------------------------------------------------------------------------------------------------


def _components_template() -> dict:
    y = vl.field("source:N", title=None, sort=None, axis={"labelLimit": 130})
    colour = vl.field(
        "share_key:N",
        title=None,
        scale={"range": [style.DATA, style.HIST_BAR, style.CURVE]},
        legend=_legend_keyed(None),
    )
    x = vl.field(
        "percent:Q",
        title="percent",
        scale={"domainMin": 0, "zero": True},
    )
    bars = vl.view(
        "shares",
        vl.mark("bar", height={"band": 0.9}),
        {
            "y": y,
            "yOffset": vl.field("share_key:N"),
            "x": x,
            "color": colour,
            "tooltip": [
                vl.tip("source:N", "source"),
                vl.tip("share:N", "share"),
                vl.tip("percent:Q", "percent", ".1f"),
            ],
        },
    )
    labels = vl.view(
        "shares",
        vl.mark("text", align="left", dx=3, baseline="middle", fontSize=10),
        {"y": y, "yOffset": vl.field("share_key:N"), "x": x, "text": vl.field("text:N")},
    )
    guide = vl.view(
        "guide",
        vl.mark("rule", color=style.LIMIT, strokeDash=style.DASH_LIMIT),
        {"x": vl.field("percent:Q")},
    )
    guide_text = vl.view(
        "guide",
        vl.mark("text", color=style.INK, align="left", dx=3, baseline="top", y=0, fontSize=10),
        {"x": vl.field("percent:Q"), "text": vl.field("text:N")},
    )
    chart = vl.layer(guide, bars, labels, guide_text, width="container", height=_HEIGHT_STUDY)
    return finish_template(chart, "study-components")


def components_chart(study: GaugeStudy, *, values_text: str = "") -> ChartSpec:
    """Bars of each source's share of the study variation and of the variance (and of the
    tolerance, when both specification limits were given), with reference lines at the
    guide's 10% and 30%. ``values_text`` names what the study measured (the subtitle)."""
    tpl = cached_template(("study-components",), _components_template)
    shares = [(SHARE_STUDY, "study_percent"), (SHARE_CONTRIBUTION, "contribution_percent")]
    if study.component("measurement system").tolerance_percent is not None:
        shares.append((SHARE_TOLERANCE, "tolerance_percent"))
    keys = bar_keys([name for name, _ in shares])
    rows = []
    for source in SOURCES:
        c = study.component(source)
        for key, (name, attr) in zip(keys, shares, strict=True):
            v = getattr(c, attr)
            rows.append(
                {
                    "source": source,
                    "share": name,
                    "share_key": key,
                    "percent": v,
                    "text": f"{v:.1f}%",
                }
            )
    guide = [{"percent": g, "text": f"{g:g}%"} for g in GUIDE_LINES]
    sub = [values_text] if values_text else []
    sub.append(
        f"dashed lines at {GUIDE_LINES[0]:g}% and {GUIDE_LINES[1]:g}%, the bands of the "
        "acceptance guide for the measurement system's share"
    )
    spec = make_spec(tpl, {}, {"shares": rows, "guide": guide}, "Components of variation", sub)
    table = []
    for c in study.components:
        row = {
            "source": c.source,
            "variance": c.variance,
            "standard deviation": c.sigma,
            SHARE_STUDY + " (%)": c.study_percent,
            SHARE_CONTRIBUTION + " (%)": c.contribution_percent,
        }
        if c.tolerance_percent is not None:
            row[SHARE_TOLERANCE + " (%)"] = c.tolerance_percent
        table.append(row)
    columns = tuple(table[0])
    ms = study.component("measurement system")
    summary = (
        f"Bars of the shares of repeatability, reproducibility, the measurement system "
        f"and the parts; the measurement system takes {ms.study_percent:.1f}% of the "
        f"study variation"
    )
    if ms.tolerance_percent is not None:
        summary += f" and {ms.tolerance_percent:.1f}% of the tolerance"
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary + ".")


# ------------------------------------------------------------------------------------------------
# Ranges by appraiser
# ------------------------------------------------------------------------------------------------


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


# ------------------------------------------------------------------------------------------------
# Measurements by part and by appraiser
# ------------------------------------------------------------------------------------------------


def _measurements_template() -> dict:
    # keys sort as the parts stand (zero-padded places): the default ascending order
    x = vl.field(
        "part_key:N",
        title="part",
        axis={"labelExpr": _KEY_LABEL, "labelAngle": -60, "labelLimit": 60},
    )
    colour = vl.field(
        "appraiser_key:N",
        title=None,
        legend=_legend_keyed("appraiser"),
        scale={"range": list(style.SERIES)},
    )
    y = vl.field("value:Q", title=slot("y_title"), scale={"zero": False})
    means = vl.view(
        "means",
        vl.mark("line", strokeWidth=1.2, opacity=0.8),
        {
            "x": x,
            "y": vl.field("mean:Q"),
            "color": colour,
            "tooltip": [
                vl.tip("appraiser:N", "appraiser"),
                vl.tip("part:N", "part"),
                vl.tip("mean:Q", "mean of the trials", ",.4~g"),
            ],
        },
    )
    points = vl.view(
        "values",
        vl.mark("point", size=style.SIZE_POINT, opacity=0.85),
        {
            "x": x,
            "xOffset": vl.field("appraiser_key:N"),
            "y": y,
            "color": colour,
            "shape": vl.field("appraiser_key:N", legend=None),
            "tooltip": [
                vl.tip("appraiser:N", "appraiser"),
                vl.tip("part:N", "part"),
                vl.tip("trial:Q", "trial"),
                vl.tip("value:Q", "value", ",.4~g"),
            ],
        },
    )
    chart = vl.layer(points, means, width="container", height=_HEIGHT_STUDY)
    return finish_template(chart, "study-measurements")


def measurements_chart(
    values: Sequence[float],
    parts: Sequence[str],
    appraisers: Sequence[str],
    *,
    unit: str = "",
    measure: str = "reading",
) -> ChartSpec:
    """Every measurement by part (x) and appraiser (colour and shape, side by side within a
    part), each appraiser's mean of a part's trials joined by a line: lines that run apart
    show an appraiser effect, lines that cross an interaction of part and appraiser."""
    tpl = cached_template(("study-measurements",), _measurements_template)
    part_names = natural_order(parts)
    appr_names = list(dict.fromkeys(appraisers))
    pk = dict(zip(part_names, bar_keys(part_names), strict=True))
    ak = dict(zip(appr_names, bar_keys(appr_names), strict=True))
    trial: dict[tuple[str, str], int] = {}
    rows, sums = [], {}
    for v, p, o in zip(np.asarray(values, dtype=float).tolist(), parts, appraisers, strict=True):
        t = trial[(p, o)] = trial.get((p, o), 0) + 1
        rows.append(
            {
                "part_key": pk[p],
                "part": p,
                "appraiser_key": ak[o],
                "appraiser": o,
                "trial": t,
                "value": v,
            }
        )
        s = sums.setdefault((p, o), [0.0, 0])
        s[0] += v
        s[1] += 1
    means = [
        {
            "part_key": pk[p],
            "part": p,
            "appraiser_key": ak[o],
            "appraiser": o,
            "mean": sums[(p, o)][0] / sums[(p, o)][1],
        }
        for o in appr_names
        for p in part_names
    ]
    table = [
        {"part": r["part"], "appraiser": r["appraiser"], "trial": r["trial"], "value": r["value"]}
        for r in rows
    ]
    n_trials = max(trial.values()) if trial else 0
    sub = [
        f"{plural(len(part_names), 'part')} × {plural(len(appr_names), 'appraiser')} × "
        f"{plural(n_trials, 'trial')}; lines join each appraiser's mean of a part's trials"
    ]
    spec = make_spec(
        tpl,
        {"y_title": titled(measure.capitalize(), unit)},
        {"values": rows, "means": means},
        "Measurements by part and appraiser",
        sub,
    )
    summary = (
        f"Dot plot of {plural(len(rows), 'measurement')} of "
        f"{plural(len(part_names), 'part')} by {plural(len(appr_names), 'appraiser')}, "
        "with each appraiser's part means joined by a line."
    )
    return ChartSpec(
        spec=spec, table=table, columns=("part", "appraiser", "trial", "value"), summary=summary
    )
