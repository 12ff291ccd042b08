"""One project through the pipeline: read its metadata, load and analyse each metric, have the
site layer compose its pages (:func:`build_project`), or only report its problems
(:func:`check_project`, for `check`). Never raises for bad input: a project whose metadata has
errors, or none of whose metrics can be read, gets a notice page instead; a metric whose data
have errors costs only that metric. The rest of the site is unaffected either way.
"""

from __future__ import annotations

import sys
import traceback
from pathlib import Path

from ..analysis import MetricAnalysis, StudyAnalysis, analyse, analyse_study
from ..config import MetricSpec, PortfolioSettings, ProjectSpec, load_project, read_heading
from ..errors import Problem, ProjectError, rel
from ..loading import load_metric, load_study
from ..site.common import ProjectOutcome
from ..site.project import NotBuilt, error_outcome, project_outcome
from ..site.study_view import is_study
from .inputs import git_dates


def build_project(
    folder: Path,
    root: Path,
    settings: PortfolioSettings,
    live: str | None = None,
    debug: bool = False,
    dates: dict[Path, str] | None = None,
) -> ProjectOutcome:
    """Everything for one project, in memory. Never raises for bad input. *dates*: the last
    commit dates of the project's files when the build looked them up for the whole
    portfolio at once (else they are looked up for this project)."""
    slug = folder.name
    spec = None
    try:
        spec, warnings = load_project(folder, root, settings)
        return _build_ok(spec, warnings, root, settings, live, dates, debug)
    except ProjectError as e:
        return error_outcome(slug, e.problems, settings, live, _heading(spec, folder, root))
    except Exception:  # a bug of ours: still publish the rest of the site
        problem = _internal_error(folder, root, debug)
        return error_outcome(slug, [problem], settings, live, _heading(spec, folder, root))


def _heading(spec: ProjectSpec | None, folder: Path, root: Path) -> dict[str, str]:
    """The title and phase of a project that is not built: from its metadata when they were
    read, else whatever of them a partial read of project.toml finds."""
    if spec is not None:
        return {"title": spec.title, "phase": spec.phase}
    return read_heading(folder, root)


def check_project(
    folder: Path, root: Path, settings: PortfolioSettings, debug: bool = False
) -> list[Problem]:
    """The problems :func:`build_project` reports for this project, found by reading and
    analysing its data without drawing or writing anything. Never raises for bad input."""
    try:
        spec, warnings = load_project(folder, root, settings)
        loaded, problems = _load_and_analyse(spec, warnings, settings, debug)
        built = [a for a in loaded if not isinstance(a, NotBuilt)]
        return problems + _not_built_problems(loaded) + _stats_notes(built)
    except ProjectError as e:
        return list(e.problems)
    except Exception:  # a bug of ours: reported like any problem
        return [_internal_error(folder, root, debug)]


def _load_and_analyse(
    spec: ProjectSpec, warnings: list[Problem], settings: PortfolioSettings, debug: bool = False
) -> tuple[list[MetricAnalysis | StudyAnalysis | NotBuilt], list[Problem]]:
    """Every metric read and analysed on its own, in the metadata's order: its analysis, or
    :class:`NotBuilt` with its problems when its data have errors; and the warnings of the
    metadata and of the metrics analysed. ProjectError with every problem when no metric can
    be read (then there is nothing to publish but the problems). A bug of ours met while
    reading or analysing a metric costs that metric alone, reported as an internal error."""
    problems: list[Problem] = list(warnings)
    loaded: list[MetricAnalysis | StudyAnalysis | NotBuilt] = []
    for m in spec.metrics:
        try:
            analysis, warned = _analyse_one(m, settings)
        except ProjectError as e:  # costs this metric only
            loaded.append(NotBuilt(m, tuple(e.problems)))
            continue
        except Exception:  # a bug of ours: this metric only, said as such
            loaded.append(
                NotBuilt(
                    m,
                    (
                        Problem(
                            m.file_rel, None, f"metric '{m.id}'", _internal_message("metric", debug)
                        ),
                    ),
                )
            )
            continue
        problems.extend(warned)
        loaded.append(analysis)
    if all(isinstance(x, NotBuilt) for x in loaded):
        raise ProjectError(_not_built_problems(loaded) + problems)
    return loaded, problems


def _analyse_one(
    m: MetricSpec, settings: PortfolioSettings
) -> tuple[MetricAnalysis | StudyAnalysis, list[Problem]]:
    """One metric read and analysed: its analysis and the warnings of its data."""
    if is_study(m):  # a measurement study: parts × appraisers × trials, no time axis
        study = load_study(m, settings)
        return analyse_study(study), study.problems
    data = load_metric(m, settings)
    return analyse(data), data.problems


def _not_built_problems(loaded: list[MetricAnalysis | StudyAnalysis | NotBuilt]) -> list[Problem]:
    return [p for x in loaded if isinstance(x, NotBuilt) for p in x.problems]


def _stats_notes(analyses: list[MetricAnalysis | StudyAnalysis]) -> list[Problem]:
    """Displays the statistics could not draw: warnings for `check` and the terminal too."""
    return [
        Problem(a.spec.file_rel, None, f"metric '{a.spec.id}', {disp}", msg, "warning")
        for a in analyses
        for disp, msg in dict.fromkeys(a.failures)
    ]


def provenance(spec: ProjectSpec, root: Path, dates: dict[Path, str] | None = None) -> list[dict]:
    """When and how each input last changed. *dates*: the last commit dates of the portfolio's
    files, when the build looked them up once for every project (see common.git_dates)."""
    # ordered by the name shown, whether the projects folder was given relative or absolute
    files = sorted(
        {spec.meta_path}
        | {m.file for m in spec.metrics}
        | ({spec.notes_path} if spec.notes_path else set()),
        key=lambda f: rel(f, root),
    )
    if dates is None or (spec.folder / ".git").exists():  # a repository of its own
        dates = git_dates(spec.folder)
    out = []
    for f in files:
        key = f.resolve()
        if key in dates:
            out.append({"file": rel(f, root), "changed": dates[key], "how": "last commit"})
        else:
            import datetime as dt

            ts = dt.datetime.fromtimestamp(f.stat().st_mtime, dt.UTC)
            out.append(
                {
                    "file": rel(f, root),
                    "changed": ts.strftime("%Y-%m-%d %H:%M UTC"),
                    "how": "file modification time",
                }
            )
    return out


def _internal_error(folder: Path, root: Path, debug: bool) -> Problem:
    return Problem(rel(folder, root), None, "", _internal_message("project", debug))


def _internal_message(what: str, debug: bool) -> str:
    """The exception being handled, in words (with its traceback when *debug*)."""
    e = sys.exc_info()[1]
    detail = traceback.format_exc() if debug else f"{type(e).__name__}: {e}"
    return (
        f"internal error while building this {what} ({detail.strip()}); please report it "
        "(run with --debug for the traceback)"
    )


def _build_ok(
    spec: ProjectSpec,
    warnings: list[Problem],
    root: Path,
    settings: PortfolioSettings,
    live: str | None,
    dates: dict[Path, str] | None = None,
    debug: bool = False,
) -> ProjectOutcome:
    loaded, problems = _load_and_analyse(spec, warnings, settings, debug)
    built = [a for a in loaded if not isinstance(a, NotBuilt)]
    said = problems + _not_built_problems(loaded) + _stats_notes(built)
    prov = provenance(spec, root, dates)
    return project_outcome(spec, loaded, problems, warnings, prov, root, settings, live, said)
