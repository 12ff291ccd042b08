"""The histogram: pre-binned counts, with the specification limits and target as rules."""

from __future__ import annotations

from typing import Any

from ...stats.results import Histogram, StatsError
from .. import style, vl
from ..base.numbers import fmt, num, plural, titled, with_unit
from ..base.templates import axis_title, cached_template, finish_template, make_spec, slot
from ..base.types import ChartSpec

_REF_KINDS = ["LSL", "USL", "target"]


def _x(name: str) -> dict:
    return vl.field(
        f"{name}:Q", scale={"zero": False, "nice": False}, axis={"title": slot("x_title")}
    )


def _y(name: str) -> dict:
    return vl.field(f"{name}:Q", axis={"title": "count", "tickMinStep": 1}, scale={"zero": True})


def _ref_colour() -> dict:
    return vl.field(
        "kind:N",
        scale={"domain": list(_REF_KINDS), "range": [style.SPEC, style.SPEC, style.TARGET]},
        legend=None,
    )


def _histogram_template(curve: bool) -> dict:
    # Outside the specification: the ground beyond each limit is tinted, the limits themselves
    # are solid lines and the target a dotted one, so the eye reads "inside / outside" at once.
    outside = vl.view(
        "outside",
        vl.mark("rect", color=style.SPEC, opacity=0.1),
        {"x": _x("start"), "x2": {"field": "end"}, "tooltip": [vl.tip("text:N", "region")]},
    )
    bars = vl.view(
        "bins",
        vl.mark("bar", color=style.HIST_BAR, stroke=style.WHITE, strokeWidth=1),
        {
            "x": _x("start"),
            "x2": {"field": "end"},
            "y": _y("count"),
            "y2": {"datum": 0},
            "tooltip": [vl.tip("range:N", "bin"), vl.tip("count:Q", "count")],
        },
    )
    rules, labels = _ref_layers()
    layers = [outside, bars, rules, labels]
    if curve:
        layers.append(
            vl.view(
                "curve",
                vl.mark("line", color=style.CURVE, strokeWidth=2),
                {"x": _x("x"), "y": _y("y")},
            )
        )
    chart = vl.layer(*layers, width="container", height=style.HEIGHT_DISTRIBUTION)
    return finish_template(chart, "histogram")


def _ref_layers() -> tuple[dict, dict]:
    """The specification limits (solid) and target (dotted) as rules, and their labels."""
    rules = vl.view(
        "refs",
        vl.mark("rule", strokeWidth=2),
        {
            "x": _x("value"),
            "color": _ref_colour(),
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
            "x": _x("value"),
            # pixel offsets from the top, staggered so that nearby labels do not overlap
            "y": vl.field("ypx:Q", scale=None),
            "color": _ref_colour(),
            "text": vl.field("text:N"),
        },
    )
    return rules, labels


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
    curve_rows, curve_note = _curve(hist) if normal_curve else ([], "")
    drawn = bool(curve_rows)
    tpl = cached_template(("histogram", drawn), lambda: _histogram_template(drawn))

    bins = _bin_rows(edges, counts)
    refs = _ref_rows(lsl, usl, target)
    datasets: dict[str, list[dict]] = {
        "bins": bins,
        "refs": refs,
        "outside": _outside_rows(edges, refs, curve_rows, num(lsl), num(usl)),
    }
    if drawn:
        datasets["curve"] = curve_rows

    name = title or "Distribution"
    x_title = titled(measure or title, unit) or "value"
    sub = _subtitle(hist, len(counts), note, curve_note)
    # broken into lines past the width of a half-width card's plot (about 400 px)
    spec = make_spec(
        tpl, {"x_title": axis_title(x_title, 400)}, datasets, f"{name} \u2014 histogram", sub
    )
    table = [{"from": r["start"], "to": r["end"], "count": r["count"]} for r in bins]
    summary = _summary(hist, edges, counts, unit, refs)
    return ChartSpec(spec=spec, table=table, columns=("from", "to", "count"), summary=summary)


def _curve(hist: Histogram) -> tuple[list[dict], str]:
    """The fitted normal curve's rows and the subtitle's words on it (or why there is none)."""
    # imported here: only the charts that draw the curve need the distribution functions
    from ...stats.distribution import normal_curve as _normal_curve

    try:
        xs, ys = _normal_curve(hist)
    except StatsError as exc:
        return [], f"no normal curve: {exc}"
    rows = [{"x": num(a), "y": num(b)} for a, b in zip(xs, ys, strict=True)]
    return rows, (
        f"normal curve with mean {fmt(hist.mean)} and standard deviation "
        f"{fmt(hist.std)}, scaled to the counts"
    )


def _bin_rows(edges: list[float], counts: list) -> list[dict]:
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
    return bins


def _ref_rows(lsl, usl, target) -> list[dict[str, Any]]:
    """The specification limits and target as labelled rules, left to right, each label a line
    lower than the one before."""
    refs: list[dict[str, Any]] = []
    for kind, v in (("LSL", lsl), ("target", target), ("USL", usl)):
        f = num(v)
        if f is not None:
            refs.append({"kind": kind, "value": f, "text": f"{kind} {fmt(f)}"})
    refs.sort(key=lambda r: r["value"])
    for k, r in enumerate(refs):
        r["ypx"] = 2 + 15 * k
    return refs


def _outside_rows(
    edges: list[float],
    refs: list[dict[str, Any]],
    curve_rows: list[dict],
    lo_spec: float | None,
    hi_spec: float | None,
) -> list[dict]:
    """The shaded reaches beyond the specification limits, as far as anything is drawn."""
    xs = [x for x in (edges[0], edges[-1], *(r["value"] for r in refs)) if x is not None]
    xs += [r["x"] for r in curve_rows if r["x"] is not None]
    outside = []
    if lo_spec is not None and min(xs) < lo_spec:
        outside.append({"start": min(xs), "end": lo_spec, "text": "below the lower spec limit"})
    if hi_spec is not None and max(xs) > hi_spec:
        outside.append({"start": hi_spec, "end": max(xs), "text": "above the upper spec limit"})
    return outside


def _subtitle(hist: Histogram, n_bins: int, note: str, curve_note: str) -> list[str]:
    width = (
        f"bins of width {fmt(hist.bin_width)}"
        if hist.bin_width is not None
        else "bins of unequal width"
    )
    binning = f"{plural(n_bins, 'bin')}, {width} ({hist.rule_label})"
    # a note names the values (and their number) already: the bins follow it on its line
    sub = [
        f"{note.rstrip('.')}, in {binning}" if note else f"{plural(hist.n, 'value')} in {binning}"
    ]
    beyond = []
    if hist.below_range:
        beyond.append(f"{hist.below_range} below")
    if hist.above_range:
        beyond.append(f"{hist.above_range} above")
    if beyond:
        sub.append(" and ".join(beyond) + " the range shown (not drawn)")
    if curve_note:
        sub.append(curve_note)
    return sub


def _summary(
    hist: Histogram, edges: list[float], counts: list, unit: str, refs: list[dict[str, Any]]
) -> str:
    peak = max(range(len(counts)), key=lambda k: counts[k]) if counts else None
    summary = f"Histogram of {plural(hist.n, 'value')} in {plural(len(counts), 'bin')}"
    if peak is not None:
        summary += (
            f"; most values between {fmt(edges[peak])} and "
            f"{with_unit(fmt(edges[peak + 1]), unit)} ({counts[peak]})"
        )
    if refs:
        summary += "; " + ", ".join(r["text"] for r in refs)
    return summary + "."
