"""Shape of the data: histogram (pre-binned) and box plots drawn from five-number summaries."""

from __future__ import annotations

from collections.abc import Sequence

from ..stats.results import BoxSummary, Histogram, StatsError
from . import style
from .base import (
    ChartSpec,
    cached_template,
    finish_template,
    fmt,
    list_slot,
    make_spec,
    num,
    plural,
    slot,
    with_unit,
)

_REF_KINDS = ["LSL", "USL", "target"]
_MARK_KINDS = ["mean", "outlier (beyond 1.5 \u00d7 IQR)", "far out (beyond 3 \u00d7 IQR)"]


# ------------------------------------------------------------------------------------------------
# Histogram
# ------------------------------------------------------------------------------------------------


def _histogram_template(curve: bool) -> dict:
    import altair as alt

    x_axis = alt.Axis(title=slot("x_title"))
    y_axis = alt.Axis(title="count", tickMinStep=1)
    x_scale = alt.Scale(zero=False, nice=False)
    bars = (
        alt.Chart(alt.NamedData("bins"))
        .mark_bar(color=style.HIST_BAR, stroke=style.WHITE, strokeWidth=1)
        .encode(
            x=alt.X("start:Q", scale=x_scale, axis=x_axis),
            x2="end",
            y=alt.Y("count:Q", axis=y_axis, scale=alt.Scale(zero=True)),
            y2=alt.datum(0),
            tooltip=[
                alt.Tooltip("range:N", title="bin"),
                alt.Tooltip("count:Q", title="count"),
            ],
        )
    )
    refs = alt.Chart(alt.NamedData("refs"))
    ref_colour = alt.Color(
        "kind:N",
        scale=alt.Scale(domain=_REF_KINDS, range=[style.SPEC, style.SPEC, style.TARGET]),
        legend=None,
    )
    rules = refs.mark_rule(strokeWidth=2).encode(
        x=alt.X("value:Q", scale=x_scale, axis=x_axis),
        color=ref_colour,
        strokeDash=alt.StrokeDash(
            "kind:N",
            scale=alt.Scale(
                domain=_REF_KINDS, range=[style.DASH_LIMIT, style.DASH_LIMIT, style.DASH_TARGET]
            ),
            legend=None,
        ),
        tooltip=[alt.Tooltip("text:N", title="reference")],
    )
    labels = refs.mark_text(align="left", baseline="top", dx=4, fontWeight=600).encode(
        x=alt.X("value:Q", scale=x_scale, axis=x_axis),
        # pixel offsets from the top, staggered so that nearby labels do not overlap
        y=alt.Y("ypx:Q", scale=None),
        color=ref_colour,
        text="text:N",
    )
    layers = [bars, rules, labels]
    if curve:
        layers.append(
            alt.Chart(alt.NamedData("curve"))
            .mark_line(color=style.CURVE, strokeWidth=2)
            .encode(
                x=alt.X("x:Q", scale=x_scale, axis=x_axis),
                y=alt.Y("y:Q", axis=y_axis, scale=alt.Scale(zero=True)),
            )
        )
    chart = alt.layer(*layers).properties(width="container", height=style.HEIGHT_DISTRIBUTION)
    return finish_template(chart, "histogram")


