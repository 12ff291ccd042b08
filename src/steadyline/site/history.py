"""The history page of a project: its phases, its events, and before/after for every metric."""

from __future__ import annotations

import numpy as np

from .. import advice
from ..analysis import MetricAnalysis, values_brief, values_note
from ..charts import (
    SeriesContext,
    box_chart,
    histogram_chart,
    period_pareto_chart,
    staged_control_chart,
)
from ..charts.base import fmt as chart_fmt
from ..charts.categorical import common_order, gathered
from ..config import PHASES, ProjectSpec
from ..stats.compare import format_p_value
from ..stats.evidence import DIRECTIONS
from ..vocab import RunRules, percentage_points, proportion_text, proportion_unit
from .capability_view import capability_view
from .cards import Displays, signals_json
from .change_studies import (
    capability_json,
    capability_note,
    capability_rows,
    capability_sentence,
    mix_json,
    mix_rows,
    mix_sentence,
)
from .drawn import box_json, by_period_text, pareto_json
from .figures_text import fmt, pct
from .studies import business_json, business_note, business_rows, power_json, power_row
from .templates import render

MEASURE_TEXT = {"mean": "Mean", "median": "Median", "proportion": "Proportion", "rate": "Rate"}


def timeline(spec: ProjectSpec) -> list[dict]:
    reached = dict(spec.phase_dates)
    current = PHASES.index(spec.phase)
    out = []
    for i, ph in enumerate(PHASES):
        out.append(
            {
                "phase": ph,
                "label": ph.capitalize(),
                "date": reached[ph].isoformat() if ph in reached else "",
                "state": "current" if i == current else ("reached" if i < current else "ahead"),
            }
        )
    return out


def comparison_rows(a: MetricAnalysis) -> list[tuple[str, str, str]]:
    c = a.comparison
    if c is None:
        return []
    unit = a.spec.unit
    show = pct if c.measure == "proportion" else (lambda v: fmt(v, unit, 4))
    # a change of a proportion is a difference of percentages: percentage points
    change = (
        percentage_points(c.change)
        if c.measure == "proportion"
        else fmt(c.change, unit, 4).replace("-", "−")
    )
    # what the test compared: the period values of a rolled-up metric, else the individual
    # values, or each period's items or area pooled (n then counts the periods)
    what = a.counted or ("values" if c.measure in ("mean", "median") else "periods")
    rows = [
        (
            f"{MEASURE_TEXT.get(c.measure, c.measure)}, baseline",
            show(c.baseline),
            f"{c.n_baseline} {what}",
        ),
        (f"{MEASURE_TEXT.get(c.measure, c.measure)}, after", show(c.after), f"{c.n_after} {what}"),
        (
            "Change",
            change
            + (
                f" ({c.percent_change:+.1f}%{' relative' if c.measure == 'proportion' else ''})".replace(
                    "-", "−"
                )
                if c.percent_change is not None
                else ""
            ),
            {
                True: "in the better direction",
                False: "in the worse direction",
                None: "direction not judged",
            }[c.improved],
        ),
        (
            "Test",
            f"{c.test}, on the {a.compared}" if a.compared else c.test,
            format_p_value(c.p_value),
        ),
    ]
    if a.after_shift is not None:
        sh = a.after_shift
        rows.append(
            (
                "Sustained shift",
                "yes" if sh.signals else "no",
                "after-period points against the baseline median "
                + (
                    proportion_text(sh.median, proportion_unit(unit), lambda v: fmt(v, "", 3))
                    if a.effective_type == "defectives"
                    else fmt(sh.median, unit, 4)
                )
                + f" by the {RunRules(sh.rule_set).label}",
            )
        )
    return rows


def change_evidence_json(evidence, chart, x) -> list[dict]:
    """The points marked as evidence of a change, by chart and direction, in results.json."""
    out: list[dict] = []
    if evidence is None:
        return out
    for which, ev, sub in (
        ("main", evidence[0], chart),
        ("secondary", evidence[1], chart.secondary),
    ):
        if ev is None or sub is None:
            continue
        offset = len(chart.values) - len(sub.values)
        for d in DIRECTIONS:
            idx = np.flatnonzero(ev.change == d).tolist()
            if idx:
                out.append(
                    {
                        "chart": which,
                        "direction": d,
                        "indices": idx,
                        "dates": [x[i + offset] for i in idx],
                    }
                )
    return out


