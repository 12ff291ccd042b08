"""Counts by category: column chart, Pareto chart, and Pareto charts of several phases."""

from __future__ import annotations

from collections.abc import Sequence

from ..advice import vital_names
from ..stats.results import Pareto
from . import style, vl
from .base.numbers import fmt, num, plural, with_unit
from .base.templates import cached_template, finish_template, make_spec, slot
from .base.types import ChartSpec

# The bars of the smallest leading set that reaches 80% and the rest. The legend does not call
# them "the vital few": whether they are a vital few is the card's finding (none is clear when it
# takes more than half of the categories), which a legend cannot qualify.
VITAL_LABEL = "first 80%"
REST_LABEL = "the rest"
IN_FIRST = "in the first 80%"  # the data tables' column
_GROUPS = [VITAL_LABEL, REST_LABEL]

# Category names are data, never code. Vega keeps the values of a band scale's field as keys of
# plain objects (its aggregates, stacks and scale domains), so a category named "constructor",
# "toString" or "__proto__" would be taken for a property every object inherits: the chart was
# refused ("Operator not defined") or its bars went missing. And an explicit sort order is
# compiled by Vega-Lite into an expression holding every name. So each bar stands on a key of
# our own, never a name: its place, zero-padded, a space, then the name ("03 toString"). Keys
# begin with a digit, so none is an inherited property's name; they sort as the bars stand, so
# no sort order is needed; and the axis shows the name, everything after the key's first space.
_KEY_LABEL = "slice(datum.label, indexof(datum.label, ' ') + 1)"

# A bar chart of categories stays legible up to about two dozen bars at a page's width (labels
# at an angle, each bar some 20 px wide; common practice). Beyond MAX_BARS categories, the
# first MAX_BARS - 1 in the chart's order are drawn one by one and all the others go into one
# last bar, named with how many it gathers; the data table and CSV keep every category.
MAX_BARS = 25


# The properties every JavaScript object inherits (ECMA-262, "Properties of the Object
# Prototype Object", and annex B for the __ ones). Vega's runtime, as the site runs it (with
# the expression interpreter), refuses a chart in which one of these names stands alone as a
# constant text, such as an axis title ("Operator not defined"), and draws "__proto__" as
# "[object Object]". A unit given in the metadata is such a text on the column chart's axis.
_INHERITED = frozenset(
    {
        "constructor",
        "__proto__",
        "toString",
        "toLocaleString",
        "valueOf",
        "hasOwnProperty",
        "isPrototypeOf",
        "propertyIsEnumerable",
        "__defineGetter__",
        "__defineSetter__",
        "__lookupGetter__",
        "__lookupSetter__",
    }
)


def constant_text(text: str) -> str:
    """``text`` to stand alone in a spec as a constant (a title): as it is, or, when it is an
    inherited property's name, with a zero-width space after it, which nothing shows."""
    return text + "\u200b" if text in _INHERITED else text


def gathered(n_categories: int) -> int:
    """How many categories a chart of ``n_categories`` gathers into its last bar (0: none)."""
    return n_categories - (MAX_BARS - 1) if n_categories > MAX_BARS else 0


def others_label(n: int) -> str:
    """The name of the bar that gathers ``n`` categories."""
    # short enough for the axis label's room (140 px at an angle) to show the number whole
    return f"all {n:,} others"


def bar_keys(names: Sequence[str]) -> list[str]:
    """The x keys of bars in the order they stand (see _KEY_LABEL)."""
    width = len(str(len(names)))
    return [f"{i:0{width}d} {n}" for i, n in enumerate(names, 1)]


def _category_x() -> dict:
    return vl.field(
        "key:N",
        title="category",
        axis={"title": None, "labelAngle": -35, "labelLimit": 140, "labelExpr": _KEY_LABEL},
    )


# ------------------------------------------------------------------------------------------------
# Column chart
# ------------------------------------------------------------------------------------------------


