"""Shape of the data: histogram (pre-binned) and box plots drawn from five-number summaries."""

from __future__ import annotations

from collections.abc import Sequence

from ..stats.results import BoxSummary, Histogram, StatsError
from . import style, vl
from .base.numbers import fmt, num, plural, titled, with_unit
from .base.templates import axis_title, cached_template, finish_template, list_slot, make_spec, slot
from .base.types import ChartSpec

_REF_KINDS = ["LSL", "USL", "target"]
# At most this many distinct outlying values are drawn on each side of a box (the most extreme);
# the table still counts them all.
MAX_OUTLIERS_EACH_SIDE = 100
_MARK_KINDS = ["mean", "outlier (beyond 1.5 \u00d7 IQR)", "far out (beyond 3 \u00d7 IQR)"]


# ------------------------------------------------------------------------------------------------
# Histogram
# ------------------------------------------------------------------------------------------------


def _histogram_template(curve: bool) -> dict:
    def x(name: str) -> dict:
        return vl.field(
            f"{name}:Q", scale={"zero": False, "nice": False}, axis={"title": slot("x_title")}
        )

    def y(name: str) -> dict:
        return vl.field(
            f"{name}:Q", axis={"title": "count", "tickMinStep": 1}, scale={"zero": True}
        )

    def ref_colour() -> dict:
        return vl.field(
            "kind:N",
            scale={"domain": list(_REF_KINDS), "range": [style.SPEC, style.SPEC, style.TARGET]},
            legend=None,
        )

    # Outside the specification: the ground beyond each limit is tinted, the limits themselves
    # are solid lines and the target a dotted one, so the eye reads "inside / outside" at once.
    outside = vl.view(
        "outside",
        vl.mark("rect", color=style.SPEC, opacity=0.1),
        {"x": x("start"), "x2": {"field": "end"}, "tooltip": [vl.tip("text:N", "region")]},
    )
    bars = vl.view(
        "bins",
        vl.mark("bar", color=style.HIST_BAR, stroke=style.WHITE, strokeWidth=1),
        {
            "x": x("start"),
            "x2": {"field": "end"},
            "y": y("count"),
            "y2": {"datum": 0},
            "tooltip": [vl.tip("range:N", "bin"), vl.tip("count:Q", "count")],
        },
    )
    rules = vl.view(
        "refs",
        vl.mark("rule", strokeWidth=2),
        {
            "x": x("value"),
            "color": ref_colour(),
            "strokeDash": vl.field(
                "kind:N",
                scale={
                    "domain": list(_REF_KINDS),
                    "range": [[1, 0], [1, 0], list(style.DASH_TARGET)],
                },
                legend=None,
            ),
            "tooltip": [vl.tip("text:N", "reference")],
        },
    )
    labels = vl.view(
        "refs",
        vl.mark("text", align="left", baseline="top", dx=4, fontWeight=600),
        {
            "x": x("value"),
            # pixel offsets from the top, staggered so that nearby labels do not overlap
            "y": vl.field("ypx:Q", scale=None),
            "color": ref_colour(),
            "text": vl.field("text:N"),
        },
    )
    layers = [outside, bars, rules, labels]
    if curve:
        layers.append(
            vl.view(
                "curve",
                vl.mark("line", color=style.CURVE, strokeWidth=2),
                {"x": x("x"), "y": y("y")},
            )
        )
    chart = vl.layer(*layers, width="container", height=style.HEIGHT_DISTRIBUTION)
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
    measure: str = "",
    note: str = "",
) -> ChartSpec:
    """Bars from the histogram's own edges (no re-binning), spec limits and target as labelled
    rules, and optionally a fitted normal curve scaled to the counts. ``measure`` titles the
    x axis with the unit (else ``title`` does); ``note``, when given, heads the subtitle (what
    the values are, when that is not plain)."""
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
    xs = [x for x in (edges[0], edges[-1], *(r["value"] for r in refs)) if x is not None]
    xs += [r["x"] for r in curve_rows if r["x"] is not None]
    outside = []
    lo_spec, hi_spec = num(lsl), num(usl)
    if lo_spec is not None and min(xs) < lo_spec:
        outside.append({"start": min(xs), "end": lo_spec, "text": "below the lower spec limit"})
    if hi_spec is not None and max(xs) > hi_spec:
        outside.append({"start": hi_spec, "end": max(xs), "text": "above the upper spec limit"})
    datasets = {"bins": bins, "refs": refs, "outside": outside}
    if drawn:
        datasets["curve"] = curve_rows

    name = title or "Distribution"
    x_title = titled(measure or title, unit) or "value"
    width = (
        f"bins of width {fmt(hist.bin_width)}"
        if hist.bin_width is not None
        else "bins of unequal width"
    )
    binning = f"{plural(len(counts), 'bin')}, {width} ({hist.rule_label})"
    # a note names the values (and their number) already: the bins follow it on its line
    sub = [
        f"{note.rstrip('.')}, in {binning}" if note else f"{plural(hist.n, 'value')} in {binning}"
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
    # broken into lines past the width of a half-width card's plot (about 400 px)
    spec = make_spec(
        tpl, {"x_title": axis_title(x_title, 400)}, datasets, f"{name} \u2014 histogram", sub
    )

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
    def x() -> dict:
        return vl.field("group:N", sort=list_slot("order"), axis={"title": None, "labelAngle": 0})

    def y(name: str) -> dict:
        return vl.field(f"{name}:Q", axis={"title": slot("y_title")}, scale={"zero": False})

    def tip() -> list[dict]:
        return [
            vl.tip("group:N", "group"),
            vl.tip("n:Q", "n"),
            vl.tip("whisker_high:Q", "upper whisker", ",.4~g"),
            vl.tip("q3:Q", "Q3", ",.4~g"),
            vl.tip("median:Q", "median", ",.4~g"),
            vl.tip("q1:Q", "Q1", ",.4~g"),
            vl.tip("whisker_low:Q", "lower whisker", ",.4~g"),
            vl.tip("mean:Q", "mean", ",.4~g"),
        ]

    whisker = vl.view(
        "boxes",
        vl.mark("rule", color=style.INK, strokeWidth=1.2),
        {"x": x(), "y": y("whisker_low"), "y2": {"field": "whisker_high"}, "tooltip": tip()},
    )
    cap_lo = vl.view(
        "boxes",
        vl.mark("tick", color=style.INK, size=18, thickness=1.2),
        {"x": x(), "y": y("whisker_low")},
    )
    cap_hi = vl.view(
        "boxes",
        vl.mark("tick", color=style.INK, size=18, thickness=1.2),
        {"x": x(), "y": y("whisker_high")},
    )
    box = vl.view(
        "boxes",
        vl.mark("bar", size=40, color=style.BOX_FILL, stroke=style.INK, strokeWidth=1),
        {"x": x(), "y": y("q1"), "y2": {"field": "q3"}, "tooltip": tip()},
    )
    median = vl.view(
        "boxes",
        vl.mark("tick", color=style.INK, size=40, thickness=2.5),
        {"x": x(), "y": y("median"), "tooltip": tip()},
    )

    def by_kind(values: list) -> dict:
        return vl.field(
            "kind:N",
            scale={"domain": list(_MARK_KINDS), "range": values},
            legend={"title": None},
        )

    marks = vl.view(
        "marks",
        vl.mark("point", opacity=1, size=50),
        {
            "x": x(),
            "y": y("value"),
            "shape": by_kind([style.SHAPE_MEAN, style.SHAPE_OUTLIER, style.SHAPE_FAR_OUT]),
            "stroke": by_kind([style.INK, style.DATA, style.SIGNAL]),
            "fill": by_kind([style.INK, style.WHITE, style.SIGNAL]),
            "tooltip": [
                vl.tip("group:N", "group"),
                vl.tip("kind:N", "what"),
                vl.tip("value:Q", "value", ",.4~g"),
            ],
        },
    )
    chart = vl.layer(
        whisker,
        cap_lo,
        cap_hi,
        box,
        median,
        marks,
        width="container",
        height=style.HEIGHT_DISTRIBUTION,
    )
    return finish_template(chart, "box-plot")


def box_chart(
    groups: Sequence[tuple[str, BoxSummary]], *, unit: str, measure: str = "", note: str = ""
) -> ChartSpec:
    """One box per group on one scale, drawn from the summaries alone (no raw data). The value
    axis is titled with ``measure`` and the unit; ``note``, when given, heads the subtitle."""
    if not groups:
        raise ValueError("a box plot needs at least one group")
    names = [str(g) for g, _ in groups]
    if len(set(names)) != len(names):
        raise ValueError(f"box plot group names must be distinct, got {names}")
    tpl = cached_template(("box-plot",), _box_template)
    boxes, marks, table = [], [], []
    hidden = 0
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
        n_far = sum(int(i) in far for i in b.outlier_indices)
        pairs = sorted(
            (num(v), int(idx) in far)
            for idx, v in zip(b.outlier_indices, b.outlier_values, strict=True)
            if num(v) is not None
        )
        pairs = list(dict.fromkeys(pairs))  # a value drawn twice is one mark
        if len(pairs) > 2 * MAX_OUTLIERS_EACH_SIDE:
            # Keep the page's weight flat in the number of rows: draw the most extreme
            # outlying values on each side and say how many were left out.
            hidden += len(pairs) - 2 * MAX_OUTLIERS_EACH_SIDE
            pairs = pairs[:MAX_OUTLIERS_EACH_SIDE] + pairs[-MAX_OUTLIERS_EACH_SIDE:]
        for v, is_far in pairs:
            marks.append({"group": name, "kind": _MARK_KINDS[2 if is_far else 1], "value": v})
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
        *([note] if note else []),
        "quartiles: " + "; ".join(methods) + "; whiskers to 1.5 \u00d7 IQR, points beyond "
        "drawn one by one",
    ]
    if hidden:
        sub.append(
            f"{hidden} outlying values nearer the fences are not drawn (the most "
            f"extreme {MAX_OUTLIERS_EACH_SIDE} on each side are)"
        )
    spec = make_spec(
        tpl,
        {"order": names, "y_title": titled(measure, unit) or "value"},
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
