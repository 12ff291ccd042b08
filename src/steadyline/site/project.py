"""A project's pages, all in memory: from its analysed metrics to the project page, the history
page, results.json, the hand-over pack and the index entry (:func:`project_outcome`), or the
notice page of a project that is not built (:func:`error_outcome`). A metric whose data have
errors (:class:`NotBuilt`) keeps its place and shows its problems. Nothing here reads data
files: :mod:`steadyline.pipeline.project` loads and analyses, then calls these.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .. import __version__, advice, memo
from ..analysis import (
    AFTER_OWN_LIMITS_MIN,
    MetricAnalysis,
    StudyAnalysis,
    points_note,
    values_brief,
    values_note,
)
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
from ..config import (
    PHASES,
    MetricSpec,
    PortfolioSettings,
    ProjectSpec,
)
from ..errors import Problem, ProjectError, rel
from ..files import Unreadable
from ..loading import STAGE_AFTER, STAGE_BASELINE
from ..stats.compare import format_p_value
from ..status import HeadlineFacts, judge
from ..vocab import (
    RUN_RULES_DETAIL,
    DataType,
    RunRules,
    SignalRules,
    control_chart_kind,
    percentage_points,
    period_value,
)
from .capability_view import capability_view
from .cards import (
    Displays,
    fmt,
    pct,
    safe_cell,
    series_context,
    signals_json,
)
from .common import ProjectOutcome, page_context
from .drawn import (
    box_json,
    by_period_brief,
    by_period_json,
    by_period_text,
    column_json,
    pareto_json,
)
from .history import history_page, history_section
from .index import csv_text
from .notes import render_notes
from .pack import PACK_FILE, pack_html
from .serialise import dumps_bytes, plain, rounded_number
from .studies import business_fact, business_json, measured_line, plan_fact, plan_json
from .study_view import gauge_summary, study_section
from .templates import render

RESULTS_SCHEMA = "steadyline-results/2"
BETTER_TEXT = {
    "lower": "lower values",
    "higher": "higher values",
    "target": "values close to the target",
}
PHASE_LABEL = {p: p.capitalize() for p in PHASES}


def error_outcome(
    slug: str,
    problems: list[Problem],
    settings: PortfolioSettings,
    live: str | None,
    heading: dict[str, str] | None = None,
) -> ProjectOutcome:
    """The notice page of a project that is not built. *heading*: its title and phase when
    they could be read (else the folder's name stands for the title, and no phase)."""
    heading = heading or {}
    title = heading.get("title") or slug
    phase = heading.get("phase", "")
    ctx = page_context("../../", settings, live and f"../../{live} {slug}")
    html = render(
        "error.html",
        slug=slug,
        title=title,
        problems=[{"severity": p.severity, "text": p.format()} for p in problems],
        **ctx,
    )
    entry = {
        "slug": slug,
        "title": title,
        "broken": True,
        "href": f"projects/{slug}/index.html",
        "problem_count": sum(p.severity == "error" for p in problems),
        "phase": phase,
        "phase_label": PHASE_LABEL.get(phase, ""),
        "owner": "",
        "tags": [],
        "search_text": slug if title == slug else f"{title} {slug}",
    }
    return ProjectOutcome(slug, False, {"index.html": html.encode()}, entry, problems)


@dataclass(frozen=True)
class NotBuilt:
    """A metric whose data have errors: nothing is computed for it, and its problems (errors
    and warnings of its file, sorted as printed) are shown in its place."""

    spec: MetricSpec
    problems: tuple[Problem, ...]

    @property
    def errors(self) -> int:
        return sum(p.severity == "error" for p in self.problems)


def not_built_section(b: NotBuilt) -> tuple[dict, dict]:
    """The page section and the results.json entry of a metric that could not be built."""
    m = b.spec
    lines = [p.format() for p in b.problems]
    section = {
        "id": m.id,
        "name": m.name,
        "unit": m.unit,
        "broken": True,
        "problem_count": b.errors,
        "open_signals": 0,
        "baseline_signals": 0,
        "displays": [],
        "problems": [
            {"severity": p.severity, "text": line}
            for p, line in zip(b.problems, lines, strict=True)
        ],
    }
    result = {
        "id": m.id,
        "name": m.name,
        "unit": m.unit,
        "type": m.type,
        "better": m.better,
        "file": m.file_rel,
        "not_built": True,
        "problems": lines,
    }
    return section, result


def periods_text(a: MetricAnalysis) -> str:
    m = a.spec
    if m.baseline is None:
        return "no baseline period set: all data is treated as baseline"
    text = f"baseline {m.baseline.label()}"
    if m.after:
        text += f"; after {m.after.label()}"
    return text


def category_period(a: MetricAnalysis) -> str:
    """What a categories metric's Pareto and column chart count: the period, and how many
    values (rows) fall in it."""
    m = a.spec
    n = a.category_rows
    values = f"{chart_fmt(float(n))} value{'' if n == 1 else 's'}"  # 1112, 12,345 as charts write
    if a.category_scope == "baseline":
        return f"baseline {m.baseline.label()}, {values}"
    why = (
        "no baseline period set"
        if m.baseline is None
        else "no date column to find the baseline period by"
        if "period" not in a.data.points
        else "no row falls in the baseline period"
    )
    return f"all data ({why}), {values}"


def metric_section(
    a: MetricAnalysis,
    spec: ProjectSpec,
    files: dict[str, bytes],
    metric_problems: list[Problem],
    ctx: SeriesContext | None,
) -> tuple[dict, dict]:
    """The page section and the results.json entry of one metric; ``ctx`` is its series layout
    (None for categories)."""
    m = a.spec
    d = Displays(spec.slug, m.id, files)
    unit = m.unit
    # one name per rule set, the vocabulary's, on every card, finding and chart of the page
    signal_label = SignalRules(m.signal_rules).label
    run_label = RunRules(m.run_rules).label
    result: dict = {
        "id": m.id,
        "name": m.name,
        "unit": unit,
        "type": m.type,
        "effective_type": a.data.kind,
        "better": m.better,
        "file": m.file_rel,
        "rows_read": a.data.raw_rows,
        "spec_limits": {"lower": m.spec_lower, "upper": m.spec_upper, "target": m.target},
        "periods": {
            "baseline": m.baseline and [m.baseline.start, m.baseline.end],
            "after": m.after and [m.after.start, m.after.end],
        },
        "rules": {
            "signal_rules": m.signal_rules,
            "run_rules": m.run_rules,
            "limits": m.limits,
            "quartiles": m.quartiles,
            "bins": list(m.bins) if isinstance(m.bins, tuple) else m.bins,
        },
    }
    open_signals = 0
    baseline_signals = 0  # signals that start in the baseline (the rest mostly show the change)
    result["drawn_by_period"] = by_period_json(a)
    if a.data.kind != "categories":
        pts = a.data.points
        result["points"] = {
            "label": list(a.x),
            "period": list(ctx.x),
            "value": pts["value"].to_numpy(float),
            "stage": [s for s in a.stage_names],
        }
        aside_caution = _aside_caution(a)
        if a.run is not None:
            chart = run_chart(ctx, pts["value"].to_numpy(float), a.run, aside=a.aside)
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
            result["run_chart"] = plain(a.run) | {"signals": signals_json(a.run.signals, a.x)}
            open_signals += len(a.run.signals)
            baseline_signals += _in_baseline(a.run.signals, a.stage_names)
        if a.control is not None:
            chart = control_chart(ctx, a.control, a.signals)
            title = (
                "Control chart: "
                + control_chart_kind(
                    a.control.kind,
                    a.control.secondary.kind if a.control.secondary is not None else None,
                ).label
            )
            d.add(
                "control",
                title,
                chart,
                advice.control_findings(a.control, a.signals, a.x, signal_label, a.stage_names),
                advice.control_cautions(a.control) + aside_caution,
                _lead(points_note(m)) + f"{_sentence(a.choice.reason) if a.choice else ''} "
                f"Sigma: {a.control.sigma_method}. "
                f"Limits from {'the baseline, carried forward' if m.limits == 'baseline' else 'each phase separately'}"
                f"; rules: {signal_label}."
                + by_period_text(a)
                + (f" {aside_text(a)}" if a.aside is not None else ""),
                notes=_drawing_notes(a.control),
            )
            result["control_chart"] = {
                "choice": a.choice,
                "chart": a.control,
                "signals": signals_json(a.signals, a.x),
            }
            open_signals += len(a.signals)
            baseline_signals += _in_baseline(a.signals, a.stage_names)
    if a.histogram is not None:
        # a rolled-up metric's histogram, box plot and capability describe its individual
        # values, and say so (its run and control charts judge the period values)
        note = values_note(m, a.histogram.n)
        brief = values_brief(m, a.histogram.n)
        chart = histogram_chart(
            a.histogram,
            unit=unit,
            lsl=m.spec_lower,
            usl=m.spec_upper,
            target=m.target,
            normal_curve=m.normal_curve,
            title=f"{m.name}, baseline",
            measure=m.name,
            note=brief,
        )
        d.add(
            "histogram",
            "Histogram of the baseline" + (", individual values" if note else ""),
            chart,
            cautions=advice.histogram_cautions(a.histogram.n),
            method=_lead(note)
            + _lead(aside_values_text(a))
            + f"Bins by the {a.histogram.rule_label} rule.",
        )
        result["histogram"] = a.histogram
    if a.box is not None:
        note = values_note(m, a.box.n)
        brief = values_brief(m, a.box.n)
        chart = box_chart([("Baseline", a.box)], unit=unit, measure=m.name, note=brief)
        d.add(
            "box",
            "Box plot of the baseline" + (", individual values" if note else ""),
            chart,
            cautions=advice.box_cautions(a.box.n),
            method=_lead(note)
            + _lead(aside_values_text(a))
            + f"Quartiles by {a.box.method_label}; whiskers reach the most extreme values "
            "inside the Tukey fences at 1.5 × IQR; points beyond are drawn one by one.",
        )
        result["box_plot"] = box_json(a.box)
    if a.data.kind == "categories":  # what its Pareto and column chart count
        period, scope = category_period(a), a.category_scope
    if a.pareto is not None:
        chart = pareto_chart(a.pareto, period=period)
        d.add(
            "pareto",
            f"Pareto chart of {'the ' if scope == 'baseline' else ''}{scope}",
            chart,
            advice.pareto_findings(a.pareto),
            advice.pareto_cautions(a.pareto) + advice.bar_axis_cautions(chart.spec),
            "Bars in descending order; the line is the cumulative percentage on the right "
            "axis, whose 100% sits level with the total on the left axis.",
        )
        result["pareto"] = pareto_json(a.pareto) | {
            "gathered_categories": gathered(len(a.pareto.categories)),
            "scope": scope,
            "values": a.category_rows,
        }
    if a.column is not None:
        chart = column_chart(a.column[0], a.column[1], unit=unit or "count", period=period)
        d.add(
            "column",
            f"Column chart by category, {scope}",
            chart,
            cautions=advice.column_cautions(len(a.column[0]))
            + advice.bar_axis_cautions(chart.spec),
            method="Categories in alphabetical order; the count axis starts at zero."
            + (
                f" Only the {MAX_BARS - 1} largest are drawn, and one last bar for all the "
                "others; the table lists every category."
                if gathered(len(a.column[0]))
                else ""
            ),
        )
        result["column_chart"] = column_json(a.pareto, *a.column) | {
            "gathered_categories": gathered(len(a.column[0]))
        }
    cap = None
    if a.capability is not None:
        c = a.capability
        cap = {
            "trustworthy": c.trustworthy,
            "verdict": advice.capability_verdict(c),
            "reasons": list(c.reasons),
            "view": capability_view(c, unit),
        }
        if aside_values_text(a):
            cap["view"]["basis"] = [*cap["view"]["basis"], aside_values_text(a)]
        if a.business and a.business[0][1].kind == "measured":
            # the expected yield beside the expected share outside it is the complement of
            cap["view"]["tiles"][-1]["lines"][-1:-1] = measured_line(
                a.business[0][1], m.sigma_level
            )
        result["capability"] = c
    if a.business:
        result["business"] = business_json(a.business[0][1], m.sigma_level)
    if a.after_plan is not None:
        result["after_sample_plan"] = plan_json(a)
    if a.normality is not None:
        result["normality"] = a.normality
    if m.set_aside and a.data.kind != "categories":
        result["set_aside"] = set_aside_json(a)
    if a.comparison is not None:
        result["comparison"] = a.comparison
    if a.after_shift is not None:
        result["after_shift"] = plain(a.after_shift) | {
            "signals": signals_json(a.after_shift.signals, _after_labels(a))
        }
    warnings = [c for card in d.cards for c in card["cautions"]]
    warnings += [f"{disp}: {msg}" for disp, msg in a.failures]
    result["warnings"] = warnings
    result["failures"] = [{"display": disp, "message": msg} for disp, msg in a.failures]
    section = {
        "id": m.id,
        "name": m.name,
        "unit": unit,
        "broken": False,
        "study": False,
        "gauge": None,  # the study that checks its measurements (set by the caller)
        "data_text": f"{DataType(m.type).label} from {Path(m.file_rel).name} "
        f"({a.data.raw_rows} rows{_rollup_text(m)}"
        f"{by_period_brief(a)})",
        "choice": a.choice.reason if a.choice else "",
        "periods_text": periods_text(a),
        "better_text": BETTER_TEXT[m.better]
        + (f" (target {fmt(m.target, unit)})" if m.target is not None else ""),
        "spec_text": spec_text(m),
        "study_facts": [f for f in (business_fact(a), plan_fact(a)) if f is not None],
        "rules_text": (
            f"{signal_label} on the control chart; {run_label} on the run chart"
            if a.data.kind != "categories"
            else "Pareto: the smallest set of categories reaching 80% set apart"
        ),
        "displays": d.cards,
        "capability": cap,
        "open_signals": open_signals,
        "baseline_signals": baseline_signals,
        "problems": [{"severity": "warning", "text": f"{disp}: {msg}"} for disp, msg in a.failures]
        + [{"severity": p.severity, "text": p.format()} for p in metric_problems],
    }
    result["open_signals"] = open_signals
    return section, result


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
    base = np.asarray(a.data.points["stage"].to_numpy(int) == STAGE_BASELINE)
    return advice.aside_cautions(int((a.aside & base).sum()), int(base.sum()))


def set_aside_json(a: MetricAnalysis) -> dict:
    """results.json's account of the points set aside (README, results.json schema)."""
    base = a.data.points["stage"].to_numpy(int) == STAGE_BASELINE
    aside = a.aside if a.aside is not None else np.zeros(len(base), dtype=bool)
    k, n = int((aside & base).sum()), int(base.sum())
    return {
        "points": k,
        "baseline_points": n,
        "share": k / n if n else None,
        "values": a.values_aside,
        "labels": [x for x, s in zip(a.x, aside.tolist(), strict=True) if s],
        "entries": [
            {"dates": [e.start, e.end], "reason": e.reason, "points": c}
            for e, c in zip(a.spec.set_aside, a.aside_counts, strict=True)
        ],
        "caution": advice.aside_cautions(k, n)[0] if advice.aside_cautions(k, n) else None,
    }


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


def _after_labels(a: MetricAnalysis) -> tuple[str, ...]:
    st = a.data.points["stage"].to_numpy(int)
    return tuple(x for x, s in zip(a.x, st, strict=True) if s == STAGE_AFTER)


def _rollup_text(m) -> str:
    if m.rollup is None:
        return ""
    return f", rolled up into {period_value(m.rollup.period, m.rollup.statistic, plural=True)}"


def spec_text(m) -> str:
    parts = []
    if m.spec_lower is not None:
        parts.append(f"lower {fmt(m.spec_lower, m.unit)}")
    if m.spec_upper is not None:
        parts.append(f"upper {fmt(m.spec_upper, m.unit)}")
    if m.target is not None:
        parts.append(f"target {fmt(m.target, m.unit)}")
    return ", ".join(parts)


# ----------------------------------------------------------------------------- provenance


def project_view(spec: ProjectSpec) -> dict:
    return {
        "slug": spec.slug,
        "title": spec.title,
        "owner": spec.owner,
        "phase": spec.phase,
        "phase_label": PHASE_LABEL[spec.phase],
        "problem": spec.problem,
        "tags": list(spec.tags),
        "safety_related": spec.safety_related,
        "phase_dates": [(p, d.isoformat()) for p, d in spec.phase_dates],
        "events": [{"date": e.date.isoformat(), "label": e.label} for e in spec.events],
    }


def data_to(analyses: list[MetricAnalysis]) -> str:
    """How fresh a project's data are: the last period of any of its metrics (a date), or ""."""
    ends = [
        a.data.points["period"].to_numpy().max()
        for a in analyses
        if "period" in a.data.points and len(a.data.points)
    ]
    return str(np.datetime_as_string(max(ends), unit="D")) if ends else ""


def index_entry(
    spec: ProjectSpec,
    analyses: list[MetricAnalysis],
    sections: list[dict],
    problems: list[Problem],
    has_history: bool,
    fresh: str = "",
) -> dict:
    """The project's card on the index. *analyses*: the metrics built; a headline metric not
    among them (its data have errors) is named on the card as not built."""
    head = next((a for a in analyses if a.spec.id == spec.headline.id), None)
    if head is None:
        n = next(s["problem_count"] for s in sections if s["id"] == spec.headline.id)
        headline = {
            "name": spec.headline.name,
            "spark": "",
            "spark_split": "",
            "text": f"Not built: {n} problem{'' if n == 1 else 's'} in its data.",
        }
    else:
        headline = {
            "name": head.spec.name,
            "text": headline_text(head),
            "spark": "",
            "spark_split": "",
        }
        if head.data.kind != "categories":
            headline["spark"], headline["spark_split"] = sparkline(head)
    signals = sum(s["open_signals"] for s in sections)
    baseline_signals = sum(s["baseline_signals"] for s in sections)
    warnings = sum(len(c["cautions"]) for s in sections for c in s["displays"])
    warnings += sum(1 for p in problems if p.severity == "warning")
    text = " ".join(
        [
            spec.title,
            spec.owner,
            spec.phase,
            spec.problem,
            *spec.tags,
            *(a.spec.name for a in analyses),
        ]
    )
    return {
        "slug": spec.slug,
        "title": spec.title,
        "owner": spec.owner,
        "phase": spec.phase,
        "phase_label": PHASE_LABEL[spec.phase],
        "tags": list(spec.tags),
        "href": f"projects/{spec.slug}/index.html",
        "history_href": f"projects/{spec.slug}/history.html",
        "has_history": has_history,
        "headline": headline,
        "signals": signals,
        "baseline_signals": baseline_signals,
        "warnings": warnings,
        "search_text": text,
        "broken": False,
        "problem_count": 0,
        "data_to": fresh,
        "metrics": len(analyses),
        "own_limits": any(a.after_limits is not None for a in analyses),
        "after_signals": sum(len(a.after_signals) for a in analyses),
    }


def headline_facts(a: MetricAnalysis | NotBuilt) -> HeadlineFacts:
    """What the project's status is judged from (see steadyline.status)."""
    if isinstance(a, NotBuilt):
        return HeadlineFacts(
            metric_id=a.spec.id,
            metric_name=a.spec.name,
            has_after=False,
            built=False,
            problem_count=a.errors,
        )
    c = a.comparison
    facts = {
        "metric_id": a.spec.id,
        "metric_name": a.spec.name,
        "has_after": a.has_after,
        "categories": a.data.kind == "categories",
        "control": a.control is not None,
        "own_limits_min": AFTER_OWN_LIMITS_MIN,
    }
    if c is not None:
        facts |= {
            "compared": True,
            "improved": c.improved,
            "p_value": c.p_value,
            "p_text": format_p_value(c.p_value),
            "change": c.change,
            "percent_change": c.percent_change,
        }
    else:
        facts["failure"] = "; ".join(
            dict.fromkeys(msg for disp, msg in a.failures if disp == "comparison")
        )
    if a.data.kind != "categories":
        stage = a.data.points["stage"].to_numpy(int)
        facts |= {
            "after_points": int((stage == STAGE_AFTER).sum()),
            "own_limits": a.after_limits is not None,
            "after_signals": len(a.after_signals),
        }
    return HeadlineFacts(**facts)


def headline_figures(a: MetricAnalysis | NotBuilt) -> dict[str, str]:
    """The headline metric's figures as CSV cells (for the index's download): the measure
    compared, its baseline and after values, the change. Without an after period, the
    baseline's figure the card shows. Numbers rounded as in results.json. A metric not built
    has its name and unit only."""

    def num(v) -> str:
        return "" if v is None else safe_cell(rounded_number(float(v)))

    out = {
        "metric": csv_text(a.spec.name),
        "unit": csv_text(a.spec.unit),
        "measure": "",
        "baseline": "",
        "after": "",
        "change": "",
        "percent_change": "",
    }
    if isinstance(a, NotBuilt):
        return out
    c = a.comparison
    if c is not None:
        out |= {
            "measure": c.measure,
            "baseline": num(c.baseline),
            "after": num(c.after),
            "change": num(c.change),
            "percent_change": num(c.percent_change),
        }
    elif a.run is not None and a.data.kind != "categories":
        pts = a.data.points
        base = (
            pts[pts["stage"] == STAGE_BASELINE] if (pts["stage"] == STAGE_BASELINE).any() else pts
        )
        if a.data.kind in ("defectives", "defects"):
            out |= {
                "measure": "proportion" if a.data.kind == "defectives" else "rate",
                "baseline": num(base["count"].sum() / base["size"].sum()),
            }
        else:
            out |= {"measure": "median", "baseline": num(a.run.median)}
    return out


def headline_text(a: MetricAnalysis) -> str:
    c = a.comparison
    unit = a.spec.unit
    if c is not None:
        if c.measure in ("proportion",):
            b, f = pct(c.baseline), pct(c.after)
        else:
            b, f = fmt(c.baseline, unit, 3), fmt(c.after, unit, 3)
        change = "no change"
        if c.measure == "proportion" and c.change:
            # a change of a proportion in percentage points, never a percentage of it
            change = (
                f"{'down' if c.change < 0 else 'up'} {percentage_points(abs(c.change)).lstrip('+')}"
            )
        elif c.percent_change is not None and c.percent_change != 0:
            change = f"{'down' if c.change < 0 else 'up'} {abs(c.percent_change):.0f}%"
        verdict = {True: "better", False: "worse", None: "direction not judged"}[c.improved]
        sig = (
            ""
            if c.p_value is None
            else ("; unlikely to be chance" if c.p_value < 0.05 else "; could be chance")
        )
        # a rolled-up metric's test compares its period values: the card says so
        of = f" of the {a.compared}" if a.spec.rollup is not None and a.compared else ""
        return f"{c.measure.capitalize()}{of} {b} → {f}: {change}, {verdict}{sig}."
    if a.pareto is not None:
        return (
            f"{a.category_scope.capitalize()}: {len(a.pareto.vital_few)} of "
            f"{len(a.pareto.categories)} categories make up "
            f"{a.pareto.threshold:.0f}% of {a.pareto.total:g}."
        )
    if a.run is not None:
        pts = a.data.points
        base = (
            pts[pts["stage"] == STAGE_BASELINE] if (pts["stage"] == STAGE_BASELINE).any() else pts
        )
        if a.data.kind == "defectives":
            return (
                f"Baseline proportion {pct(base['count'].sum() / base['size'].sum())}; "
                "no after period yet."
            )
        if a.data.kind == "defects":
            return (
                f"Baseline rate {fmt(base['count'].sum() / base['size'].sum(), unit, 3)}; "
                "no after period yet."
            )
        return f"Baseline median {fmt(a.run.median, unit, 3)}; no after period yet."
    return "No summary available."


def sparkline(a: MetricAnalysis) -> tuple[str, str]:
    v = a.data.points["value"].to_numpy(float)
    ok = np.isfinite(v)
    if ok.sum() < 2:
        return "", ""
    lo, hi = float(np.nanmin(v)), float(np.nanmax(v))
    span = hi - lo or 1.0
    n = len(v)
    xs = np.linspace(1, 119, n)
    ys = 30 - (v - lo) / span * 28
    pts = " ".join(f"{x:.1f},{y:.1f}" for x, y, k in zip(xs, ys, ok, strict=True) if k)
    st = a.data.points["stage"].to_numpy(int)
    split = ""
    if (st == STAGE_AFTER).any():
        split = f"{xs[int(np.argmax(st == STAGE_AFTER))]:.1f}"
    return pts, split


def project_outcome(
    spec: ProjectSpec,
    loaded: list[MetricAnalysis | StudyAnalysis | NotBuilt],
    problems: list[Problem],
    warnings: list[Problem],
    prov: list[dict],
    root: Path,
    settings: PortfolioSettings,
    live: str | None,
    said: list[Problem],
) -> ProjectOutcome:
    """The pages, results.json and index entry of a project whose metrics are *loaded* (each
    analysed, or :class:`NotBuilt`): *problems* the input notes of the metadata and data,
    *warnings* the metadata's own, *prov* when each input changed, *said* what the terminal
    is told. Everything in memory; nothing is read but the project's notes file."""
    # One function from the first section to the last: it is the order of the page itself,
    # and each part needs what the one before it made.
    files: dict[str, bytes] = {}
    analyses = [a for a in loaded if isinstance(a, MetricAnalysis)]
    studies = {a.spec.id: a for a in loaded if isinstance(a, StudyAnalysis)}
    not_built = [b for b in loaded if isinstance(b, NotBuilt)]
    sections, results = [], []
    has_history = any(a.has_after or a.phase_paretos for a in analyses)
    history_sections, history_results = [], []
    # Each metric's history section is made right after its project section: the history
    # page's charts share work with the project page's (see charts.series), and only one
    # metric's worth of it is held at a time. A metric that could not be built keeps its
    # place on the project page and in results.json, and is left out of the history page.
    for a in loaded:
        if isinstance(a, NotBuilt):
            section, result = not_built_section(a)
            sections.append(section)
            results.append(result)
            continue
        mp = [p for p in problems if p.path == a.spec.file_rel]
        if isinstance(a, StudyAnalysis):
            checked = [m for m in spec.metrics if m.measurement_study == a.spec.id]
            section, result = study_section(a, spec, files, mp, checked)
            sections.append(section)
            results.append(result)
            memo.forget()
            continue
        sctx = series_context(a, spec) if a.data.kind != "categories" else None
        section, result = metric_section(a, spec, files, mp, sctx)
        if a.spec.measurement_study is not None:
            sid = a.spec.measurement_study
            section["gauge"], result["measurement_study"] = gauge_summary(
                a.spec,
                studies.get(sid),
                any(b.spec.id == sid for b in not_built),
                next(x.name for x in spec.metrics if x.id == sid),
            )
        sections.append(section)
        results.append(result)
        if has_history:
            section, result = history_section(spec, a, files, sctx)
            history_sections.append(section)
            history_results.append(result)
        memo.forget()
    try:
        notes_html = render_notes(spec.notes_path) if spec.notes_path else ""
    except Unreadable as e:  # changed since the project was loaded
        raise ProjectError([Problem(rel(spec.notes_path, root), None, "", str(e))]) from None
    ctx = page_context("../../", settings, live and f"../../{live} {spec.slug}")
    project_ctx = project_view(spec)
    fresh = data_to(analyses)  # a sponsor spots a stale project
    project_ctx["data_to"] = fresh
    project_ctx["not_built"] = [b.spec.name for b in not_built]  # named on the history page
    page_warnings = [{"severity": p.severity, "text": p.format()} for p in warnings]
    html = render(
        "project.html",
        project=project_ctx,
        metrics=sections,
        notes_html=notes_html,
        provenance=prov,
        warnings=page_warnings,
        has_history=has_history,
        has_pack=settings.handover_pack,
        **ctx,
    )
    files["index.html"] = html.encode()
    history = None
    if has_history:
        files["history.html"] = history_page(spec, history_sections, ctx, project_ctx).encode()
        history = history_results
    if settings.handover_pack:  # asked for in portfolio.toml (it costs more than the pages)
        files[PACK_FILE] = pack_html(
            spec,
            project_ctx,
            sections,
            history_sections,
            files,
            notes_html,
            prov,
            page_warnings,
            ctx,
        )
    head = next(a for a in loaded if a.spec.id == spec.headline.id)
    verdict = judge(headline_facts(head))
    doc = {
        "schema": RESULTS_SCHEMA,
        "tool_version": __version__,
        "project": {
            "slug": spec.slug,
            "title": spec.title,
            "owner": spec.owner,
            "phase": spec.phase,
            "problem": spec.problem,
            "tags": list(spec.tags),
            "safety_related": spec.safety_related,
            "phase_dates": dict(spec.phase_dates),
            "events": [{"date": e.date, "label": e.label} for e in spec.events],
            "data_to": fresh or None,
        },
        "status": verdict.as_json() | {"metric": spec.headline.id},
        "metrics": results,
        "history": history,
        "input_notes": [p.format() for p in problems],
        "provenance": prov,
    }
    files["results.json"] = dumps_bytes(doc)
    entry = index_entry(spec, analyses, sections, problems, has_history, fresh)
    entry["status"] = verdict.as_json() | {
        "metric": spec.headline.id,
        "staged_chart": isinstance(head, MetricAnalysis)
        and head.control is not None
        and has_history,
    }
    entry["figures"] = headline_figures(head)
    if not_built:  # the key only when there are any: a healthy project's entry is unchanged
        entry["metrics_not_built"] = [
            {"id": b.spec.id, "name": b.spec.name, "problem_count": b.errors} for b in not_built
        ]
        entry["problem_count"] = sum(b.errors for b in not_built)
    return ProjectOutcome(spec.slug, not not_built, files, entry, said)