def _column_template() -> dict:
    def y() -> dict:
        return vl.field(
            "count:Q", scale={"zero": True, "domainMin": 0}, axis={"title": slot("y_title")}
        )

    bars = vl.view(
        "bars",
        vl.mark("bar", color=style.DATA),
        {
            "x": _category_x(),
            "y": y(),
            "tooltip": [
                vl.tip("category:N", "category"),
                # a fixed title: Vega-Lite makes the tooltip an object keyed by the titles,
                # and a unit such as "constructor" would be a key every object inherits
                vl.tip("count:Q", "count", ",.4~g"),
            ],
        },
    )
    labels = vl.view(
        "bars",
        vl.mark("text", baseline="bottom", dy=-3),
        {"x": _category_x(), "y": y(), "text": vl.field("text:N")},
    )
    chart = vl.layer(bars, labels, width="container", height=style.HEIGHT_DISTRIBUTION)
    return finish_template(chart, "column-chart")


def column_chart(
    categories: Sequence[str], counts: Sequence[float], *, unit: str = "count", period: str = ""
) -> ChartSpec:
    """Bars in the order given, the value axis starting at zero. Of more than MAX_BARS
    categories, the largest MAX_BARS - 1 are drawn in the order given and one last bar gathers
    the others; the table keeps every category. ``period``: what the counts cover (e.g.
    "baseline 2026-01-05 to 2026-03-27, 412 values"), the subtitle's first line."""
    cats = [str(c) for c in categories]
    vals = [num(c) for c in counts]
    if len(cats) != len(vals):
        raise ValueError(f"{len(cats)} categories but {len(vals)} counts")
    if len(set(cats)) != len(cats):
        raise ValueError("column chart categories must be distinct")
    tpl = cached_template(("column-chart",), _column_template)
    n_gathered = gathered(len(cats))
    sub = [period] if period else []
    shown, shown_vals = cats, vals
    if n_gathered:
        largest = sorted(range(len(cats)), key=lambda i: (-(vals[i] or 0.0), cats[i]))
        keep = sorted(largest[: MAX_BARS - 1])
        rest = sum(vals[i] or 0.0 for i in largest[MAX_BARS - 1 :])
        shown = [cats[i] for i in keep] + [others_label(n_gathered)]
        shown_vals = [vals[i] for i in keep] + [rest]
        sub.append(
            f"the {MAX_BARS - 1} largest of {len(cats):,} categories, and one last bar that "
            f"gathers the other {n_gathered:,} ({with_unit(fmt(rest, 4), unit)} in all)"
        )
    rows = [
        {"key": k, "category": c, "count": v, "text": fmt(v, 4) if v is not None else ""}
        for k, c, v in zip(bar_keys(shown), shown, shown_vals, strict=True)
    ]
    spec = make_spec(
        tpl,
        {"y_title": constant_text(unit or "count")},
        {"bars": rows},
        "Counts by category",
        sub,
    )
    value_col = unit if unit and unit != "category" else "count"  # never two "category"
    table = [{"category": c, value_col: v} for c, v in zip(cats, vals, strict=True)]
    total = sum(v for v in vals if v is not None)
    summary = (
        f"Column chart{f' ({period})' if period else ''} of "
        f"{plural(len(cats), 'category', 'categories')}, total {with_unit(fmt(total, 4), unit)}"
    )
    if any(v is not None for v in vals):
        k = max((i for i in range(len(vals)) if vals[i] is not None), key=lambda i: vals[i])
        summary += f"; largest {cats[k]} ({fmt(vals[k], 4)})"
    if n_gathered:
        summary += f"; the {n_gathered:,} smallest are drawn as one bar"
    return ChartSpec(spec=spec, table=table, columns=("category", value_col), summary=summary + ".")


# ------------------------------------------------------------------------------------------------
# Pareto
# ------------------------------------------------------------------------------------------------


