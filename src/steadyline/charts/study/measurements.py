"""A measurement study's measurements by part and by appraiser."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .. import style, vl
from ..base.numbers import plural, titled
from ..base.templates import cached_template, finish_template, make_spec, slot
from ..base.types import ChartSpec
from ..categorical.categories import _KEY_LABEL, bar_keys
from .naming import _HEIGHT_STUDY, _legend_keyed, natural_order


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
    rows: list[dict] = []
    sums: dict[tuple[str, str], list[float]] = {}
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
