"""The cards of a metric's section on the project page, one named step per display (run chart,
control chart, histogram, box plot, Pareto chart, column chart): each draws its chart, says
its findings and cautions, writes its method line and adds its part of the results.json entry.
:mod:`steadyline.site.metric_view` puts them in the page's order.
"""

from __future__ import annotations

from .. import advice
from ..analysis import MetricAnalysis, points_note, values_brief, values_note
from ..charts import (
    SeriesContext,
    box_chart,
    column_chart,
    control_chart,
    histogram_chart,
    pareto_chart,
    run_chart,
)
from ..charts.base import fmt as chart_fmt
from ..charts.categorical import MAX_BARS, gathered
from ..vocab import RUN_RULES_DETAIL, RunRules, control_chart_kind
from .cards import Displays, signals_json
from .drawn import box_json, by_period_text, column_json, pareto_json
from .serialise import plain


def series_cards(
    d: Displays,
    a: MetricAnalysis,
    ctx: SeriesContext,
    labels: tuple[str, str],
    result: dict,
) -> tuple[int, int]:
    """The run and control charts of a time series (*labels*: the signal and run rule sets'
    names); returns its signals, and those that start in the baseline (the rest mostly show
    the change)."""
    open_signals = baseline_signals = 0
    aside_caution = _aside_caution(a)
    if a.run is not None:
        run_card(d, a, ctx, labels[1], aside_caution)
        result["run_chart"] = plain(a.run) | {"signals": signals_json(a.run.signals, a.x)}
        open_signals += len(a.run.signals)
        baseline_signals += _in_baseline(a.run.signals, a.stage_names)
    if a.control is not None:
        control_card(d, a, ctx, labels[0], aside_caution)
        result["control_chart"] = {
            "choice": a.choice,
            "chart": a.control,
            "signals": signals_json(a.signals, a.x),
        }
        open_signals += len(a.signals)
        baseline_signals += _in_baseline(a.signals, a.stage_names)
    return open_signals, baseline_signals


def run_card(
    d: Displays, a: MetricAnalysis, ctx: SeriesContext, run_label: str, aside_caution: list[str]
) -> None:
    assert a.run is not None
    m = a.spec
    chart = run_chart(ctx, a.point_values, a.run, aside=a.aside)
    d.add(
        "run",
        "Run chart with median",
        chart,
        advice.run_findings(a.run, a.x, run_label),
        advice.run_cautions(a.run) + (aside_caution if a.control is None else []),
        _lead(points_note(m))
        + "Median of the baseline as centre line"
        + (" (without the points set aside)" if a.aside is not None else "")
        + f"; rules: {run_label} ({RUN_RULES_DETAIL[RunRules(m.run_rules)]})."
        + (f" {aside_text(a)}" if a.control is None else "")
        + by_period_text(a),
        notes=a.run.notes,
    )


def control_card(
    d: Displays,
    a: MetricAnalysis,
    ctx: SeriesContext,
    signal_label: str,
    aside_caution: list[str],
) -> None:
    control = a.control
    assert control is not None
    m = a.spec
    chart = control_chart(ctx, control, a.signals)
    secondary = control.secondary.kind if control.secondary is not None else None
    title = "Control chart: " + control_chart_kind(control.kind, secondary).label
    limits = "the baseline, carried forward" if m.limits == "baseline" else "each period separately"
    d.add(
        "control",
        title,
        chart,
        advice.control_findings(control, a.signals, a.x, signal_label, a.stage_names),
        advice.control_cautions(control) + aside_caution,
        _lead(points_note(m)) + f"{_sentence(a.choice.reason) if a.choice else ''} "
        f"Sigma: {control.sigma_method}. "
        f"Limits from {limits}"
        f"; rules: {signal_label}."
        + by_period_text(a)
        + (f" {aside_text(a)}" if a.aside is not None else ""),
        notes=_drawing_notes(control),
    )


def histogram_card(d: Displays, a: MetricAnalysis, result: dict) -> None:
    """The baseline's histogram. A rolled-up metric's histogram, box plot and capability
    describe its individual values, and say so (its run and control charts judge the period
    values)."""
    h = a.histogram
    assert h is not None
    m = a.spec
    note = values_note(m, h.n)
    chart = histogram_chart(
        h,
        unit=m.unit,
        lsl=m.spec_lower,
        usl=m.spec_upper,
        target=m.target,
        normal_curve=m.normal_curve,
        title=f"{m.name}, baseline",
        measure=m.name,
        note=values_brief(m, h.n),
    )
    d.add(
        "histogram",
        "Histogram of the baseline" + (", individual values" if note else ""),
        chart,
        cautions=advice.histogram_cautions(h.n),
        method=_lead(note) + _lead(aside_values_text(a)) + f"Bins by the {h.rule_label} rule.",
    )
    result["histogram"] = h


