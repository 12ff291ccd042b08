"""The statistics of one metric in a notebook: a pandas DataFrame and a metric's keys in, the
analysis, its results and its charts out, in one call.

The keys are those of a ``[[metric]]`` table of project.toml (``file`` is not needed), checked
by the same rules (``config.metric_from_dict``); the frame goes through the same checks and
shaping as a CSV file (``loading.load_frame``), then ``analysis.analyse``; the charts and their
sentences are made by the very code that makes a project's pages (``site.project.metric_section``
and ``site.history.history_section``), so a notebook shows what the site would.

Each chart displays itself in Jupyter: its ``_repr_mimebundle_`` gives the Vega-Lite spec under
the media type of its Vega-Lite major version (what JupyterLab draws, interactive), an SVG drawn
by vl-convert (what a front end without a Vega-Lite renderer, or a notebook viewed offline or
exported, shows) and a line of text.

    >>> from steadyline.notebook import analyse_frame
    >>> result = analyse_frame(df, {"id": "lead-time", "name": "Lead time", "type": "continuous",
    ...                             "better": "lower", "time": "date", "value": "hours"})
    >>> result.charts["control"]          # draws in Jupyter
    >>> result.results["control_chart"]   # the figures, as in results.json
"""

from __future__ import annotations

import datetime as dt
import functools
import re
from dataclasses import dataclass, field
from pathlib import Path

import orjson
import pandas as pd

from . import memo
from .analysis.process import analyse
from .analysis.results import MetricAnalysis, StudyAnalysis
from .analysis.study import analyse_study
from .config import (
    PHASES,
    STUDY,
    Event,
    MetricSpec,
    PortfolioSettings,
    ProjectSpec,
    metric_from_dict,
)
from .loading import MetricData, StudyData, load_frame, load_study_frame

SOURCE = "<DataFrame>"
_SCHEMA_MAJOR = re.compile(r"/vega-lite/v(\d+)")


def vegalite_media_type(spec: dict) -> str:
    """The media type Jupyter front ends key a Vega-Lite spec by: its major version, read from
    the spec's ``$schema`` (``application/vnd.vegalite.v6+json`` for a v6 spec)."""
    found = _SCHEMA_MAJOR.search(str(spec.get("$schema", "")))
    if found is None:
        raise ValueError("the chart spec names no Vega-Lite version in its $schema")
    return f"application/vnd.vegalite.v{found.group(1)}+json"


@dataclass(frozen=True, eq=False)
class Chart:
    """One chart with the words the page gives it; displays itself in Jupyter."""

    key: str
    title: str
    summary: str
    spec: dict
    findings: tuple[str, ...] = ()
    cautions: tuple[str, ...] = ()
    method: str = ""

    @functools.cached_property
    def svg(self) -> str:
        """The chart drawn as SVG at build time by vl-convert (no script, no request)."""
        from .site.pack import chart_svg

        return chart_svg(self.spec, f"chart-{self.key}")

    def _repr_mimebundle_(self, include=None, exclude=None) -> dict:
        bundle = {
            vegalite_media_type(self.spec): self.spec,
            "image/svg+xml": self.svg,
            "text/plain": f"{self.title}: {self.summary}",
        }
        if include:
            bundle = {k: v for k, v in bundle.items() if k in include}
        if exclude:
            bundle = {k: v for k, v in bundle.items() if k not in exclude}
        return bundle

    def __repr__(self) -> str:
        return f"<Chart {self.key}: {self.title}>"


@dataclass(frozen=True, eq=False)
class FrameAnalysis:
    """What one call gives: the metric as checked, its data as shaped, the analysis, its
    figures as results.json holds them (``results``; ``history`` when it has an after
    period), its charts in page order (``charts``, the before-and-after ones keyed
    ``history-…``) and the data's warnings as printed lines."""

    spec: MetricSpec
    data: MetricData | StudyData
    analysis: MetricAnalysis | StudyAnalysis
    results: dict
    history: dict | None
    charts: dict[str, Chart] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()

    def __repr__(self) -> str:
        n = (
            f"{len(self.data.values)} measurements"
            if isinstance(self.data, StudyData)
            else f"{len(self.data.points)} points"
        )
        return f"<FrameAnalysis {self.spec.id}: {n}, charts {', '.join(self.charts) or 'none'}>"