def _pareto_view(prefix: str = "", panel_title: bool = False) -> dict:
    """Bars on the left axis [0, total] and the cumulative percentage on the right axis [0, 100]:
    with both domains fixed, 100 % sits exactly at the total."""
    bars_data = f"{prefix}bars"

    def x() -> dict:
        return _category_x()

    def y_count() -> dict:
        return vl.field(
            "count:Q",
            scale={"domain": [0, slot(f"{prefix}total")], "nice": False, "zero": True},
            axis={"title": "count", "orient": "left"},
        )

    def y_pct() -> dict:
        return vl.field(
            "cumulative:Q",
            scale={"domain": [0, 100], "nice": False, "zero": True},
            axis={
                "title": "cumulative %",
                "orient": "right",
                "values": [0, 20, 40, 60, 80, 100],
                "labelExpr": "datum.value + '%'",
                "grid": False,
            },
        )

    def thr_y() -> dict:
        return vl.field("cumulative:Q", scale={"domain": [0, 100], "nice": False, "zero": True})

    def bar_tip() -> list[dict]:
        return [
            vl.tip("category:N", "category"),
            vl.tip("count:Q", "count", ",.4~g"),
            vl.tip("percent:Q", "percent", ".1f"),
            vl.tip("cumulative:Q", "cumulative percent", ".1f"),
            vl.tip("group:N", "group"),
        ]

    bars = vl.view(
        bars_data,
        vl.mark("bar", stroke=style.INK, strokeWidth=0.6),
        {
            "x": x(),
            "y": y_count(),
            "fill": vl.field(
                "group:O",
                sort=list(_GROUPS),
                scale={"domain": list(_GROUPS), "range": [style.VITAL, style.REMAINING]},
                legend={"title": None},
            ),
            "opacity": vl.field(
                "group:O",
                sort=list(_GROUPS),
                scale={"domain": list(_GROUPS), "range": [1.0, 0.6]},
                legend={"title": None},
            ),
            "tooltip": bar_tip(),
        },
    )
    bar_text = vl.view(
        bars_data,
        vl.mark("text", baseline="bottom", dy=-2, fontSize=10),
        {"x": x(), "y": y_count(), "text": vl.field("text:N")},
    )
    line = vl.view(
        bars_data, vl.mark("line", color=style.CURVE, strokeWidth=2), {"x": x(), "y": y_pct()}
    )
    pts = vl.view(
        bars_data,
        vl.mark("point", color=style.CURVE, filled=True, size=36, opacity=1),
        {"x": x(), "y": y_pct(), "tooltip": bar_tip()},
    )
    thr = vl.view(
        f"{prefix}threshold",
        vl.mark("rule", color=style.INK, strokeDash=list(style.DASH_REFERENCE), strokeWidth=1),
        {"y": thr_y(), "tooltip": [vl.tip("text:N", "reference")]},
    )
    thr_text = vl.view(
        f"{prefix}threshold",
        vl.mark("text", align="left", baseline="bottom", dy=-2, dx=2),
        {"x": {"value": 0}, "y": thr_y(), "text": vl.field("text:N")},
    )
    left = vl.layer(bars, bar_text)
    right = vl.layer(line, pts, thr, thr_text)
    view = vl.layer(left, right, resolve={"scale": {"y": "independent"}})
    if panel_title:
        view["title"] = slot(f"{prefix}panel_title")
    return view


def _pareto_template() -> dict:
    chart = _pareto_view()
    chart.update(width="container", height=style.HEIGHT_DISTRIBUTION)
    return finish_template(chart, "pareto")


def _pareto_rows(
    categories: Sequence[str], counts: Sequence[float], total: float, vital: set[str]
) -> list[dict]:
    rows = []
    cum = 0.0
    for c, v in zip(categories, counts, strict=True):
        f = num(v) or 0.0
        cum += f
        rows.append(
            {
                "category": c,
                "count": f,
                "percent": num(100.0 * f / total) if total > 0 else None,
                "cumulative": num(100.0 * cum / total) if total > 0 else None,
                "group": VITAL_LABEL if c in vital else REST_LABEL,
                "text": fmt(f, 4),
            }
        )
    return rows


def _domain_total(total: float) -> float:
    t = num(total)
    return t if t is not None and t > 0 else 1.0


