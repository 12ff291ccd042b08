"""A project's pages, all in memory: from its analysed metrics to the project page, the history
page, results.json, the hand-over pack and the index entry (:func:`project_outcome`). Nothing
here reads data files: :mod:`steadyline.pipeline.project` loads and analyses, then calls this.
The pieces live beside it: a metric's section (:mod:`.metric_view`), the index entry and status
facts (:mod:`.headline`), the notices of what is not built (:mod:`.notices`); the names the
pipeline, the notebook and the tests import from here are handed on.
"""

from __future__ import annotations

from pathlib import Path

from .. import __version__, memo
from ..analysis import MetricAnalysis, StudyAnalysis
from ..config import PortfolioSettings, ProjectSpec
from ..errors import Problem, ProjectError, rel
from ..files import Unreadable
from ..status import judge
from .cards import series_context
from .common import PHASE_LABEL, ProjectOutcome, page_context
from .headline import data_to, headline_facts, headline_figures, index_entry
from .history import history_page, history_section
from .metric_view import metric_section
from .notes import render_notes
from .notices import NotBuilt, error_outcome, not_built_section
from .pack import PACK_FILE, pack_html
from .serialise import dumps_bytes
from .study_view import gauge_summary, study_section
from .templates import render

__all__ = [
    "RESULTS_SCHEMA",
    "NotBuilt",
    "error_outcome",
    "metric_section",
    "project_outcome",
    "project_view",
]

RESULTS_SCHEMA = "steadyline-results/3"

Loaded = MetricAnalysis | StudyAnalysis | NotBuilt


def project_outcome(
    spec: ProjectSpec,
    loaded: list[Loaded],
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
    files: dict[str, bytes] = {}
    analyses = [a for a in loaded if isinstance(a, MetricAnalysis)]
    not_built = [b for b in loaded if isinstance(b, NotBuilt)]
    has_history = any(a.has_after or a.period_paretos for a in analyses)
    parts = _metric_parts(spec, loaded, problems, files, has_history)
    sections, results, history_sections, history_results = parts
    notes_html = _notes_html(spec, root)
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
    if has_history:
        files["history.html"] = history_page(spec, history_sections, ctx, project_ctx).encode()
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
    assert not isinstance(head, StudyAnalysis)  # the metadata refuse a study as the headline
    verdict = judge(headline_facts(head))
    history = history_results if has_history else None
    doc = results_doc(spec, verdict.as_json(), results, history, problems, prov, fresh)
    files["results.json"] = dumps_bytes(doc)
    entry = index_entry(spec, analyses, sections, warnings, has_history, fresh)
    _add_status(entry, spec, head, verdict.as_json(), has_history, not_built)
    return ProjectOutcome(spec.slug, not not_built, files, entry, said)


def _add_status(
    entry: dict,
    spec: ProjectSpec,
    head: MetricAnalysis | NotBuilt,
    status: dict,
    has_history: bool,
    not_built: list[NotBuilt],
) -> None:
    """The index entry's status, headline figures and metrics not built."""
    entry["status"] = status | {
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


def _metric_parts(
    spec: ProjectSpec,
    loaded: list[Loaded],
    problems: list[Problem],
    files: dict[str, bytes],
    has_history: bool,
) -> tuple[list[dict], list[dict], list[dict], list[dict]]:
    """Each metric's project section and results.json entry, and its history section and
    entry. Each metric's history section is made right after its project section: the history
    page's charts share work with the project page's (see charts.series), and only one
    metric's worth of it is held at a time. A metric that could not be built keeps its place
    on the project page and in results.json, and is left out of the history page."""
    studies = {a.spec.id: a for a in loaded if isinstance(a, StudyAnalysis)}
    not_built = {b.spec.id for b in loaded if isinstance(b, NotBuilt)}
    sections, results = [], []
    history_sections, history_results = [], []
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
        sctx = series_context(a, spec) if a.effective_type != "categories" else None
        section, result = metric_section(a, spec, files, mp, sctx)
        if a.spec.measurement_study is not None:
            sid = a.spec.measurement_study
            section["gauge"], result["measurement_study"] = gauge_summary(
                a.spec,
                studies.get(sid),
                sid in not_built,
                next(x.name for x in spec.metrics if x.id == sid),
            )
        sections.append(section)
        results.append(result)
        if has_history:
            section, result = history_section(spec, a, files, sctx)
            history_sections.append(section)
            history_results.append(result)
        memo.forget()
    return sections, results, history_sections, history_results


def _notes_html(spec: ProjectSpec, root: Path) -> str:
    """The project's notes as HTML ("" without a notes file)."""
    path = spec.notes_path
    if not path:
        return ""
    try:
        return render_notes(path)
    except Unreadable as e:  # changed since the project was loaded
        raise ProjectError([Problem(rel(path, root), None, "", str(e))]) from None


def results_doc(
    spec: ProjectSpec,
    status: dict,
    results: list[dict],
    history: list[dict] | None,
    problems: list[Problem],
    prov: list[dict],
    fresh: str,
) -> dict:
    """The project's results.json (README, results.json schema)."""
    return {
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
        "status": status | {"metric": spec.headline.id},
        "metrics": results,
        "history": history,
        "input_notes": [p.format() for p in problems],
        "provenance": prov,
    }


def project_view(spec: ProjectSpec) -> dict:
    """The project's facts as the pages show them."""
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
