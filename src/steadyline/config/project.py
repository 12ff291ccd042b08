"""project.toml -> ProjectSpec: one project's metadata, read and validated completely.

Every problem (TOML syntax, wrong type, unknown key with a "did you mean", missing file, value
out of its set) becomes one :class:`~steadyline.errors.Problem` naming the file, line and key,
and all of a project's problems are raised together in one
:class:`~steadyline.errors.ProjectError`. The metrics' own keys are read by
:mod:`.metric`; nothing here reads data, column checks happen in :mod:`steadyline.loading`.
"""

from __future__ import annotations

import datetime as dt
import os
from pathlib import Path

from .. import files
from ..errors import Problem, ProjectError, rel
from .discovery import NOTES_DEFAULT, PROJECT_FILE
from .keys import COMPARISON_KEYS, EVENT_KEYS, PHASE_DATE_KEYS, PHASES, PROJECT_KEYS, SLUG_RE
from .metric import read_metric
from .model import Event, MetricSpec, Period, PortfolioSettings, ProjectSpec
from .reading import Checker, Reader
from .shape import period_clash
from .studies import check_study_links
from .toml_file import OUTSIDE_PORTFOLIO, OUTSIDE_PROJECT, fault, outside, read_toml, sentence


def load_project(
    folder: Path, root: Path | None = None, settings: PortfolioSettings | None = None
) -> tuple[ProjectSpec, list[Problem]]:
    """Read and validate one project's metadata.

    Returns the model and the warnings; raises ProjectError with every error found.
    """
    settings = settings or PortfolioSettings()
    root = root or folder.parent
    meta = _project_file(folder, root)
    data, text, problems = read_toml(meta, root)
    if data is None:
        raise ProjectError(problems)
    ck = Checker(meta, root, text)
    slug = folder.name
    if not SLUG_RE.match(slug):
        ck.add(
            "",
            f"the folder name {slug!r} is not a valid project slug; use lower-case "
            "letters, digits and hyphens",
        )
    ck.unknown_keys(data, PROJECT_KEYS, "")
    r = Reader(ck, data, "")
    title = r.text("title", required=True, default=slug, what="the project's title")
    owner = r.text("owner", required=True, default="", what="who leads the project")
    phase = r.choice("phase", PHASES, default="define", required=True)
    problem = r.text("problem", required=True, default="", what="the problem statement")
    tags = _tags(data, r)
    notes = r.text("notes")
    notes_path = _notes(ck, folder, notes)
    safety = r.boolean("safety_related")
    phase_dates = _phase_dates(ck, r)
    comp_baseline, comp_after = _comparison(ck, r)
    events = _events(ck, data, r)
    raw_metrics = _metric_tables(ck, data, r)
    metrics = _metrics(ck, raw_metrics, folder, root, settings, comp_baseline, comp_after)
    _strays(ck, folder, root, notes, raw_metrics)

    errors = [p for p in ck.problems if p.severity == "error"]
    if errors:
        raise ProjectError(ck.problems)
    project = ProjectSpec(
        slug=slug,
        folder=folder,
        meta_path=meta,
        meta_rel=ck.shown,
        title=title or slug,
        owner=owner or "",
        phase=phase or "define",
        problem=problem or "",
        tags=tags,
        notes_path=notes_path,
        safety_related=safety,
        phase_dates=phase_dates,
        events=events,
        metrics=metrics,
    )
    return project, [p for p in ck.problems if p.severity != "error"]


def _project_file(folder: Path, root: Path) -> Path:
    """The project's project.toml, once the folder and the file are known to be inside where
    they must be and the file can be read; else a ProjectError with the one reason."""
    if not files.inside(folder, root):
        raise ProjectError(
            [
                Problem(
                    f"{folder.name}/",
                    None,
                    "",
                    outside(
                        "the project folder",
                        folder,
                        "projects folder",
                        OUTSIDE_PORTFOLIO,
                        "move the project in instead",
                    ),
                )
            ]
        )
    try:
        with os.scandir(folder):
            pass
    except OSError as e:  # else every file in it would seem missing
        raise ProjectError(
            [Problem(rel(folder, root) + "/", None, "", f"cannot read the folder: {e.strerror}")]
        ) from None
    meta = folder / PROJECT_FILE
    if not files.exists(meta):
        raise ProjectError(
            [
                Problem(
                    rel(folder, root) + "/",
                    None,
                    "",
                    f"no {PROJECT_FILE} in this project folder; add one (see the "
                    "project format in the README) or move the folder out",
                )
            ]
        )
    if not files.inside(meta, folder):
        raise ProjectError(
            [
                Problem(
                    rel(meta, root),
                    None,
                    "",
                    outside(
                        PROJECT_FILE,
                        meta,
                        "project folder",
                        OUTSIDE_PROJECT,
                        "copy the file in instead",
                    ),
                )
            ]
        )
    if (why := fault(meta)) is not None:
        raise ProjectError([Problem(rel(meta, root), None, "", why)])
    return meta


