"""The run chart: values over time with their median, points in a run-chart signal marked."""

from __future__ import annotations

import numpy as np

from ...stats.results import RunChartAnalysis
from ...vocab import RunRules, is_proportion_unit, proportion_text
from .. import style
from ..base.events import headroom_rows
from ..base.numbers import disp, fmt, num, num_list, plural, with_unit
from ..base.periods import band_values
from ..base.templates import axis_title, cached_template, make_spec
from ..base.types import ChartSpec, ColumnTable, SeriesContext
from ..base.xaxis import XAxis, x_axis
from .coded import _signal_text
from .rows import _bands, _events, _exact, _Keys, _point_rows, _series_rows, _x_values
from .shape import _check_len
from .tables import _signal_column, _yes_no
from .templates import _run_template
from .words import _aside_words, _measure_title, _signals_sentence


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
    median = num(analysis.median)
    median_text = "median " + (
        proportion_text(median, ctx.unit, fmt)
        if is_proportion_unit(ctx.unit)
        else with_unit(fmt(median), ctx.unit)
    )
    datasets = _run_datasets(ctx, xa, vals, analysis, aside, median, median_text)
    values_map = {"y_title": axis_title(_measure_title(ctx, "individuals"), style.HEIGHT_MAIN)}
    values_map.update(_x_values(ctx, xa))  # copied: the remembered dict stays as it is
    values_map.update(band_values(datasets["bands"]))
    spec = make_spec(
        tpl,
        values_map,
        datasets,
        f"{ctx.metric_name} \u2014 run chart",
        _run_subtitle(ctx, analysis, median_text, aside),
        exact=_exact(ctx, datasets),
    )
    table, columns = _run_table(ctx, vals, analysis, median, aside)
    summary = (
        f"Run chart of {ctx.metric_name}: {plural(n, 'point')}, {median_text}; "
        f"{_signals_sentence(analysis.signals)}."
    )
    return ChartSpec(spec=spec, table=table, columns=columns, summary=summary)


def _run_datasets(
    ctx: SeriesContext,
    xa: XAxis,
    vals: list,
    analysis: RunChartAnalysis,
    aside: np.ndarray | None,
    median: float | None,
    median_text: str,
) -> dict[str, list[dict]]:
    n = len(ctx.x)
    # Mark points of pattern signals; a signal spanning every point (too few / too many
    # crossings) is a statement about the whole series and is named in the subtitle only.
    local = [s for s in analysis.signals if 0 < len(s.indices) < n]
    marked = _signal_text(local, n)
    keys = _Keys()
    points = _point_rows(xa, ctx, _series_rows(ctx, vals, marked, keys, aside=aside))
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
    return datasets


def _run_subtitle(
    ctx: SeriesContext, analysis: RunChartAnalysis, median_text: str, aside: np.ndarray | None
) -> list[str]:
    """The values the chart is judged by; what signals is said once, in the sentences of its
    card (site.cards), and the notes go with the card's method."""
    rules = RunRules(analysis.rule_set).label
    facts = [median_text, f"longest run {analysis.longest_run}"]
    if analysis.longest_run_limit is not None:
        facts[-1] += f" (signal above {analysis.longest_run_limit})"
    if analysis.crossings_limit is not None:
        facts.append(f"{analysis.crossings} crossings (signal below {analysis.crossings_limit})")
    elif analysis.runs_limits is not None:
        lo, hi = analysis.runs_limits
        facts.append(f"{analysis.runs} runs (expected {lo + 1} to {hi - 1})")
    subtitle = [
        *([ctx.points_note] if ctx.points_note else []),
        f"{rules}: " + ", ".join(facts),
    ]
    if aside is not None:
        subtitle[-1] += f"; {_aside_words(int(aside.sum()))}"
    return subtitle


def _run_table(
    ctx: SeriesContext,
    vals: list,
    analysis: RunChartAnalysis,
    median: float | None,
    aside: np.ndarray | None,
) -> tuple[ColumnTable, tuple[str, ...]]:
    n = len(ctx.x)
    x_col = "date" if ctx.x_is_time else "point"
    has_stage = any(ctx.stage)
    all_marked = _signal_text(analysis.signals, n)
    columns = (x_col,) + (("period",) if has_stage else ()) + ("value", "median", "signals")
    cells = {
        x_col: ctx.x,
        "period": ctx.stage,
        "value": num_list(vals),
        "median": [median] * n,
        "signals": _signal_column(n, all_marked),
    }
    if aside is not None:
        columns += ("set aside",)
        cells["set aside"] = _yes_no(aside)
    return ColumnTable(columns, cells), columns
