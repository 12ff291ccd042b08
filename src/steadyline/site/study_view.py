"""A measurement study's section of the project page and its results.json entry, and the line a
process metric gives the study that checks its measurements.

A study is no process metric: it has no time axis, no periods and no before-and-after, so it
is left out of the project's status, its history page and its data date; it takes its place
among the project's metrics on the project page, in the hand-over pack and in results.json.
"""

from __future__ import annotations

from pathlib import Path

from .. import advice
from ..analysis import StudyAnalysis
from ..charts import components_chart, measurements_chart, ranges_chart
from ..config import MetricSpec, ProjectSpec
from ..errors import Problem
from ..stats.compare import format_p_value
from ..stats.gauge import POOL_ABOVE
from ..stats.results_studies import GaugeStudy
from ..vocab import DataType
from .cards import Displays
from .figures_text import fmt
from .serialise import plain

METHOD = (
    "Two-way analysis of variance of parts × appraisers with their interaction, both taken as "
    "random; the interaction is pooled into repeatability when its p-value is above "
    f"{POOL_ABOVE:g}. Variance components from the expected mean squares (a negative estimate "
    "set to zero); reproducibility = appraiser + interaction; shares of the study variation "
    "are ratios of standard deviations, of the variance ratios of variances, of the tolerance "
    "6 standard deviations over the width of the specification; distinct categories "
    "⌊1.41 × part-to-part / measurement system standard deviations⌋. AIAG, Measurement "
    "Systems Analysis, 4th ed.; Montgomery, Introduction to Statistical Quality Control, "
    "on measurement system capability."
)


def _design(sa: StudyAnalysis) -> tuple[int, int, int]:
    parts, apprs = len(set(sa.parts)), len(set(sa.appraisers))
    return parts, apprs, len(sa.measurements) // (parts * apprs)


def study_section(
    sa: StudyAnalysis,
    spec: ProjectSpec,
    files: dict[str, bytes],
    problems: list[Problem],
    qualifies: list[MetricSpec],
) -> tuple[dict, dict]:
    """The page section and the results.json entry of a measurement study."""
    m, study = sa.spec, sa.study
    d = Displays(spec.slug, m.id, files)
    parts, apprs, trials = _design(sa)
    design = f"{parts} parts × {apprs} appraisers × {trials} trials"
    study_cards(d, sa, design, trials)
    verdict = None if study is None else study_verdict(study)
    warnings = [c for card in d.cards for c in card["cautions"]]
    warnings += [f"{disp}: {msg}" for disp, msg in sa.failures]
    result = {
        "id": m.id,
        "name": m.name,
        "unit": m.unit,
        "type": m.type,
        "file": m.file_rel,
        "rows_read": sa.rows_read,
        "spec_limits": {"lower": m.spec_lower, "upper": m.spec_upper},
        "study": None if study is None else plain(study),
        "verdict": verdict,
        "appraiser_ranges": None if sa.ranges is None else [plain(r) for r in sa.ranges],
        "qualifies": [q.id for q in qualifies],
        "warnings": warnings,
        "failures": [{"display": disp, "message": msg} for disp, msg in sa.failures],
    }
    section = {
        "id": m.id,
        "name": m.name,
        "unit": m.unit,
        "broken": False,
        "study": True,
        "facts": study_facts(sa, design, verdict, qualifies),
        "displays": d.cards,
        "capability": None,
        "open_signals": 0,
        "baseline_signals": 0,
        "problems": [{"severity": "warning", "text": f"{disp}: {msg}"} for disp, msg in sa.failures]
        + [{"severity": p.severity, "text": p.format()} for p in problems],
    }
    return section, result


def study_cards(d: Displays, sa: StudyAnalysis, design: str, trials: int) -> None:
    """The study's three cards: components of variation, ranges by appraiser (each when the
    statistics made it) and every measurement by part and appraiser."""
    m, study = sa.spec, sa.study
    if study is not None:
        chart = components_chart(study, values_text=f"{m.name}: {design}")
        d.add(
            "components",
            "Components of variation",
            chart,
            advice.gauge_findings(study, m.unit),
            [advice.GAUGE_DECISION, *study.notes],
            METHOD + " " + _anova_text(study),
            notes=study.notes,
        )
    if sa.ranges is not None:
        chart = ranges_chart(sa.ranges, trials=trials, unit=m.unit)
        d.add(
            "ranges",
            "Ranges by appraiser",
            chart,
            advice.appraiser_range_findings(sa.ranges, m.unit),
            method="Each point is the range (largest less smallest) of one appraiser's trials "
            "of one part; the centre line is that appraiser's average range R̄ and the upper "
            "limit D4·R̄, D4 the R chart's factor for subgroups of the number of trials "
            "(Montgomery, ch. 6); the lower limit D3·R̄ is 0 below 7 trials.",
        )
    chart = measurements_chart(sa.measurements.tolist(), sa.parts, sa.appraisers, unit=m.unit)
    findings = []
    if study is not None:
        findings = advice.appraiser_findings(study, _appraiser_means(sa), m.unit)
    d.add(
        "measurements",
        "Measurements by part and appraiser",
        chart,
        findings,
        method="Every measurement, by part along the axis and by appraiser side by side within "
        "a part; the lines join each appraiser's mean of a part's trials. The appraisers' "
        "means are compared by the F test of the analysis of variance.",
    )


