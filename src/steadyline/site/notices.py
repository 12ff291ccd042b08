"""What stands in place of what could not be built: the notice page and index entry of a project
that is not built (:func:`error_outcome`), and the section and results.json entry of a metric
whose data have errors (:class:`NotBuilt`), which keeps its place and shows its problems.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..config import MetricSpec, PortfolioSettings
from ..errors import Problem
from .common import PHASE_LABEL, ProjectOutcome, page_context
from .templates import render


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