def analyse_frame(
    frame: pd.DataFrame, metric: dict, *, events=None, settings: PortfolioSettings | None = None
) -> FrameAnalysis:
    """The analysis, results and charts of one metric from a DataFrame.

    *metric*: the keys of a ``[[metric]]`` table of project.toml (``time``, ``value``, … name
    the frame's columns; periods as dates or ISO text). *events*: dated labels drawn on the
    time charts, ``{"2026-03-02": "new fixture"}``. *settings*: the portfolio's defaults
    (rules, quartiles, bins). Raises ``steadyline.errors.ProjectError`` whose ``problems``
    name every bad key, row and column, as ``steadyline check`` would print them."""
    from .site.cards import series_context
    from .site.history import history_section
    from .site.project import metric_section
    from .site.serialise import dumps_bytes

    settings = settings or PortfolioSettings()
    spec = metric_from_dict(metric, settings, SOURCE)
    if spec.type == STUDY:
        return _study_frame(spec, frame, events)
    data = load_frame(spec, frame)
    a = analyse(data)
    project = _project(spec, events or ())
    files: dict[str, bytes] = {}
    try:
        sctx = series_context(a, project) if a.data.kind != "categories" else None
        section, result = metric_section(a, project, files, list(data.problems), sctx)
        cards = list(section["displays"])
        history = None
        if a.has_after or a.period_paretos:
            hsection, history = history_section(project, a, files, sctx)
            cards += hsection["displays"]
            history = orjson.loads(dumps_bytes(history))
        results = orjson.loads(dumps_bytes(result))  # as results.json writes it
    finally:
        memo.forget()
    return FrameAnalysis(
        spec=spec,
        data=data,
        analysis=a,
        results=results,
        history=history,
        charts=_charts(spec, cards, files),
        warnings=_warnings(data, a),
    )


def _charts(spec: MetricSpec, cards: list[dict], files: dict[str, bytes]) -> dict[str, Chart]:
    """The cards' charts by key: "control", "history-staged-control" (the page's anchor less
    the metric id)."""
    charts = {}
    for c in cards:
        key = c["anchor"].replace(f"{spec.id}-", "", 1)
        charts[key] = Chart(
            key=key,
            title=c["title"],
            summary=c["summary"],
            spec=orjson.loads(files[c["spec_href"]]),
            findings=tuple(f["text"] for f in c["findings"]),
            cautions=tuple(c["cautions"]),
            method=c["method"],
        )
    return charts


def _warnings(data, a) -> tuple[str, ...]:
    """The data's problems and the displays that failed, as printed lines."""
    return tuple(p.format() for p in data.problems) + tuple(
        f"{SOURCE}: {disp}: {msg}" for disp, msg in a.failures
    )


def _study_frame(spec: MetricSpec, frame: pd.DataFrame, events) -> FrameAnalysis:
    """A measurement study from a DataFrame: its figures and its three charts, made by the
    code that makes its section of a project page (no history: a study has no periods)."""
    from .site.serialise import dumps_bytes
    from .site.study_view import study_section

    data = load_study_frame(spec, frame)
    a = analyse_study(data)
    files: dict[str, bytes] = {}
    try:
        section, result = study_section(
            a, _project(spec, events or ()), files, list(data.problems), []
        )
        results = orjson.loads(dumps_bytes(result))
    finally:
        memo.forget()
    return FrameAnalysis(
        spec=spec,
        data=data,
        analysis=a,
        results=results,
        history=None,
        charts=_charts(spec, section["displays"], files),
        warnings=_warnings(data, a),
    )


def _project(spec: MetricSpec, events) -> ProjectSpec:
    """The frame as a project of one metric, for the page code that makes the charts."""
    evs = []
    pairs = events.items() if isinstance(events, dict) else events
    for day, label in sorted(pairs, key=lambda kv: (str(kv[0]), str(kv[1]))):  # as config
        date = day if isinstance(day, dt.date) else dt.date.fromisoformat(str(day))
        evs.append(Event(date.date() if isinstance(date, dt.datetime) else date, str(label)))
    return ProjectSpec(
        slug="notebook",
        folder=Path("."),
        meta_path=Path(SOURCE),
        meta_rel=SOURCE,
        title=spec.name,
        owner="",
        phase=PHASES[0],
        problem="",
        tags=(),
        notes_path=None,
        safety_related=False,
        phase_dates=(),
        events=tuple(evs),
        metrics=(spec,),
    )


__all__ = ["Chart", "FrameAnalysis", "analyse_frame", "vegalite_media_type"]