def histogram_chart(
    hist: Histogram,
    *,
    unit: str,
    lsl=None,
    usl=None,
    target=None,
    normal_curve: bool = False,
    title: str = "",
) -> ChartSpec:
    """Bars from the histogram's own edges (no re-binning), spec limits and target as labelled
    rules, and optionally a fitted normal curve scaled to the counts."""
    edges = [float(e) for e in hist.edges]
    counts = list(hist.counts)
    if len(edges) != len(counts) + 1:
        raise ValueError(
            f"a histogram needs one more edge than counts, got {len(edges)} and {len(counts)}"
        )

    curve_rows: list[dict] = []
    curve_note = ""
    if normal_curve:
        from ..stats.distribution import normal_curve as _normal_curve

        try:
            xs, ys = _normal_curve(hist)
            curve_rows = [{"x": num(a), "y": num(b)} for a, b in zip(xs, ys, strict=True)]
            curve_note = (
                f"normal curve with mean {fmt(hist.mean)} and standard deviation "
                f"{fmt(hist.std)}, scaled to the counts"
            )
        except StatsError as exc:
            curve_note = f"no normal curve: {exc}"
    drawn = bool(curve_rows)
    tpl = cached_template(("histogram", drawn), lambda: _histogram_template(drawn))

    bins = []
    for k, c in enumerate(counts):
        a, b = edges[k], edges[k + 1]
        last = k == len(counts) - 1
        bins.append(
            {
                "start": a,
                "end": b,
                "count": num(c),
                "range": f"{fmt(a, 4)} to {fmt(b, 4)}"
                + ("" if last else " (upper end not included)"),
            }
        )
    refs = []
    for kind, v in (("LSL", lsl), ("target", target), ("USL", usl)):
        f = num(v)
        if f is not None:
            refs.append({"kind": kind, "value": f, "text": f"{kind} {fmt(f)}"})
    refs.sort(key=lambda r: r["value"])
    for k, r in enumerate(refs):
        r["ypx"] = 2 + 15 * k
    datasets = {"bins": bins, "refs": refs}
    if drawn:
        datasets["curve"] = curve_rows

    name = title or "Distribution"
    x_title = f"{title} ({unit})" if title and unit else (unit or title or "value")
    width = (
        f"bins of width {fmt(hist.bin_width)}"
        if hist.bin_width is not None
        else "bins of unequal width"
    )
    sub = [
        f"{plural(hist.n, 'value')} in {plural(len(counts), 'bin')}, {width} ({hist.rule_label})"
    ]
    outside = []
    if hist.below_range:
        outside.append(f"{hist.below_range} below")
    if hist.above_range:
        outside.append(f"{hist.above_range} above")
    if outside:
        sub.append(" and ".join(outside) + " the range shown (not drawn)")
    if curve_note:
        sub.append(curve_note)
    spec = make_spec(tpl, {"x_title": x_title}, datasets, f"{name} \u2014 histogram", sub)

    table = [{"from": r["start"], "to": r["end"], "count": r["count"]} for r in bins]
    peak = max(range(len(counts)), key=lambda k: counts[k]) if counts else None
    summary = f"Histogram of {plural(hist.n, 'value')} in {plural(len(counts), 'bin')}"
    if peak is not None:
        summary += (
            f"; most values between {fmt(edges[peak])} and "
            f"{with_unit(fmt(edges[peak + 1]), unit)} ({counts[peak]})"
        )
    if refs:
        summary += "; " + ", ".join(r["text"] for r in refs)
    return ChartSpec(spec=spec, table=table, columns=("from", "to", "count"), summary=summary + ".")


# ------------------------------------------------------------------------------------------------
# Box plot
# ------------------------------------------------------------------------------------------------


def _box_template() -> dict:
    import altair as alt

    x = alt.X("group:N", sort=list_slot("order"), axis=alt.Axis(title=None, labelAngle=0))
    y_axis = alt.Axis(title=slot("y_title"))
    y_scale = alt.Scale(zero=False)
    boxes = alt.Chart(alt.NamedData("boxes"))
    tip = [
        alt.Tooltip("group:N", title="group"),
        alt.Tooltip("n:Q", title="n"),
        alt.Tooltip("whisker_high:Q", title="upper whisker", format=",.4~g"),
        alt.Tooltip("q3:Q", title="Q3", format=",.4~g"),
        alt.Tooltip("median:Q", title="median", format=",.4~g"),
        alt.Tooltip("q1:Q", title="Q1", format=",.4~g"),
        alt.Tooltip("whisker_low:Q", title="lower whisker", format=",.4~g"),
        alt.Tooltip("mean:Q", title="mean", format=",.4~g"),
    ]
    whisker = boxes.mark_rule(color=style.INK, strokeWidth=1.2).encode(
        x=x,
        y=alt.Y("whisker_low:Q", axis=y_axis, scale=y_scale),
        y2="whisker_high",
        tooltip=tip,
    )
    cap_lo = boxes.mark_tick(color=style.INK, size=18, thickness=1.2).encode(
        x=x, y=alt.Y("whisker_low:Q", axis=y_axis, scale=y_scale)
    )
    cap_hi = boxes.mark_tick(color=style.INK, size=18, thickness=1.2).encode(
        x=x, y=alt.Y("whisker_high:Q", axis=y_axis, scale=y_scale)
    )
    box = boxes.mark_bar(size=40, color=style.BOX_FILL, stroke=style.INK, strokeWidth=1).encode(
        x=x, y=alt.Y("q1:Q", axis=y_axis, scale=y_scale), y2="q3", tooltip=tip
    )
    median = boxes.mark_tick(color=style.INK, size=40, thickness=2.5).encode(
        x=x, y=alt.Y("median:Q", axis=y_axis, scale=y_scale), tooltip=tip
    )
    marks = (
        alt.Chart(alt.NamedData("marks"))
        .mark_point(opacity=1, size=50)
        .encode(
            x=x,
            y=alt.Y("value:Q", axis=y_axis, scale=y_scale),
            shape=alt.Shape(
                "kind:N",
                scale=alt.Scale(
                    domain=_MARK_KINDS,
                    range=[style.SHAPE_MEAN, style.SHAPE_OUTLIER, style.SHAPE_FAR_OUT],
                ),
                legend=alt.Legend(title=None),
            ),
            stroke=alt.Stroke(
                "kind:N",
                scale=alt.Scale(domain=_MARK_KINDS, range=[style.INK, style.DATA, style.SIGNAL]),
                legend=alt.Legend(title=None),
            ),
            fill=alt.Fill(
                "kind:N",
                scale=alt.Scale(domain=_MARK_KINDS, range=[style.INK, style.WHITE, style.SIGNAL]),
                legend=alt.Legend(title=None),
            ),
            tooltip=[
                alt.Tooltip("group:N", title="group"),
                alt.Tooltip("kind:N", title="what"),
                alt.Tooltip("value:Q", title="value", format=",.4~g"),
            ],
        )
    )
    chart = alt.layer(whisker, cap_lo, cap_hi, box, median, marks).properties(
        width="container", height=style.HEIGHT_DISTRIBUTION
    )
    return finish_template(chart, "box-plot")


