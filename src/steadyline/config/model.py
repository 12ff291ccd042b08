"""The frozen model of a project's and a portfolio's metadata.

What the rest of the tool reads once the files are checked: plain frozen dataclasses, apart
from the code that reads and validates them, so that a page or a statistic that needs a
project's model imports no validation.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from pathlib import Path

from ..status import STALE_AFTER_DAYS
from .keys import STUDY

# ----------------------------------------------------------------------------- the model


@dataclass(frozen=True)
class Period:
    """A date range, inclusive at both ends; ``end`` None means open-ended."""

    start: dt.date
    end: dt.date | None = None

    def label(self) -> str:
        return f"{self.start.isoformat()} to {self.end.isoformat() if self.end else 'latest'}"


@dataclass(frozen=True)
class Rollup:
    period: str
    statistic: str


@dataclass(frozen=True)
class CsvOptions:
    delimiter: str = ","
    decimal: str = "."
    encoding: str = "utf-8"
    date_format: str | None = None
    timezone: str | None = None


@dataclass(frozen=True)
class Event:
    date: dt.date
    label: str


@dataclass(frozen=True)
class SetAside:
    """Days of a metric's baseline where an assignable cause was found and removed: their
    points are drawn but left out of the baseline's statistics. ``start`` to ``end`` inclusive
    (one day when equal); ``where`` names the entry in messages ("metric[1].set_aside[2]"),
    ``source`` and ``line`` the file and line it was written at."""

    start: dt.date
    end: dt.date
    reason: str
    where: str = ""
    source: str = ""
    line: int | None = None

    def label(self) -> str:
        """The days in words, as the pages and messages give them."""
        if self.start == self.end:
            return self.start.isoformat()
        return f"{self.start.isoformat()} to {self.end.isoformat()}"


@dataclass(frozen=True)
class PortfolioSettings:
    title: str = "Improvement portfolio"
    signal_rules: str = "western-electric"
    run_rules: str = "anhoj"
    quartiles: str = "linear"
    bins: str = "fd"
    max_file_mb: float = 200.0
    # Only the index uses it, and the index is rendered on every build: kept out of repr, so
    # out of every project's input hash, and changing it rebuilds no project.
    stale_after_days: int = field(default=STALE_AFTER_DAYS, repr=False)
    # whether the pages and results.json give the sigma level, and by which convention
    sigma_level: str = "off"
    # whether each project also gets its hand-over pack (handover.html): drawing its charts
    # as SVG costs several times a project's build, so a portfolio asks for it
    handover_pack: bool = False


@dataclass(frozen=True)
class MetricSpec:
    id: str
    name: str
    file: Path  # absolute, resolved, inside the project folder
    file_rel: str  # as shown in messages (relative to the portfolio root)
    type: str
    better: str
    time: str | None = None
    value: str | None = None
    subgroup: str | None = None
    subgroup_size: int | None = None
    count: str | None = None
    size: str | None = None
    category: str | None = None
    part: str | None = None  # measurement studies: the column naming the part measured
    appraiser: str | None = None  # … and the column naming who measured it
    measurement_study: str | None = None  # the id of the study that checks this metric's gauge
    unit: str = ""
    spec_lower: float | None = None
    spec_upper: float | None = None
    target: float | None = None
    headline: bool = False
    chart: str = "auto"
    signal_rules: str = "western-electric"
    run_rules: str = "anhoj"
    limits: str = "baseline"
    quartiles: str = "linear"
    bins: str | tuple[float, ...] = "fd"
    normal_curve: bool = False
    # the number of places on one unit where a defect can occur (defects: for DPMO)
    opportunities_per_unit: float | None = None
    # the change of the compared measure the project expects (mean, proportion or rate, in the
    # metric's own terms): the after sample is sized to detect it
    expected_change: float | None = None
    # the portfolio's sigma_level, carried with each metric (analysis sees no portfolio)
    sigma_level: str = "off"
    baseline: Period | None = None
    after: Period | None = None
    rollup: Rollup | None = None
    csv: CsvOptions = field(default_factory=CsvOptions)
    line: int | None = None  # line of its [[metric]] header in project.toml
    set_aside: tuple[SetAside, ...] = ()  # sorted by start, never overlapping
    sheet: str | None = None  # a workbook's sheet to read (None: the first)


@dataclass(frozen=True)
class ProjectSpec:
    slug: str
    folder: Path
    meta_path: Path
    meta_rel: str
    title: str
    owner: str
    phase: str
    problem: str
    tags: tuple[str, ...]
    notes_path: Path | None
    safety_related: bool
    phase_dates: tuple[tuple[str, dt.date], ...]
    events: tuple[Event, ...]
    metrics: tuple[MetricSpec, ...]

    @property
    def headline(self) -> MetricSpec:
        """The metric the index judges the project by: the one marked, else the first that is
        no measurement study (a study qualifies a gauge, it is no process to improve; a project
        holds at least one other metric, checked when it is read)."""
        for m in self.metrics:
            if m.headline:
                return m
        return next((m for m in self.metrics if m.type != STUDY), self.metrics[0])


# ----------------------------------------------------------------------------- key locating