def _drawn(rows: list[dict], total: float) -> tuple[list[dict], int]:
    """The bars drawn from a Pareto's rows (every category, in order), each with its key: of
    more than MAX_BARS rows, the first MAX_BARS - 1 and one bar gathering the others, whose
    cumulative percentage is the last row's (100% of the total); and how many it gathers."""
    n = gathered(len(rows))
    if n:
        rest = rows[MAX_BARS - 1 :]
        count = sum(r["count"] or 0.0 for r in rest)
        tail = {
            "category": others_label(n),
            "count": count,
            "percent": num(count / total * 100.0) if total > 0 else None,
            "cumulative": rest[-1]["cumulative"],
            # a bar shows the vital-few fill only when everything in it is of the vital few
            "group": VITAL_LABEL if all(r["group"] == VITAL_LABEL for r in rest) else REST_LABEL,
            "text": fmt(count, 4),
        }
        rows = rows[: MAX_BARS - 1] + [tail]
    keys = bar_keys([r["category"] for r in rows])
    return [{"key": k, **r} for k, r in zip(keys, rows, strict=True)], n


def _gathered_line(rows: list[dict], n: int, total: float, vital: set[str]) -> str:
    """The subtitle line saying what the last bar gathers (rows: every category, in order)."""
    rest = rows[MAX_BARS - 1 :]
    count = sum(r["count"] or 0.0 for r in rest)
    share = f" ({fmt(count / total * 100.0)}% of the total)" if total > 0 else ""
    line = (
        f"the last bar gathers the {n:,} categories after the first {MAX_BARS - 1}: "
        f"{fmt(count, 4)} in all{share}"
    )
    in_rest = sum(1 for r in rest if r["category"] in vital)
    if in_rest:
        line += f"; {in_rest:,} of the first 80% are among them"
    return line


def pareto_chart(p: Pareto, period: str = "") -> ChartSpec:
    """Bars in descending order, the cumulative percentage against a right axis whose 100 %
    sits at the total, the vital few set apart by fill, opacity and legend, an 80 % rule. Of
    more than MAX_BARS categories, the largest are drawn one by one and one last bar gathers
    the others; the vital few, the line's 100% and the table count every category.
    ``period``: what the counts cover, the subtitle's first line (see :func:`column_chart`)."""
    if len(p.categories) != len(p.counts):
        raise ValueError(f"{len(p.categories)} categories but {len(p.counts)} counts")
    tpl = cached_template(("pareto",), _pareto_template)
    cats = [str(c) for c in p.categories]
    total = float(p.total)
    vital = set(p.vital_few)
    rows = []
    for k, c in enumerate(cats):
        rows.append(
            {
                "category": c,
                "count": num(p.counts[k]),
                "percent": num(p.percent[k]),
                "cumulative": num(p.cumulative_percent[k]),
                "group": VITAL_LABEL if c in vital else REST_LABEL,
                "text": fmt(p.counts[k], 4),
            }
        )
    bars, n_gathered = _drawn(rows, total)
    thr = [{"cumulative": float(p.threshold), "text": f"{fmt(p.threshold)}%"}]
    named = f" ({vital_names(p.vital_few)})" if p.vital_few else ""
    # what is drawn, not what it means: the card's sentences say which categories stand out
    sub = [period] if period else []
    sub += [
        f"{plural(len(cats), 'category', 'categories')}, total {fmt(total, 4)}; right axis: "
        f"cumulative percentage, 100% at the total; the first {fmt(p.threshold)}% set apart",
    ]
    if n_gathered:
        sub.append(_gathered_line(rows, n_gathered, total, vital))
    spec = make_spec(
        tpl,
        {"total": _domain_total(total)},
        {"bars": bars, "threshold": thr},
        "Pareto chart",
        sub,
    )
    table = [
        {
            "category": r["category"],
            "count": r["count"],
            "percent": r["percent"],
            "cumulative percent": r["cumulative"],
            IN_FIRST: "yes" if r["group"] == VITAL_LABEL else "no",
        }
        for r in rows
    ]
    summary = (
        f"Pareto chart{f' ({period})' if period else ''} of {fmt(total, 4)} across "
        f"{plural(len(cats), 'category', 'categories')}: "
        f"{len(p.vital_few)} make up the first {fmt(p.threshold)}%"
        + named
        + (f"; the {n_gathered:,} smallest are drawn as one bar" if n_gathered else "")
        + "."
    )
    return ChartSpec(
        spec=spec,
        table=table,
        columns=("category", "count", "percent", "cumulative percent", IN_FIRST),
        summary=summary,
    )