def box_chart(groups: Sequence[tuple[str, BoxSummary]], *, unit: str) -> ChartSpec:
    """One box per group on one scale, drawn from the summaries alone (no raw data)."""
    if not groups:
        raise ValueError("a box plot needs at least one group")
    names = [str(g) for g, _ in groups]
    if len(set(names)) != len(names):
        raise ValueError(f"box plot group names must be distinct, got {names}")
    tpl = cached_template(("box-plot",), _box_template)
    boxes, marks, table = [], [], []
    for name, b in groups:
        boxes.append(
            {
                "group": name,
                "n": b.n,
                "q1": num(b.q1),
                "median": num(b.median),
                "q3": num(b.q3),
                "whisker_low": num(b.whisker_low),
                "whisker_high": num(b.whisker_high),
                "mean": num(b.mean),
            }
        )
        if num(b.mean) is not None:
            marks.append({"group": name, "kind": _MARK_KINDS[0], "value": num(b.mean)})
        far = set(int(i) for i in b.far_out_indices)
        n_far = 0
        for idx, v in zip(b.outlier_indices, b.outlier_values, strict=True):
            is_far = int(idx) in far
            n_far += is_far
            if num(v) is not None:
                marks.append(
                    {"group": name, "kind": _MARK_KINDS[2 if is_far else 1], "value": num(v)}
                )
        table.append(
            {
                "group": name,
                "n": b.n,
                "mean": num(b.mean),
                "minimum": num(b.minimum),
                "lower whisker": num(b.whisker_low),
                "Q1": num(b.q1),
                "median": num(b.median),
                "Q3": num(b.q3),
                "upper whisker": num(b.whisker_high),
                "maximum": num(b.maximum),
                "IQR": num(b.iqr),
                "outliers": len(b.outlier_values) - n_far,
                "far out": n_far,
                "quartile method": b.method_label,
            }
        )
    methods = sorted({b.method_label for _, b in groups})
    sub = [
        "quartiles: " + "; ".join(methods),
        "whiskers reach the most extreme values within 1.5 \u00d7 IQR of the box; "
        "points beyond are drawn one by one",
    ]
    spec = make_spec(
        tpl,
        {"order": names, "y_title": unit or "value"},
        {"boxes": boxes, "marks": marks},
        "Box plot" if len(groups) == 1 else f"Box plots of {len(groups)} groups",
        sub,
    )
    columns = tuple(table[0].keys())
    parts = [
        f"{r['group']}: median {with_unit(fmt(r['median']), unit)}, "
        f"IQR {fmt(r['Q1'])} to {fmt(r['Q3'])}"
        + (
            f", {r['outliers'] + r['far out']} beyond the fences"
            if r["outliers"] + r["far out"]
            else ""
        )
        for r in table
    ]
    summary = "Box plot \u2014 " + "; ".join(parts) + "."
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)
