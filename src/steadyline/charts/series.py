"""Time-ordered displays: the run chart and control charts (with their dispersion companion)."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ..stats.results import ControlChart, RunChartAnalysis, Signal
from . import style
from .base import (
    ChartSpec,
    SeriesContext,
    XAxis,
    band_layers,
    band_rows,
    cached_template,
    event_layers,
    event_rows,
    finish_template,
    fmt,
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
_MARK_DOMAIN = [MARK_ORDINARY, MARK_SIGNAL]

_LIMIT_KINDS = ("centre line", "UCL", "LCL")
_LIMIT_SHORT = {"centre line": "CL", "UCL": "UCL", "LCL": "LCL"}
_SECONDARY_SHORT = {"moving-range": "mR", "range": "R", "stdev": "S"}
# Charts whose plotted statistic is in the metric's own unit.
_UNIT_KINDS = {"individuals", "xbar", "moving-range", "range", "stdev"}

_RULE_SET_NAMES = {"anhoj": "Anhøj rules", "perla": "Perla, Provost & Murray rules"}


# ------------------------------------------------------------------------------------------------
# Templates
# ------------------------------------------------------------------------------------------------


def _value_layers(alt, is_time: bool, prefix: str, y_slot: str, with_limits: bool) -> list:
    """Line broken at segment changes and gaps, plus points whose shape marks signals."""
    base = alt.Chart(alt.NamedData(f"{prefix}points"))
    x = x_encoding(alt, is_time)
    y = alt.Y("value:Q", scale=alt.Scale(zero=False), axis=alt.Axis(title=slot(y_slot)))
    line = base.mark_line(color=style.DATA, strokeWidth=1.3).encode(x=x, y=y, detail="line:N")
    points = base.mark_point(filled=True, opacity=1).encode(
        x=x,
        y=y,
        shape=alt.Shape(
            "marker:N",
            scale=alt.Scale(domain=_MARK_DOMAIN, range=[style.SHAPE_POINT, style.SHAPE_SIGNAL]),
            legend=alt.Legend(title=None),
        ),
        color=alt.Color(
            "marker:N",
            scale=alt.Scale(domain=_MARK_DOMAIN, range=[style.DATA, style.SIGNAL]),
            legend=alt.Legend(title=None),
        ),
        size=alt.condition(
            f"datum.marker == '{MARK_SIGNAL}'",
            alt.value(style.SIZE_SIGNAL),
            alt.value(style.SIZE_POINT),
        ),
        tooltip=[
            alt.Tooltip("label:N", title="date" if is_time else "point"),
            alt.Tooltip("value:Q", title="value", format=",.4~g"),
            alt.Tooltip("stage:N", title="phase"),
            *(
                [
                    alt.Tooltip("info:N", title="limits"),
                    alt.Tooltip("fitted:N", title="used for limits"),
                ]
                if with_limits
                else []
            ),
            alt.Tooltip("signals:N", title="signals"),
        ],
    )
    return [line, points]


def _reference_layers(alt, is_time: bool, prefix: str, y_slot: str) -> list:
    """Centre line and limits as per-point step segments, labelled at the right end."""
    y = alt.Y("y:Q", scale=alt.Scale(zero=False), axis=alt.Axis(title=slot(y_slot)))
    x = x_encoding(alt, is_time)
    segs = (
        alt.Chart(alt.NamedData(f"{prefix}limits"))
        .mark_line(strokeWidth=1.4, color=style.LIMIT)
        .encode(
            x=x,
            y=y,
            detail="part:N",
            order="order:Q",
            strokeDash=alt.StrokeDash(
                "kind:N",
                scale=alt.Scale(
                    domain=list(_LIMIT_KINDS), range=[[1, 0], style.DASH_LIMIT, style.DASH_LIMIT]
                ),
                legend=None,
            ),
            tooltip=[alt.Tooltip("text:N", title="line")],
        )
    )
    labels = (
        alt.Chart(alt.NamedData(f"{prefix}labels"))
        .mark_text(align="left", baseline="middle", dx=5, color=style.INK)
        .encode(x=x, y=y, text="text:N")
    )
    return [segs, labels]


def _series_view(alt, is_time: bool, prefix: str, y_slot: str, height: int, refs: str):
    layers = band_layers(alt, is_time) + event_layers(alt, is_time)
    if refs == "limits":
        layers += _reference_layers(alt, is_time, prefix, y_slot)
    else:
        layers += _median_layers(alt, is_time, y_slot)
    layers += _value_layers(alt, is_time, prefix, y_slot, with_limits=refs == "limits")
    return alt.layer(*layers).properties(width="container", height=height)


def _median_layers(alt, is_time: bool, y_slot: str) -> list:
    base = alt.Chart(alt.NamedData("centre"))
    y = alt.Y("y:Q", scale=alt.Scale(zero=False), axis=alt.Axis(title=slot(y_slot)))
    rule = base.mark_rule(color=style.CENTRE, strokeWidth=1.6).encode(
        y=y, tooltip=[alt.Tooltip("text:N", title="centre line")]
    )
    label = base.mark_text(align="left", baseline="middle", dx=5, color=style.INK).encode(
        x=x_encoding(alt, is_time), y=y, text="text:N"
    )
    return [rule, label]


def _run_template(is_time: bool) -> dict:
    import altair as alt

    chart = _series_view(alt, is_time, "", "y_title", style.HEIGHT_MAIN, refs="median")
    return finish_template(chart, "run-chart")


def _control_template(is_time: bool, has_secondary: bool) -> dict:
    import altair as alt

    main = _series_view(alt, is_time, "", "y_title", style.HEIGHT_MAIN, refs="limits")
    if not has_secondary:
        return finish_template(main, "control-chart")
    second = _series_view(
        alt, is_time, "secondary_", "y2_title", style.HEIGHT_SECONDARY, refs="limits"
    )
    chart = alt.vconcat(main, second, spacing=18).resolve_scale(x="shared")
    return finish_template(chart, "control-chart")


# ------------------------------------------------------------------------------------------------
# Rows
# ------------------------------------------------------------------------------------------------


def _signal_text(signals: Sequence[Signal], n: int, offset: int = 0) -> dict[int, list[str]]:
    per_point: dict[int, list[str]] = {}
    for s in signals:
        for i in s.indices:
            j = int(i) + offset
            if 0 <= j < n:
                per_point.setdefault(j, [])
                if s.description not in per_point[j]:
                    per_point[j].append(s.description)
    return per_point


def _point_rows(
    xa: XAxis,
    ctx: SeriesContext,
    values: Sequence,
    marked: dict[int, list[str]],
    offset: int = 0,
    info: Sequence[str] | None = None,
    fitted: Sequence[bool] | None = None,
) -> list[dict]:
    """Rows for the line and points; ``line`` numbers the pieces of the broken line."""
    rows = []
    group = 0
    prev_seg = None
    prev_missing = True
    for k, f in enumerate(num_list(values)):
        i = k + offset
        seg = ctx.segment[i]
        if f is None:
            prev_missing = True
            continue
        if prev_seg is not None and (seg != prev_seg or prev_missing):
            group += 1
        prev_seg = seg
        prev_missing = False
        sig = marked.get(i)
        row = {
            "x": xa.at(i),
            "label": ctx.x[i],
            "value": f,
            "stage": ctx.stage[i],
            "line": group,
            "marker": MARK_SIGNAL if sig else MARK_ORDINARY,
            "signals": "; ".join(sig) if sig else "",
        }
        if info is not None:
            row["info"] = info[k]
        if fitted is not None:
            row["fitted"] = "yes" if fitted[k] else "no"
        rows.append(row)
    return rows


def _limit_rows(xa: XAxis, chart: ControlChart, offset: int) -> tuple[list[dict], list[dict]]:
    """Step lines of CL/UCL/LCL as vertices, and the end labels ("UCL 44.4")."""
    rows: list[dict] = []
    labels: list[dict] = []
    arrays = {"centre line": chart.centre, "UCL": chart.upper, "LCL": chart.lower}
    m = len(chart.values)
    if m == 0:
        return rows, labels
    x_end = xa.at(m - 1 + offset)
    for kind in _LIMIT_KINDS:
        ys = num_list(arrays[kind])
        # A step line: each run of equal values is one horizontal piece from the midpoint
        # before its first point to the midpoint after its last; consecutive pieces join with a
        # vertical step (stepped p/u limits, limits recomputed per phase). A nan ends the line
        # and draws nothing until the next finite value.
        part = 0
        k = 0
        while k < m:
            f = ys[k]
            if f is None:
                if k > 0 and ys[k - 1] is not None:
                    part += 1
                k += 1
                continue
            j = k
            while j + 1 < m and ys[j + 1] == f:
                j += 1
            text = f"{_LIMIT_SHORT[kind]} {fmt(f)}"
            key = f"{kind} {part}"
            for x in (xa.half_before(k + offset), xa.half_after(j + offset)):
                rows.append(
                    {"x": x, "y": f, "kind": kind, "part": key, "order": len(rows), "text": text}
                )
            k = j + 1
        last = next((y for y in reversed(ys) if y is not None), None)
        if last is not None:
            labels.append(
                {"x": x_end, "y": last, "text": f"{_LIMIT_SHORT[kind]} {fmt(last)}", "kind": kind}
            )
    return rows, labels


def _limits_info(chart: ControlChart) -> list[str]:
    out = []
    memo: dict[tuple, str] = {}
    lows, centres, highs = num_list(chart.lower), num_list(chart.centre), num_list(chart.upper)
    for key in zip(lows, centres, highs, strict=True):
        if key in memo:
            out.append(memo[key])
            continue
        lo, c, hi = key
        parts = []
        if lo is not None:
            parts.append(f"LCL {fmt(lo)}")
        if c is not None:
            parts.append(f"CL {fmt(c)}")
        if hi is not None:
            parts.append(f"UCL {fmt(hi)}")
        memo[key] = ", ".join(parts)
        out.append(memo[key])
    return out


def _fitted_sentence(ctx: SeriesContext, fitted: np.ndarray) -> str:
    mask = [bool(b) for b in np.asarray(fitted, dtype=bool)]
    n = len(mask)
    if n and all(mask):
        span = f"{ctx.x[0]} to {ctx.x[-1]}"
        return f"limits from all {n} points ({span})"
    if not any(mask):
        return "limits given in advance, not computed from these points"
    parts = []
    for a, b, on in stage_runs(mask):
        if not on:
            continue
        name = ctx.stage[a]
        span = f"{ctx.x[a]} to {ctx.x[b]}" if b > a else f"{ctx.x[a]}"
        count = plural(b - a + 1, "point")
        parts.append(f"{name}, {span} ({count})" if name else f"{span} ({count})")
    return "limits from " + "; ".join(parts)


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


def run_chart(ctx: SeriesContext, values, analysis: RunChartAnalysis) -> ChartSpec:
    """Values over time with their median; points in a run/shift/trend signal marked by shape."""
    vals = list(values)
    n = len(ctx.x)
    _check_len("values", vals, n)
    xa = x_axis(ctx)
    tpl = cached_template(("run-chart", ctx.x_is_time), lambda: _run_template(ctx.x_is_time))

    # Mark points of pattern signals; a signal spanning every point (too few / too many
    # crossings) is a statement about the whole series and is named in the subtitle only.
    local = [s for s in analysis.signals if 0 < len(s.indices) < n]
    marked = _signal_text(local, n)
    points = _point_rows(xa, ctx, vals, marked)
    median = num(analysis.median)
    median_text = "median " + with_unit(fmt(median), ctx.unit)
    centre = (
        [{"y": median, "x": xa.at(n - 1), "text": median_text}] if median is not None and n else []
    )
    datasets = {
        "points": points,
        "centre": centre,
        "bands": band_rows(xa, ctx.stage),
        "events": event_rows(xa, ctx.events),
    }
    values_map = {"y_title": titled(ctx.metric_name, ctx.unit)}
    if not ctx.x_is_time:
        values_map.update(xa.axis_values())

    rules = _RULE_SET_NAMES.get(analysis.rule_set, analysis.rule_set)
    facts = [median_text, f"longest run {analysis.longest_run}"]
    if analysis.longest_run_limit is not None:
        facts[-1] += f" (signal above {analysis.longest_run_limit})"
    if analysis.crossings_limit is not None:
        facts.append(f"{analysis.crossings} crossings (signal below {analysis.crossings_limit})")
    elif analysis.runs_limits is not None:
        lo, hi = analysis.runs_limits
        facts.append(f"{analysis.runs} runs (expected {lo + 1} to {hi - 1})")
    subtitle = [
        f"{rules}: " + ", ".join(facts),
        _signals_sentence(analysis.signals, max_kinds=2),
        *analysis.notes,
    ]
    spec = make_spec(tpl, values_map, datasets, f"{ctx.metric_name} \u2014 run chart", subtitle)

    x_col = "date" if ctx.x_is_time else "point"
    has_stage = any(ctx.stage)
    all_marked = _signal_text(analysis.signals, n)
    table = []
    for i in range(n):
        row = {x_col: ctx.x[i]}
        if has_stage:
            row["phase"] = ctx.stage[i]
        row["value"] = num(vals[i])
        row["median"] = median
        row["signals"] = "; ".join(all_marked.get(i, []))
        table.append(row)
    columns = (x_col,) + (("phase",) if has_stage else ()) + ("value", "median", "signals")
    summary = (
        f"Run chart of {ctx.metric_name}: {plural(n, 'point')}, {median_text}; "
        f"{_signals_sentence(analysis.signals)}."
    )
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)


def control_chart(ctx: SeriesContext, chart: ControlChart, signals: Sequence[Signal]) -> ChartSpec:
    """The control chart with centre line and limits per point; its mR/R/S chart beneath."""
    n = len(ctx.x)
    for name in ("values", "centre", "lower", "upper", "fitted"):
        _check_len(f"chart.{name}", getattr(chart, name), n)
    sec = chart.secondary
    offset = 0
    if sec is not None:
        offset = n - len(sec.values)
        if offset not in (0, 1):
            raise ValueError(
                f"the secondary chart has {len(sec.values)} points; expected {n} or {n - 1}"
            )
        for name in ("centre", "lower", "upper"):
            _check_len(f"chart.secondary.{name}", getattr(sec, name), len(sec.values))
    xa = x_axis(ctx)
    is_time = ctx.x_is_time
    has_sec = sec is not None
    tpl = cached_template(
        ("control-chart", is_time, has_sec), lambda: _control_template(is_time, has_sec)
    )

    main_signals = [s for s in signals if s.chart != "secondary"]
    sec_signals = [s for s in signals if s.chart == "secondary"]
    marked = _signal_text(main_signals, n)
    limits, labels = _limit_rows(xa, chart, 0)
    datasets = {
        "points": _point_rows(
            xa, ctx, chart.values, marked, info=_limits_info(chart), fitted=chart.fitted
        ),
        "limits": limits,
        "labels": labels,
        "bands": band_rows(xa, ctx.stage),
        "events": event_rows(xa, ctx.events),
    }
    unit_main = ctx.unit if chart.kind in _UNIT_KINDS else ""
    main_name = ctx.metric_name if chart.kind == "individuals" else chart.label
    values_map = {"y_title": titled(main_name, unit_main)}
    sec_marked: dict[int, list[str]] = {}
    if sec is not None:
        sec_marked = _signal_text(sec_signals, n, offset)
        s_limits, s_labels = _limit_rows(xa, sec, offset)
        datasets["secondary_points"] = _point_rows(
            xa,
            ctx,
            sec.values,
            sec_marked,
            offset=offset,
            info=_limits_info(sec),
            fitted=np.asarray(sec.fitted, dtype=bool)
            if len(sec.fitted) == len(sec.values)
            else np.asarray(chart.fitted, dtype=bool)[offset:],
        )
        datasets["secondary_limits"] = s_limits
        datasets["secondary_labels"] = s_labels
        values_map["y2_title"] = titled(sec.label, ctx.unit if sec.kind in _UNIT_KINDS else "")
    if not is_time:
        values_map.update(xa.axis_values())

    title = f"{ctx.metric_name} \u2014 {chart.label}" + (f" and {sec.label}" if sec else "")
    subtitle = [
        _fitted_sentence(ctx, chart.fitted) + f"; sigma from {chart.sigma_method}"
        if chart.sigma_method
        else _fitted_sentence(ctx, chart.fitted),
        _signals_sentence(signals, max_kinds=2),
        *chart.notes,
    ]
    if sec is not None:
        subtitle.extend(sec.notes)
    spec = make_spec(tpl, values_map, datasets, title, subtitle)

    # --- table ---
    x_col = "date" if is_time else "point"
    has_stage = any(ctx.stage)
    fitted = np.asarray(chart.fitted, dtype=bool)
    abbr = _SECONDARY_SHORT.get(sec.kind, sec.label) if sec is not None else ""
    columns: list[str] = [x_col]
    if has_stage:
        columns.append("phase")
    if chart.sizes is not None:
        columns.append("subgroup size")
    columns += ["value", "centre line", "LCL", "UCL", "used for limits", "signals"]
    if sec is not None:
        columns += [abbr, f"{abbr} centre line", f"{abbr} LCL", f"{abbr} UCL"]
    cols: dict[str, list] = {}
    if chart.sizes is not None:
        cols["subgroup size"] = num_list(chart.sizes)
    cols["value"] = num_list(chart.values)
    cols["centre line"] = num_list(chart.centre)
    cols["LCL"] = num_list(chart.lower)
    cols["UCL"] = num_list(chart.upper)
    if sec is not None:
        pad = [None] * offset
        cols[abbr] = pad + num_list(sec.values)
        cols[f"{abbr} centre line"] = pad + num_list(sec.centre)
        cols[f"{abbr} LCL"] = pad + num_list(sec.lower)
        cols[f"{abbr} UCL"] = pad + num_list(sec.upper)
    table = []
    for i in range(n):
        row: dict = {x_col: ctx.x[i]}
        for name in columns[1:]:
            if name == "phase":
                row[name] = ctx.stage[i]
            elif name == "used for limits":
                row[name] = "yes" if fitted[i] else "no"
            elif name == "signals":
                row[name] = "; ".join(marked.get(i, []) + sec_marked.get(i, []))
            else:
                row[name] = cols[name][i]
        table.append(row)

    last = {lab["kind"]: lab["text"] for lab in labels}
    lim = ", ".join(last[k] for k in ("LCL", "centre line", "UCL") if k in last)
    summary = (
        f"{chart.label} chart of {ctx.metric_name}: {plural(n, 'point')}"
        + (f", {lim} (at the last point)" if lim else "")
        + f"; {_signals_sentence(signals)}."
    )
    return ChartSpec(spec=spec, table=table, columns=tuple(columns), summary=summary)