def _tags(data: dict, r: Reader) -> tuple[str, ...]:
    """The tags, each once, in their order."""
    if "tags" not in data:
        return ()
    v = data["tags"]
    if not isinstance(v, list) or not all(isinstance(t, str) for t in v):
        r._bad("tags", "a list of text", v)
        return ()
    return tuple(dict.fromkeys(t.strip() for t in v if t.strip()))


def _notes(ck: Checker, folder: Path, notes: str | None) -> Path | None:
    """The notes file: the one named, else notes.md when present (used then, so it must be
    readable); None when there is none or it cannot be used."""
    if notes is not None:
        p = folder / notes
        if Path(notes).is_absolute() or not files.inside(p, folder):
            ck.add(
                "notes",
                f"{notes!r} points outside the project folder; keep notes inside it",
                ck.loc.line_of("notes"),
            )
        elif (why := fault(p)) == "":
            ck.add("notes", f"the notes file {notes!r} does not exist", ck.loc.line_of("notes"))
        elif why is not None:
            ck.add("notes", sentence(f"the notes file {notes!r}", why), ck.loc.line_of("notes"))
        else:
            return p
    elif files.exists(folder / NOTES_DEFAULT):  # used when present, so it must be readable
        if not files.inside(folder / NOTES_DEFAULT, folder):
            ck.add(
                "notes",
                f"the notes file {NOTES_DEFAULT!r} points outside the project folder "
                "(a link); keep notes inside it",
            )
        elif (why := fault(folder / NOTES_DEFAULT)) is not None:
            ck.add("notes", sentence(f"the notes file {NOTES_DEFAULT!r}", why))
        else:
            return folder / NOTES_DEFAULT
    return None


def _phase_dates(ck: Checker, r: Reader) -> tuple[tuple[str, dt.date], ...]:
    """The dates the project entered its phases, in the phases' order, each after the last."""
    phase_dates: list[tuple[str, dt.date]] = []
    pd_table = r.table_("phase_dates")
    if pd_table is None:
        return ()
    ck.unknown_keys(pd_table, PHASE_DATE_KEYS, "phase_dates.", table="phase_dates")
    pr = Reader(ck, pd_table, "phase_dates.", table="phase_dates")
    for ph in PHASES:
        if ph in pd_table:
            d = pr.date(ph)
            if d is not None:
                phase_dates.append((ph, d))
    for (a, da), (b, db) in zip(phase_dates, phase_dates[1:], strict=False):
        if db < da:
            ck.add(
                f"phase_dates.{b}",
                f"{b} starts {db}, before {a} ({da}); phases run {', '.join(PHASES)}",
                ck.loc.line_of(b, "phase_dates"),
            )
    return tuple(phase_dates)


def _comparison(ck: Checker, r: Reader) -> tuple[Period | None, Period | None]:
    """The [comparison] baseline and after periods every metric takes unless it sets its own;
    a clash of the two is reported here, once."""
    comp = r.table_("comparison")
    if comp is None:
        return None, None
    ck.unknown_keys(comp, COMPARISON_KEYS, "comparison.", table="comparison")
    cr = Reader(ck, comp, "comparison.", table="comparison")
    comp_baseline, comp_after = cr.period("baseline"), cr.period("after")
    if comp_baseline and comp_after:
        clash = period_clash(comp_baseline, comp_after)
        if clash:
            ck.add(f"comparison.{clash[0]}", clash[1], cr._line(clash[0]))
    return comp_baseline, comp_after


def _events(ck: Checker, data: dict, r: Reader) -> tuple[Event, ...]:
    """The [[event]] tables, by date."""
    events: list[Event] = []
    ev = data.get("event", [])
    if not isinstance(ev, list) or not all(isinstance(e, dict) for e in ev):
        r._bad("event", "[[event]] tables with date and label", ev)
        ev = []
    for i, e in enumerate(ev):
        er = Reader(ck, e, f"event[{i + 1}].", table="event", index=i)
        ck.unknown_keys(e, EVENT_KEYS, f"event[{i + 1}].", table="event", index=i)
        label = er.text("label", required=True, what="a short label")
        if "date" not in e:
            er.missing("date", "the date of the event")
            continue
        d = er.date("date")
        if d is not None and label:
            events.append(Event(d, label))
    events.sort(key=lambda e: (e.date, e.label))
    return tuple(events)