def _phase_template(k: int) -> dict:
    panels = []
    for j in range(k):
        panel = _pareto_view(prefix=f"p{j}_", panel_title=True)
        panel.update(width={"step": style.PANEL_STEP}, height=style.HEIGHT_DISTRIBUTION)
        panels.append(panel)
    chart = {
        "hconcat": panels,
        "spacing": 24,
        "resolve": {"scale": {"fill": "shared", "opacity": "shared"}},
    }
    return finish_template(chart, "pareto-by-phase")


def common_order(paretos: Sequence[tuple[str, Pareto]]) -> list[str]:
    """The first phase's order, then categories new in later phases by their later totals
    (descending, ties by name); a category named "other" stays last."""
    first = [str(c) for c in paretos[0][1].categories]
    seen = set(first)
    later: dict[str, float] = {}
    for _, p in paretos[1:]:
        for c, v in zip(p.categories, p.counts, strict=True):
            c = str(c)
            if c not in seen:
                later[c] = later.get(c, 0.0) + (num(v) or 0.0)
    extra = sorted(later, key=lambda c: (-later[c], c))
    order = first + extra
    others = [c for c in order if c.strip().lower() == "other"]
    return [c for c in order if c.strip().lower() != "other"] + others


def phase_pareto_chart(paretos: Sequence[tuple[str, Pareto]]) -> ChartSpec:
    """One Pareto panel per phase, side by side, every panel in the same category order (the
    first phase's), so that a category can be followed across phases. Each panel's cumulative
    line follows that common order; each marks its own phase's vital few."""
    if not paretos:
        raise ValueError("a phase Pareto chart needs at least one phase")
    k = len(paretos)
    tpl = cached_template(("pareto-by-phase", k), lambda: _phase_template(k))
    order = common_order(paretos)
    values: dict = {}
    datasets: dict = {}
    table: list[dict] = []
    parts = []
    for j, (phase, p) in enumerate(paretos):
        counts = dict(zip((str(c) for c in p.categories), p.counts, strict=True))
        total = float(p.total)
        rows = _pareto_rows(order, [counts.get(c, 0.0) for c in order], total, set(p.vital_few))
        datasets[f"p{j}_bars"], n_gathered = _drawn(rows, total)
        datasets[f"p{j}_threshold"] = [
            {"cumulative": float(p.threshold), "text": f"{fmt(p.threshold)}%"}
        ]
        values[f"p{j}_total"] = _domain_total(total)
        values[f"p{j}_panel_title"] = f"{phase} (total {fmt(total, 4)})"
        for r in rows:
            table.append(
                {
                    "phase": phase,
                    "category": r["category"],
                    "count": r["count"],
                    "percent": r["percent"],
                    "cumulative percent": r["cumulative"],
                    IN_FIRST: "yes" if r["group"] == VITAL_LABEL else "no",
                }
            )
        top = order[max(range(len(order)), key=lambda i: rows[i]["count"])] if order else ""
        parts.append(f"{phase}: total {fmt(total, 4)}, largest {top}")
    sub = [
        f"categories in the order of {paretos[0][0]}; each panel's right axis puts 100% at its own total",
    ]
    n_gathered = gathered(len(order))
    if n_gathered:
        sub.append(
            f"the last bar of each panel gathers the {n_gathered:,} categories after the first "
            f"{MAX_BARS - 1} of that order"
        )
    spec = make_spec(tpl, values, datasets, "Pareto charts by phase", sub)
    summary = (
        f"Pareto charts of {plural(k, 'phase')} in one category order \u2014 "
        + "; ".join(parts)
        + "."
    )
    return ChartSpec(
        spec=spec,
        table=table,
        columns=("phase", "category", "count", "percent", "cumulative percent", IN_FIRST),
        summary=summary,
    )