def after_note(a: MetricAnalysis) -> str:
    """The sentence that stands where a metric has no comparison table: true to the charts
    beside it (a category metric with after data has a Pareto of each period, not a test)."""
    if a.comparison is not None:
        return ""
    if not a.has_after:
        return (
            "No after period with data yet: the comparison appears once the after period has data."
        )
    if len(a.period_paretos) > 1:
        after = int(a.in_after.sum())
        (b_name, b), (f_name, f) = a.period_paretos[0], a.period_paretos[-1]

        def counted(p, rows: int) -> str:  # rows tell more only when each row has a weight
            total = fmt(p.total, a.spec.unit or ("values" if a.spec.count is None else ""), 4)
            return total if a.spec.count is None else f"{total} from {chart_fmt(float(rows))} rows"

        why = "; ".join(msg for disp, msg in a.failures if disp == "change in mix")
        return (
            f"Categories are compared by their Pareto charts below, period by period, with no "
            f"test of the change{f' ({why})' if why else ''}: the {b_name.lower()} counts "
            f"{counted(b, a.category_rows)}, the {f_name.lower()} period "
            f"{counted(f, after)}."
        )
    why = "; ".join(msg for disp, msg in a.failures if disp in ("comparison", "history"))
    if a.effective_type == "categories":
        why = why or (
            "no row falls in the baseline period" if a.category_scope != "baseline" else ""
        )
    return "The after period has data, but it could not be compared with the baseline" + (
        f": {why}." if why else "."
    )


def history_section(
    spec: ProjectSpec, a: MetricAnalysis, files: dict[str, bytes], sctx: SeriesContext | None
) -> tuple[dict, dict]:
    """One metric's section of the history page and its results.json entry; ``sctx`` is the
    series layout the project page made (None for categories)."""
    m = a.spec
    d = Displays(spec.slug, m.id, files, prefix="history-")
    result: dict = {"id": m.id, "name": m.name}
    if a.control is not None and a.effective_type != "categories":
        assert sctx is not None  # a time series has its layout
        staged_card(d, a, sctx, result)
    if len(a.period_boxes) > 1:
        period_box_card(d, a, result)
    caps = period_histogram_cards(d, a, result)
    if len(a.period_paretos) > 1:
        period_pareto_card(d, a, result)
    if a.comparison is not None:
        result["comparison"] = a.comparison
    if a.after_shift is not None:
        result["sustained_shift"] = bool(a.after_shift.signals)
    rows, sentence = comparison_rows(a), a.comparison.sentence if a.comparison else ""
    if a.mix is not None:
        rows, sentence = mix_rows(a.mix), mix_sentence(a.mix)
        result["mix_change"] = mix_json(a)
    if (row := power_row(a)) is not None and rows:
        rows.append(row)
    if a.after_power is not None:
        result["after_sample_power"] = power_json(a)
    cap_rows = capability_rows(a)
    if a.capability_change is not None:
        result["capability_change"] = capability_json(a)
    if len(a.business) > 1:
        result["business"] = {name: business_json(f, m.sigma_level) for name, f in a.business}
    if cap_rows:
        # the indices are said once, in the table side by side: the periods' blocks keep
        # their verdict, drawing and basis
        for c in caps:
            c["view"] = c["view"] | {"tiles": []}
    section = {
        "id": m.id,
        "name": m.name,
        "unit": m.unit,
        "displays": d.cards,
        "comparison": rows,
        "note": after_note(a),
        "sentence": sentence,
        "improved": a.comparison.improved if a.comparison else None,
        "neutral": a.mix is not None,
        "capabilities": caps,
        "capability_rows": cap_rows,
        "capability_sentence": capability_sentence(a),
        "capability_note": capability_note(a) if cap_rows else "",
        "business_rows": business_rows(a),
        "business_note": business_note(a) if len(a.business) > 1 else "",
    }
    return section, result


STAGED_METHOD_OWN = (
    "Baseline limits carried forward over the later points (dashed), and "
    "the after period's own centre line and limits over the after period "
    "(solid). A later point in a signal against the baseline limits is "
    "evidence of a change, marked by its direction; a point in a signal on "
    "its own period's limits (the baseline's, or the after period's own) is "
    "marked with the signal diamond: that period is not yet stable."
)
STAGED_METHOD_CARRIED = (
    "Baseline limits carried forward over the later points (dashed). A later "
    "point in a signal against them is evidence of a change, marked by its "
    "direction; a baseline point in a signal on the baseline's limits is "
    "marked with the signal diamond. The after period has too few points "
    "for limits of its own, so its stability is not judged."
)