def study_verdict(study: GaugeStudy) -> dict:
    """The study's verdict by the guide, in code and words, with what it rests on."""
    code = advice.gauge_verdict(study)
    return {
        "code": code,
        "words": advice.GAUGE_WORDS[code],
        "study_variation": study.verdict,
        "tolerance": study.tolerance_verdict,
        "distinct_categories_enough": study.distinct_categories >= 5,
        "guide": advice.GAUGE_GUIDE,
    }


def study_facts(
    sa: StudyAnalysis, design: str, verdict: dict | None, qualifies: list[MetricSpec]
) -> list[tuple[str, str]]:
    """The facts above the study's cards: its design, verdict, specification and the metrics
    whose measurements it checks."""
    m, study = sa.spec, sa.study
    facts = [("Study", f"{design}, from {Path(m.file_rel).name} ({sa.rows_read} rows)")]
    if verdict is not None and study is not None:
        facts.append(
            (
                "Verdict",
                f"{verdict['words'][0].upper()}{verdict['words'][1:]} by the "
                f"guide: the measurement system takes {advice.gauge_shares_text(study)}; "
                f"{study.distinct_categories} distinct categories.",
            )
        )
    if m.spec_lower is not None or m.spec_upper is not None:
        limits = " to ".join(fmt(x, m.unit) for x in (m.spec_lower, m.spec_upper) if x is not None)
        facts.append(
            (
                "Specification",
                limits
                + (
                    ""
                    if m.spec_lower is not None and m.spec_upper is not None
                    else " (shares of the tolerance need both limits)"
                ),
            )
        )
    if qualifies:
        facts.append(("Checks the measurements of", ", ".join(q.name for q in qualifies)))
    return facts


def _anova_text(study) -> str:
    rows = {r.source: r for r in (study.reduced_anova if study.interaction_pooled else study.anova)}
    kept = "pooled into repeatability" if study.interaction_pooled else "kept"
    return (
        f"This study: interaction {format_p_value(study.interaction_p_value)}, {kept}; "
        f"parts F = {rows['part'].f:.4g} ({format_p_value(rows['part'].p_value)}), "
        f"appraisers F = {rows['appraiser'].f:.4g} "
        f"({format_p_value(rows['appraiser'].p_value)})."
    )


def _appraiser_means(sa: StudyAnalysis) -> dict[str, float]:
    sums: dict[str, list[float]] = {}
    for v, o in zip(sa.measurements.tolist(), sa.appraisers, strict=True):
        sums.setdefault(o, []).append(v)
    return {o: sum(vs) / len(vs) for o, vs in sums.items()}


def gauge_summary(
    m: MetricSpec, study: StudyAnalysis | None, not_built: bool, study_name: str
) -> tuple[dict, dict]:
    """What a process metric says of the study named by its ``measurement_study``: the
    section's fact (the study's name and its verdict in words) and the results.json entry."""
    sid = m.measurement_study
    none = {
        "id": sid,
        "name": study_name,
        "verdict": None,
        "verdict_words": None,
        "study_percent": None,
        "tolerance_percent": None,
        "distinct_categories": None,
        "not_built": not_built,
    }
    if study is None:
        text = (
            "not built: its data have problems, listed in its place" if not_built else "no verdict"
        )
        return {"id": sid, "name": study_name, "text": text}, none
    name = study.spec.name
    s = study.study
    if s is None:
        why = "; ".join(msg for _, msg in study.failures)
        return ({"id": sid, "name": name, "text": f"no verdict ({why})"}, none)
    code = advice.gauge_verdict(s)
    ms = s.component("measurement system")
    text = (
        f"{advice.GAUGE_WORDS[code]} by the guide ({advice.gauge_shares_text(s)}; "
        f"{s.distinct_categories} distinct categories)"
    )
    return (
        {"id": sid, "name": name, "text": text},
        {
            "id": sid,
            "name": name,
            "verdict": code,
            "verdict_words": advice.GAUGE_WORDS[code],
            "study_percent": ms.study_percent,
            "tolerance_percent": ms.tolerance_percent,
            "distinct_categories": s.distinct_categories,
            "not_built": False,
        },
    )


def is_study(m: MetricSpec) -> bool:
    return m.type == DataType.STUDY