def _metric_tables(ck: Checker, data: dict, r: Reader) -> list[dict]:
    """The [[metric]] tables as written; none when they are missing or not tables."""
    raw_metrics = data.get("metric")
    # A project without a metric has nothing to draw: an error (where the file says so: an
    # empty list `metric = []`, or a single [metric] table written for [[metric]]).
    if raw_metrics is None:
        ck.add("metric", "no [[metric]] table; a project needs at least one metric")
        return []
    if isinstance(raw_metrics, dict):
        ck.add(
            "metric",
            "[metric] is a single table; write [[metric]] (double brackets) before each metric",
            ck.loc.header_line("metric") or ck.loc.line_of("metric"),
        )
        return []
    if not isinstance(raw_metrics, list) or not all(isinstance(m, dict) for m in raw_metrics):
        r._bad("metric", "[[metric]] tables", raw_metrics)
        return []
    if not raw_metrics:
        ck.add(
            "metric",
            "the list of metrics is empty; a project needs at least one [[metric]] table",
            ck.loc.line_of("metric"),
        )
    return raw_metrics


def _metrics(
    ck: Checker,
    raw_metrics: list[dict],
    folder: Path,
    root: Path,
    settings: PortfolioSettings,
    comp_baseline: Period | None,
    comp_after: Period | None,
) -> tuple[MetricSpec, ...]:
    """Every metric read, then what only all of them together can tell: unique ids, the links
    to measurement studies, one headline."""
    metrics: list[MetricSpec] = []
    seen_ids: set[str] = set()
    indexed: list[tuple[int, MetricSpec]] = []
    for i, m in enumerate(raw_metrics):
        spec = read_metric(ck, m, i, folder, root, settings, comp_baseline, comp_after)
        if spec is None:
            continue
        if spec.id in seen_ids:
            ck.add(
                f"metric[{i + 1}].id",
                f"the id {spec.id!r} is used by another metric; ids must be unique in a project",
                ck.loc.line_of("id", "metric", i),
            )
            continue
        seen_ids.add(spec.id)
        metrics.append(spec)
        indexed.append((i, spec))
    if len(indexed) == len(raw_metrics):  # else the link may name a metric with errors
        check_study_links(ck, indexed)
    if sum(m.headline for m in metrics) > 1:
        ck.add("metric.headline", "more than one metric is marked headline = true; mark one")
    return tuple(metrics)


def _strays(
    ck: Checker, folder: Path, root: Path, notes: str | None, raw_metrics: list[dict]
) -> None:
    """What the project holds but does not use, and could not be read: a warning, never more."""
    used = {os.path.normpath(folder / n) for n in (PROJECT_FILE, NOTES_DEFAULT, notes) if n}
    used |= {
        os.path.normpath(folder / x["file"]) for x in raw_metrics if isinstance(x.get("file"), str)
    }
    for path, why in files.strays(folder, used, root):
        ck.problems.append(
            Problem(
                rel(path, root),
                None,
                "",
                f"{why}; the project does not use it, so it is left alone",
                "warning",
            )
        )


def read_heading(folder: Path, root: Path | None = None) -> dict[str, str]:
    """What names a project whose metadata has errors: its ``title`` and ``phase``, when the
    TOML can be parsed and they are valid (a partial read), so that its notice page and index
    card name it as its owners do and count it in its phase. Reads only what
    :func:`load_project` would (a regular project.toml inside the project folder, inside the
    projects folder); an empty dict when there is nothing usable. Never raises."""
    root = root or folder.parent
    meta = folder / PROJECT_FILE
    try:
        if (
            not files.inside(folder, root)
            or not files.exists(meta)
            or not files.inside(meta, folder)
            or fault(meta) is not None
        ):
            return {}
        data, _text, _problems = read_toml(meta, root)
    except Exception:  # best effort while another error is reported: the folder's name then
        return {}
    out: dict[str, str] = {}
    if data is None:
        return out
    title = data.get("title")
    if isinstance(title, str) and title.strip():
        out["title"] = title.strip()
    phase = data.get("phase")
    if isinstance(phase, str) and phase in PHASES:
        out["phase"] = phase
    return out