def staged_card(d: Displays, a: MetricAnalysis, sctx: SeriesContext, result: dict) -> None:
    """The control chart by period. Points outside the baseline are judged against the
    baseline limits carried forward (a.signals): a signal there is evidence of a change,
    marked by its direction; points in signals on their own period's limits (the baseline's,
    the after period's own: a.after_signals) are marked as instability (a.evidence tells the
    two apart)."""
    control, evidence = a.control, a.evidence
    assert control is not None and evidence is not None  # made together (analysis)
    own = a.after_limits is not None
    chart = staged_control_chart(
        sctx, control, a.after_limits, a.signals, a.after_signals, a.evidence
    )
    findings = advice.change_findings(evidence, control, a.signals)
    if own:
        findings += advice.own_limit_findings(a.after_signals, a.x)
    d.add(
        "staged-control",
        "Control chart by period",
        chart,
        findings=findings,
        method=(STAGED_METHOD_OWN if own else STAGED_METHOD_CARRIED) + by_period_text(a),
    )
    staged = {
        "own_after_limits": own,
        "chart": control,
        "signals": signals_json(a.signals, a.x),
        "change_evidence": change_evidence_json(a.evidence, control, a.x),
    }
    if own:
        staged["after_chart"] = a.after_limits
        staged["after_signals"] = signals_json(a.after_signals, a.x)
    result["control_chart_by_period"] = staged


def period_box_card(d: Displays, a: MetricAnalysis, result: dict) -> None:
    """The box plots of every period on one scale."""
    m = a.spec
    note = values_note(m, sum(b.n for _, b in a.period_boxes))
    brief = values_brief(m, sum(b.n for _, b in a.period_boxes))
    chart = box_chart(a.period_boxes, unit=m.unit, measure=m.name, note=brief)
    d.add(
        "period-box",
        "Box plots by period" + (", individual values" if note else ""),
        chart,
        method=(f"{note} " if note else "") + "Both periods on one scale; "
        f"quartiles by {a.period_boxes[0][1].method_label}.",
    )
    result["box_plots"] = {name: box_json(b) for name, b in a.period_boxes}


def period_histogram_cards(d: Displays, a: MetricAnalysis, result: dict) -> list[dict]:
    """A histogram of each period (when there is more than one), and each period's capability
    block."""
    m = a.spec
    caps = []
    for name, h, c in a.period_histograms if len(a.period_histograms) > 1 else []:
        note = values_note(m, h.n)
        brief = values_brief(m, h.n)
        chart = histogram_chart(
            h,
            unit=m.unit,
            lsl=m.spec_lower,
            usl=m.spec_upper,
            target=m.target,
            title=f"{m.name}, {name.lower()}",
            measure=m.name,
            note=brief,
        )
        key = f"histogram-{name.lower().replace(' ', '-')}"
        d.add(
            key,
            f"Histogram, {name.lower()}" + (", individual values" if note else ""),
            chart,
            method=(f"{note} " if note else "") + "Same bin edges in every period.",
        )
        if c is not None:
            caps.append(
                {
                    "period": name,
                    "view": capability_view(c, m.unit),
                    "trustworthy": c.trustworthy,
                    "reasons": list(c.reasons),
                    "verdict": advice.capability_verdict(c),
                }
            )
    if len(a.period_histograms) > 1:
        result["histograms"] = {name: h for name, h, _ in a.period_histograms}
        result["capability"] = {name: c for name, _, c in a.period_histograms if c}
    return caps


def period_pareto_card(d: Displays, a: MetricAnalysis, result: dict) -> None:
    """The Pareto chart of every period, categories in the baseline's order."""
    chart = period_pareto_chart(a.period_paretos)
    d.add(
        "period-pareto",
        "Pareto by period, categories in the same order",
        chart,
        method="Categories keep the baseline's order (largest first there) in every "
        "period, so shrinking bars show which causes the improvement removed; "
        "categories new after the baseline follow, largest first.",
    )
    n_gathered = gathered(len(common_order(a.period_paretos)))
    result["paretos"] = {
        name: pareto_json(p) | {"gathered_categories": n_gathered} for name, p in a.period_paretos
    }


def history_page(spec: ProjectSpec, sections: list[dict], ctx: dict, project_ctx: dict) -> str:
    """The history page, from its metrics' sections."""
    return render(
        "history.html", project=project_ctx, timeline=timeline(spec), metrics=sections, **ctx
    )