def box_card(d: Displays, a: MetricAnalysis, result: dict) -> None:
    """The baseline's box plot (of the individual values, as the histogram)."""
    box = a.box
    assert box is not None
    m = a.spec
    note = values_note(m, box.n)
    chart = box_chart([("Baseline", box)], unit=m.unit, measure=m.name, note=values_brief(m, box.n))
    d.add(
        "box",
        "Box plot of the baseline" + (", individual values" if note else ""),
        chart,
        cautions=advice.box_cautions(box.n),
        method=_lead(note)
        + _lead(aside_values_text(a))
        + f"Quartiles by {box.method_label}; whiskers reach the most extreme values "
        "inside the Tukey fences at 1.5 × IQR; points beyond are drawn one by one.",
    )
    result["box_plot"] = box_json(box)


def category_cards(d: Displays, a: MetricAnalysis, result: dict) -> None:
    """A categories metric's Pareto and column charts, with what they count."""
    period, scope = category_period(a), a.category_scope
    if a.pareto is not None:
        chart = pareto_chart(a.pareto, period=period)
        d.add(
            "pareto",
            f"Pareto chart of {'the ' if scope == 'baseline' else ''}{scope}",
            chart,
            advice.pareto_findings(a.pareto),
            # (their value axes start at zero by construction: tests/test_page_data_flow.py)
            advice.pareto_cautions(a.pareto),
            "Bars in descending order; the line is the cumulative percentage on the right "
            "axis, whose 100% sits level with the total on the left axis.",
        )
        result["pareto"] = pareto_json(a.pareto) | {
            "gathered_categories": gathered(len(a.pareto.categories)),
            "scope": scope,
            "values": a.category_rows,
        }
    if a.column is not None:
        names, counts = a.column
        chart = column_chart(names, counts, unit=a.spec.unit or "count", period=period)
        d.add(
            "column",
            f"Column chart by category, {scope}",
            chart,
            cautions=advice.column_cautions(len(names)),
            method="Categories in alphabetical order; the count axis starts at zero."
            + (
                f" Only the {MAX_BARS - 1} largest are drawn, and one last bar for all the "
                "others; the table lists every category."
                if gathered(len(names))
                else ""
            ),
        )
        result["column_chart"] = column_json(a.pareto, names, counts) | {
            "gathered_categories": gathered(len(names))
        }


def category_period(a: MetricAnalysis) -> str:
    """What a categories metric's Pareto and column chart count: the period, and how many
    values (rows) fall in it."""
    m = a.spec
    n = a.category_rows
    values = f"{chart_fmt(float(n))} value{'' if n == 1 else 's'}"  # 1112, 12,345 as charts write
    if a.category_scope == "baseline":
        assert m.baseline is not None  # a baseline scope has a baseline period
        return f"baseline {m.baseline.label()}, {values}"
    why = (
        "no baseline period set"
        if m.baseline is None
        else "no date column to find the baseline period by"
        if a.point_periods is None
        else "no row falls in the baseline period"
    )
    return f"all data ({why}), {values}"


def aside_text(a: MetricAnalysis) -> str:
    """The card's one sentence on the points set aside, with their days and reasons: "Set
    aside, a known cause found and removed (grey squares; left out of the centre line, limits
    and median, and not judged): 2026-02-16 to 2026-02-18, 3 points: rims held at customs." """
    parts = []
    for e, k in zip(a.spec.set_aside, a.aside_counts, strict=True):
        parts.append(f"{e.label()}, {k} point{'' if k == 1 else 's'}: {e.reason.rstrip('.')}")
    return (
        "Set aside, a known cause found and removed (grey squares; left out of the centre "
        "line, limits and median, and not judged): " + "; ".join(parts) + "."
    )


def aside_values_text(a: MetricAnalysis) -> str:
    """What the baseline's histogram, box plot and capability leave out ("" when nothing)."""
    k = a.values_aside
    if not k:
        return ""
    return (
        f"Without the {k} value{'' if k == 1 else 's'} of the points set aside (a known "
        "cause found and removed)."
    )


def _aside_caution(a: MetricAnalysis) -> list[str]:
    if a.aside is None:
        return []
    base = a.in_baseline
    return advice.aside_cautions(int((a.aside & base).sum()), int(base.sum()))


def _lead(sentence: str) -> str:
    """A sentence put before a card's method line ("" when there is none)."""
    return f"{sentence} " if sentence else ""


def _drawing_notes(chart) -> tuple[str, ...]:
    """A control chart's notes on how it was drawn (moving ranges left out, …): the card puts
    them with its method; the rules-of-thumb cautions stay in view."""
    notes = tuple(chart.notes)
    return notes + tuple(chart.secondary.notes) if chart.secondary is not None else notes


def _sentence(text: str) -> str:
    """A phrase as a sentence: capital first letter, full stop at the end."""
    text = text.strip()
    if not text:
        return text
    text = text[0].upper() + text[1:]
    return text if text.endswith((".", "!", "?")) else text + "."


def _in_baseline(signals, stage_names) -> int:
    return sum(1 for g in signals if g.indices and stage_names[g.indices[0]] == "Baseline")
