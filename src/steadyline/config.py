"""Metadata files -> frozen project models.

A project folder holds one ``project.toml``; the portfolio root may hold ``portfolio.toml`` with
portfolio-wide defaults. This module reads and validates both completely: every problem (TOML
syntax, wrong type, unknown key with a "did you mean", missing file, value out of its set) becomes
one :class:`~steadyline.errors.Problem` naming the file, line and key, and all of a project's
problems are raised together in one :class:`~steadyline.errors.ProjectError`.

Nothing here reads CSV data; column checks happen in :mod:`steadyline.loading`.
"""

from __future__ import annotations

import datetime as dt
import difflib
import os
import re
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

from . import files, formats
from .errors import Problem, ProjectError, rel
from .status import STALE_AFTER_DAYS
from .vocab import ChartKind, DataType, RollupPeriod, RollupStatistic, RunRules, SignalRules

PROJECT_FILE = "project.toml"
PORTFOLIO_FILE = "portfolio.toml"
NOTES_DEFAULT = "notes.md"

PHASES = ("define", "measure", "analyze", "improve", "control")
DATA_TYPES = DataType.codes()
STUDY = DataType.STUDY.value  # a measurement system study: no time, no better direction
BETTER = ("lower", "higher", "target")
CHARTS = ChartKind.codes()
SIGMA_LEVELS = ("off", "with-shift", "without-shift")
SIGNAL_RULES = SignalRules.codes()
RUN_RULES = RunRules.codes()
LIMIT_MODES = ("baseline", "per-phase")
QUARTILE_METHODS = (
    "inverted_cdf",
    "averaged_inverted_cdf",
    "closest_observation",
    "interpolated_inverted_cdf",
    "hazen",
    "weibull",
    "linear",
    "median_unbiased",
    "normal_unbiased",
    "tukey-hinges",
)
BIN_RULES = ("fd", "sturges", "scott")
PERIODS = RollupPeriod.codes()
STATISTICS = RollupStatistic.codes()
SLUG_RE = re.compile(r"^[a-z0-9][a-z0-9-]*$")


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


class _Locator:
    """Finds the line of a key in TOML text, for messages (tomllib gives no positions).

    A key is looked for only inside its own table: a ``[table]`` or the index-th
    ``[[table]]`` up to the next header that is not one of its sub-tables (``[table.sub]``), a
    sub-table up to the next header. A table written inline (``table = {...}``) or with dotted
    keys (``table.key = ...``, ``sub.key = ...``) is found on that line.
    """

    _HEADER = re.compile(r"^\s*\[")

    def __init__(self, text: str):
        self.lines = text.splitlines()

    def _table_start(self, table: str | None, index: int | None) -> int | None:
        """The header's index (0-based), or None when the file has no such header."""
        if table is None:
            return None
        pattern = re.compile(
            r"^\s*\[\[\s*" + re.escape(table) + r"\s*\]\]"
            if index is not None
            else r"^\s*\[\s*" + re.escape(table) + r"\s*\]"
        )
        seen = -1
        for i, line in enumerate(self.lines):
            if pattern.match(line):
                seen += 1
                if index is None or seen == index:
                    return i
        return None

    def _end(self, start: int, inner: str | None) -> int:
        """Where the table whose header is at *start* ends: the next header, not counting the
        sub-tables ``[inner.…]`` when *inner* is given."""
        own = re.compile(r"^\s*\[\[?\s*" + re.escape(inner) + r"\.") if inner else None
        for i in range(start + 1, len(self.lines)):
            line = self.lines[i]
            if self._HEADER.match(line) and not (own and own.match(line)):
                return i
        return len(self.lines)

    def _find(self, key: str, lo: int, hi: int, dotted: str | None = None) -> int | None:
        """The first line in [lo, hi) that sets *key* (or, with *dotted*, ``dotted.key``)."""
        name = r"\"?" + re.escape(key) + r"\"?"
        if dotted is not None:
            name = r"\"?" + re.escape(dotted) + r"\"?\s*\.\s*" + name
        kp = re.compile(r"^\s*" + name + r"\s*=")
        for i in range(lo, hi):
            if self._HEADER.match(self.lines[i]):
                continue
            if kp.match(self.lines[i]):
                return i
        return None

    def entry_line(
        self, key: str | None, table: str, index: int, sub: str, entry: int
    ) -> int | None:
        """The line of *key* in the entry-th table of the list *sub* of the index-th
        ``[[table]]``: written ``[[table.sub]]`` (the entry's header, or its key beneath it) or
        inline (``sub = [{...}, ...]``: the line where the entry's brace opens, else the line
        of ``sub``)."""
        start = self._table_start(table, index)
        if start is None:
            return self.line_of(sub, table, index)
        own = re.compile(r"^\s*\[\[?\s*" + re.escape(table) + r"\.")
        end = next(
            (
                i
                for i in range(start + 1, len(self.lines))
                if self._HEADER.match(self.lines[i]) and not own.match(self.lines[i])
            ),
            len(self.lines),
        )
        pat = re.compile(r"^\s*\[\[\s*" + re.escape(f"{table}.{sub}") + r"\s*\]\]")
        heads = [i for i in range(start + 1, end) if pat.match(self.lines[i])]
        if entry < len(heads):
            h = heads[entry]
            found = None if key is None else self._find(key, h + 1, self._end(h, None))
            return (found if found is not None else h) + 1
        at = self._find(sub, start + 1, self._end(start, None))
        if at is None:
            return start + 1
        braces = [i for i in range(at, end) if "{" in self.lines[i]]
        return (braces[entry] if entry < len(braces) else at) + 1

    def header_line(self, table: str) -> int | None:
        """The line of a plain ``[table]`` header, or None when there is none."""
        i = self._table_start(table, None)
        return None if i is None else i + 1

    def line_of(
        self,
        key: str | None,
        table: str | None = None,
        index: int | None = None,
        sub: str | None = None,
    ) -> int | None:
        top_end = self._end(-1, None)  # top-level keys stand before the first header
        if table is None:
            found = None if key is None else self._find(key, 0, top_end)
            return None if found is None else found + 1
        start = self._table_start(table, index)
        if start is None:  # inline or dotted at the top level: the line that names the table
            found = None if key is None else self._find(key, 0, top_end, dotted=table)
            if found is None:
                found = self._find(table, 0, top_end)
            if found is None:
                found = next(
                    (
                        i
                        for i in range(top_end)
                        if re.match(r"^\s*" + re.escape(table) + r"\s*\.", self.lines[i])
                    ),
                    None,
                )
            return None if found is None else found + 1
        lo, hi = start, self._end(start, table)
        if sub is not None:
            pat = re.compile(r"^\s*\[\s*" + re.escape(f"{table}.{sub}") + r"\s*\]")
            sub_start = next((i for i in range(lo + 1, hi) if pat.match(self.lines[i])), None)
            if sub_start is None:  # inline (sub = {...}) or dotted (sub.key = ...)
                own_end = self._end(start, None)
                found = None if key is None else self._find(key, lo, own_end, dotted=sub)
                if found is None:
                    found = self._find(sub, lo, own_end)
                return (found if found is not None else start) + 1
            lo, hi = sub_start, self._end(sub_start, None)
        if key is None:
            return lo + 1
        found = self._find(key, lo, hi if sub is not None else self._end(lo, None))
        return (found if found is not None else lo) + 1


# ----------------------------------------------------------------------------- validation


class _Checker:
    """Collects problems for one metadata file."""

    def __init__(self, path: Path, root: Path | None, text: str):
        self.path = path
        self.shown = rel(path, root)
        self.loc = _Locator(text)
        self.problems: list[Problem] = []

    def add(self, where: str, message: str, line: int | None = None, severity: str = "error"):
        self.problems.append(Problem(self.shown, line, where, message, severity))

    def unknown_keys(
        self, data: dict, allowed: tuple[str, ...], prefix: str, table=None, index=None, sub=None
    ):
        for key in data:
            if key not in allowed:
                guess = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
                hint = (
                    f"; did you mean '{guess[0]}'?"
                    if guess
                    else f"; allowed keys are: {', '.join(allowed)}"
                )
                self.add(
                    f"{prefix}{key}", f"unknown key{hint}", self.loc.line_of(key, table, index, sub)
                )


def is_text_encoding(name: str) -> bool:
    """Whether Python decodes bytes to text under this name. Codecs from bytes to bytes
    (base64, zlib) or text to text (rot13) are known to Python but are no text encoding:
    decoding a file with them fails, so they are refused here with the unknown names."""
    try:
        b"    ".decode(name)  # not empty: Python returns "" for empty bytes before any check
    except LookupError:
        return False
    except (UnicodeError, ValueError):
        return True  # a text encoding these four bytes are no valid text of (UTF-32)
    return True


def _type_name(v: Any) -> str:
    return {
        str: "text",
        int: "integer",
        float: "number",
        bool: "true/false",
        list: "list",
        dict: "table",
        dt.date: "date",
        dt.datetime: "date-time",
    }.get(type(v), type(v).__name__)


def _as_date(v: Any) -> dt.date | None:
    if isinstance(v, dt.datetime):
        return v.date()
    if isinstance(v, dt.date):
        return v
    if isinstance(v, str):
        try:
            return dt.date.fromisoformat(v.strip())
        except ValueError:
            return None
    return None


class _Reader:
    """Typed accessors that record a problem and return a default on a wrong value."""

    def __init__(self, ck: _Checker, data: dict, prefix: str, table=None, index=None, sub=None):
        self.ck, self.data, self.prefix = ck, data, prefix
        self.table, self.index, self.sub = table, index, sub

    def _line(self, key):
        return self.ck.loc.line_of(key, self.table, self.index, self.sub)

    def _bad(self, key, expected, got):
        self.ck.add(
            f"{self.prefix}{key}",
            f"expected {expected}, got {_type_name(got)} {got!r}",
            self._line(key),
        )

    def missing(self, key, what):
        self.ck.add(
            f"{self.prefix}{key}",
            f"required key is missing: {what}",
            self.ck.loc.line_of(None, self.table, self.index, self.sub),
        )

    def text(self, key, required=False, default=None, what="text"):
        if key not in self.data:
            if required:
                self.missing(key, what)
            return default
        v = self.data[key]
        if not isinstance(v, str) or (required and not v.strip()):
            self._bad(key, "non-empty text" if required else "text", v)
            return default
        return v.strip()

    def choice(self, key, options, default=None, required=False):
        if key not in self.data:
            if required:
                self.missing(key, "one of " + ", ".join(options))
            return default
        v = self.data[key]
        if not isinstance(v, str) or v not in options:
            guess = difflib.get_close_matches(str(v), options, n=1, cutoff=0.5)
            hint = f"; did you mean '{guess[0]}'?" if guess else ""
            self.ck.add(
                f"{self.prefix}{key}",
                f"expected one of {', '.join(options)}, got {v!r}{hint}",
                self._line(key),
            )
            return default
        return v

    def number(self, key):
        if key not in self.data:
            return None
        v = self.data[key]
        if isinstance(v, bool) or not isinstance(v, int | float):
            self._bad(key, "a number", v)
            return None
        if v != v or v in (float("inf"), float("-inf")):
            self._bad(key, "a finite number", v)
            return None
        return float(v)

    def integer(self, key, minimum=None):
        if key not in self.data:
            return None
        v = self.data[key]
        if isinstance(v, bool) or not isinstance(v, int):
            self._bad(key, "a whole number", v)
            return None
        if minimum is not None and v < minimum:
            self.ck.add(
                f"{self.prefix}{key}", f"must be at least {minimum}, got {v}", self._line(key)
            )
            return None
        return v

    def boolean(self, key, default=False):
        if key not in self.data:
            return default
        v = self.data[key]
        if not isinstance(v, bool):
            self._bad(key, "true or false", v)
            return default
        return v

    def date(self, key, v=None):
        v = self.data.get(key) if v is None else v
        d = _as_date(v)
        if d is None:
            self._bad(key, "a date like 2026-03-31", v)
        return d

    def period(self, key):
        if key not in self.data:
            return None
        v = self.data[key]
        if not isinstance(v, list) or not 1 <= len(v) <= 2:
            self._bad(key, "a list [start] or [start, end] of dates", v)
            return None
        dates = [_as_date(x) for x in v]
        if any(d is None for d in dates):
            self._bad(key, "a list [start] or [start, end] of dates like 2026-03-31", v)
            return None
        if len(dates) == 2 and dates[1] < dates[0]:
            self.ck.add(
                f"{self.prefix}{key}",
                f"the end {dates[1]} is before the start {dates[0]}; write [start, end]",
                self._line(key),
            )
            return None
        return Period(dates[0], dates[1] if len(dates) == 2 else None)

    def table_(self, key):
        if key not in self.data:
            return None
        v = self.data[key]
        if not isinstance(v, dict):
            self._bad(key, "a table", v)
            return None
        return v


@dataclass(frozen=True)
class Key:
    """One key of a metadata table, as the validator reads it: what kind of value it takes
    (text, choice, number, integer, boolean, date, period, text-list, bins, char, table,
    tables), the choices of a choice, whether it is required, and a smallest whole number.
    The key lists the validator checks names against, and the JSON Schema for editors
    (:mod:`steadyline.schema`), are both read from :data:`KEYS`."""

    name: str
    kind: str
    choices: tuple[str, ...] = ()
    required: bool = False
    minimum: int | None = None


# Every key of project.toml and portfolio.toml, table by table, in the order the messages list
# them ("allowed keys are: ..."). "project" and "portfolio" are the top levels of the two files.
KEYS: dict[str, tuple[Key, ...]] = {
    "project": (
        Key("title", "text", required=True),
        Key("owner", "text", required=True),
        Key("phase", "choice", PHASES, required=True),
        Key("problem", "text", required=True),
        Key("tags", "text-list"),
        Key("notes", "text"),
        Key("safety_related", "boolean"),
        Key("phase_dates", "table"),
        Key("comparison", "table"),
        Key("event", "tables"),
        Key("metric", "tables", required=True),
    ),
    "phase_dates": tuple(Key(p, "date") for p in PHASES),
    "comparison": (Key("baseline", "period"), Key("after", "period")),
    "event": (Key("date", "date", required=True), Key("label", "text", required=True)),
    "metric": (
        Key("id", "id", required=True),
        Key("name", "text", required=True),
        Key("file", "text", required=True),
        Key("sheet", "text"),
        Key("type", "choice", DATA_TYPES, required=True),
        Key("time", "text"),
        Key("value", "text"),
        Key("subgroup", "text"),
        Key("subgroup_size", "integer", minimum=1),
        Key("count", "text"),
        Key("size", "text"),
        Key("category", "text"),
        Key("part", "text"),
        Key("appraiser", "text"),
        Key("unit", "text"),
        # required of every type but a measurement study (checked in _check_metric_shape)
        Key("better", "choice", BETTER),
        Key("spec_lower", "number"),
        Key("spec_upper", "number"),
        Key("target", "number"),
        Key("headline", "boolean"),
        Key("chart", "choice", CHARTS),
        Key("signal_rules", "choice", SIGNAL_RULES),
        Key("run_rules", "choice", RUN_RULES),
        Key("limits", "choice", LIMIT_MODES),
        Key("quartiles", "choice", QUARTILE_METHODS),
        Key("bins", "bins", BIN_RULES),
        Key("normal_curve", "boolean"),
        Key("opportunities_per_unit", "positive"),
        Key("expected_change", "number"),
        Key("baseline", "period"),
        Key("after", "period"),
        Key("measurement_study", "id"),
        Key("rollup", "table"),
        Key("csv", "table"),
        Key("set_aside", "tables"),
    ),
    "metric.rollup": (
        Key("period", "choice", PERIODS, required=True),
        Key("statistic", "choice", STATISTICS, required=True),
    ),
    "metric.set_aside": (
        Key("dates", "period", required=True),
        Key("reason", "text", required=True),
    ),
    "metric.csv": (
        Key("delimiter", "char"),
        Key("decimal", "choice", (".", ",")),
        Key("encoding", "text"),
        Key("date_format", "text"),
        Key("timezone", "text"),
    ),
    "portfolio": (
        Key("title", "text"),
        Key("signal_rules", "choice", SIGNAL_RULES),
        Key("run_rules", "choice", RUN_RULES),
        Key("quartiles", "choice", QUARTILE_METHODS),
        Key("bins", "choice", BIN_RULES),
        Key("max_file_mb", "positive"),
        Key("stale_after_days", "integer", minimum=1),
        Key("sigma_level", "choice", SIGMA_LEVELS),
        Key("handover_pack", "boolean"),
    ),
}


def _names(table: str) -> tuple[str, ...]:
    return tuple(k.name for k in KEYS[table])


PROJECT_KEYS = _names("project")
METRIC_KEYS = _names("metric")
PORTFOLIO_KEYS = _names("portfolio")
CSV_KEYS = _names("metric.csv")
ROLLUP_KEYS = _names("metric.rollup")
COMPARISON_KEYS = _names("comparison")
EVENT_KEYS = _names("event")
SET_ASIDE_KEYS = _names("metric.set_aside")

# Which columns each data type needs (besides the metric's "time", needed by all but categories).
COLUMN_KEYS = ("time", "value", "subgroup", "count", "size", "category", "part", "appraiser")


def _read_toml(path: Path, root: Path | None) -> tuple[dict | None, str, list[Problem]]:
    shown = rel(path, root)
    try:
        raw = files.read_bytes(path)  # never opens anything but a regular file
    except files.Unreadable as e:
        return None, "", [Problem(shown, None, "", str(e))]
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as e:
        line = raw[: e.start].count(b"\n") + 1
        return None, "", [Problem(shown, line, "", "the file is not UTF-8 text; save it as UTF-8")]
    try:
        return tomllib.loads(text), text, []
    except tomllib.TOMLDecodeError as e:
        msg = str(e)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        msg = re.sub(r"\s*\(at line \d+, column \d+\)", "", msg)
        col = f" column {m.group(2)}" if m else ""
        return (
            None,
            text,
            [
                Problem(
                    shown,
                    line,
                    "",
                    f"TOML syntax error at{col}: {msg}; see the project format in the README",
                )
            ],
        )


def load_portfolio(root: Path) -> tuple[PortfolioSettings, list[Problem]]:
    path = root / PORTFOLIO_FILE
    if not files.exists(path):
        return PortfolioSettings(), []
    if not files.inside(path, root):
        return PortfolioSettings(), [
            Problem(
                PORTFOLIO_FILE,
                None,
                "",
                _outside(
                    PORTFOLIO_FILE,
                    path,
                    "projects folder",
                    _OUTSIDE_PORTFOLIO,
                    "copy the file in instead",
                ),
            )
        ]
    data, text, problems = _read_toml(path, root)
    if data is None:
        return PortfolioSettings(), problems
    ck = _Checker(path, root, text)
    ck.unknown_keys(data, PORTFOLIO_KEYS, "")
    r = _Reader(ck, data, "")
    d = PortfolioSettings()
    mb = r.number("max_file_mb")
    if mb is not None and mb <= 0:
        ck.add(
            "max_file_mb",
            f"must be a positive number of megabytes, got {mb:g}; the default "
            f"{d.max_file_mb:g} is used",
            ck.loc.line_of("max_file_mb"),
        )
    settings = PortfolioSettings(
        title=r.text("title", default=d.title),
        signal_rules=r.choice("signal_rules", SIGNAL_RULES, d.signal_rules),
        run_rules=r.choice("run_rules", RUN_RULES, d.run_rules),
        quartiles=r.choice("quartiles", QUARTILE_METHODS, d.quartiles),
        bins=r.choice("bins", BIN_RULES, d.bins),
        max_file_mb=mb if mb and mb > 0 else d.max_file_mb,
        stale_after_days=r.integer("stale_after_days", minimum=1) or d.stale_after_days,
        sigma_level=r.choice("sigma_level", SIGMA_LEVELS, d.sigma_level),
        handover_pack=bool(r.boolean("handover_pack")),
    )
    return settings, ck.problems


_OUTSIDE_PORTFOLIO = "nothing outside the projects folder is read"
_OUTSIDE_PROJECT = "a project reads only files inside its own folder"


def _outside(name: str, path: Path, where: str, rule: str, advice: str) -> str:
    """The message for *path*, a link whose real path lies outside *where*."""
    target = os.readlink(path) if os.path.islink(path) else os.path.realpath(path)
    return f"{name} is a link to {target!r}, outside the {where}; {rule}: {advice}"


def _inside(path: Path, folder: Path) -> bool:
    return files.inside(path, folder)


def _fault(path: Path) -> str | None:
    """What keeps *path* from being read as a file ("this is a named pipe (FIFO), not a
    regular file", "cannot read the file: Permission denied"), None when it can be read, ""
    when nothing is there. Opens nothing but a regular file, and reads nothing."""
    if not files.exists(path):
        return ""
    return files.readable_fault(path)


def _sentence(subject: str, why: str) -> str:
    """A fault of :func:`_fault` said of *subject*: "the notes file 'n.md' is a socket, not a
    regular file", "cannot read the notes file 'n.md': Permission denied"."""
    if why.startswith("this is "):
        return f"{subject} is {why.removeprefix('this is ')}"
    return why.replace("the file", subject, 1)


def _file_fault(path: Path, named: str) -> str | None:
    """What keeps *path* (named *named* in project.toml) from being a data file, in words;
    None for a regular file. Opens nothing: whether it can be read is found when it is read,
    and said of the file itself."""
    try:
        why = files.fault(path)
    except FileNotFoundError:
        return f"the file {named!r} does not exist"
    except OSError as e:
        return f"cannot look at {named!r}: {e.strerror}"
    return None if why is None else f"{named!r} is {why}"


def load_project(
    folder: Path, root: Path | None = None, settings: PortfolioSettings | None = None
) -> tuple[ProjectSpec, list[Problem]]:
    """Read and validate one project's metadata.

    Returns the model and the warnings; raises ProjectError with every error found.
    """
    settings = settings or PortfolioSettings()
    root = root or folder.parent
    if not files.inside(folder, root):
        raise ProjectError(
            [
                Problem(
                    f"{folder.name}/",
                    None,
                    "",
                    _outside(
                        "the project folder",
                        folder,
                        "projects folder",
                        _OUTSIDE_PORTFOLIO,
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
                    _outside(
                        PROJECT_FILE,
                        meta,
                        "project folder",
                        _OUTSIDE_PROJECT,
                        "copy the file in instead",
                    ),
                )
            ]
        )
    if (why := _fault(meta)) is not None:
        raise ProjectError([Problem(rel(meta, root), None, "", why)])
    data, text, problems = _read_toml(meta, root)
    if data is None:
        raise ProjectError(problems)
    ck = _Checker(meta, root, text)
    slug = folder.name
    if not SLUG_RE.match(slug):
        ck.add(
            "",
            f"the folder name {slug!r} is not a valid project slug; use lower-case "
            "letters, digits and hyphens",
        )
    ck.unknown_keys(data, PROJECT_KEYS, "")
    r = _Reader(ck, data, "")
    title = r.text("title", required=True, default=slug, what="the project's title")
    owner = r.text("owner", required=True, default="", what="who leads the project")
    phase = r.choice("phase", PHASES, default="define", required=True)
    problem = r.text("problem", required=True, default="", what="the problem statement")
    tags: tuple[str, ...] = ()
    if "tags" in data:
        v = data["tags"]
        if not isinstance(v, list) or not all(isinstance(t, str) for t in v):
            r._bad("tags", "a list of text", v)
        else:
            tags = tuple(dict.fromkeys(t.strip() for t in v if t.strip()))
    notes_path = None
    notes = r.text("notes")
    if notes is not None:
        p = folder / notes
        if Path(notes).is_absolute() or not _inside(p, folder):
            ck.add(
                "notes",
                f"{notes!r} points outside the project folder; keep notes inside it",
                ck.loc.line_of("notes"),
            )
        elif (why := _fault(p)) == "":
            ck.add("notes", f"the notes file {notes!r} does not exist", ck.loc.line_of("notes"))
        elif why is not None:
            ck.add("notes", _sentence(f"the notes file {notes!r}", why), ck.loc.line_of("notes"))
        else:
            notes_path = p
    elif files.exists(folder / NOTES_DEFAULT):  # used when present, so it must be readable
        if not _inside(folder / NOTES_DEFAULT, folder):
            ck.add(
                "notes",
                f"the notes file {NOTES_DEFAULT!r} points outside the project folder "
                "(a link); keep notes inside it",
            )
        elif (why := _fault(folder / NOTES_DEFAULT)) is not None:
            ck.add("notes", _sentence(f"the notes file {NOTES_DEFAULT!r}", why))
        else:
            notes_path = folder / NOTES_DEFAULT
    safety = r.boolean("safety_related")

    phase_dates: list[tuple[str, dt.date]] = []
    pd_table = r.table_("phase_dates")
    if pd_table is not None:
        ck.unknown_keys(pd_table, _names("phase_dates"), "phase_dates.", table="phase_dates")
        pr = _Reader(ck, pd_table, "phase_dates.", table="phase_dates")
        for ph in PHASES:
            if ph in pd_table:
                d = pr.date(ph)
                if d is not None:
                    phase_dates.append((ph, d))
        for (a, da), (b, db) in zip(phase_dates, phase_dates[1:], strict=False):
            if db < da:
                ck.add(
                    f"phase_dates.{b}",
                    f"{b} starts {db}, before {a} ({da}); phases run "
                    "define, measure, analyze, improve, control",
                    ck.loc.line_of(b, "phase_dates"),
                )

    comp_baseline = comp_after = None
    comp = r.table_("comparison")
    if comp is not None:
        ck.unknown_keys(comp, COMPARISON_KEYS, "comparison.", table="comparison")
        cr = _Reader(ck, comp, "comparison.", table="comparison")
        comp_baseline, comp_after = cr.period("baseline"), cr.period("after")
        if comp_baseline and comp_after:
            clash = period_clash(comp_baseline, comp_after)
            if clash:
                ck.add(f"comparison.{clash[0]}", clash[1], cr._line(clash[0]))

    events: list[Event] = []
    ev = data.get("event", [])
    if not isinstance(ev, list) or not all(isinstance(e, dict) for e in ev):
        r._bad("event", "[[event]] tables with date and label", ev)
        ev = []
    for i, e in enumerate(ev):
        er = _Reader(ck, e, f"event[{i + 1}].", table="event", index=i)
        ck.unknown_keys(e, EVENT_KEYS, f"event[{i + 1}].", table="event", index=i)
        label = er.text("label", required=True, what="a short label")
        if "date" not in e:
            er.missing("date", "the date of the event")
            continue
        d = er.date("date")
        if d is not None and label:
            events.append(Event(d, label))
    events.sort(key=lambda e: (e.date, e.label))

    metrics: list[MetricSpec] = []
    raw_metrics = data.get("metric")
    # A project without a metric has nothing to draw: an error (where the file says so: an
    # empty list `metric = []`, or a single [metric] table written for [[metric]]).
    if raw_metrics is None:
        ck.add("metric", "no [[metric]] table; a project needs at least one metric")
        raw_metrics = []
    elif isinstance(raw_metrics, dict):
        ck.add(
            "metric",
            "[metric] is a single table; write [[metric]] (double brackets) before each metric",
            ck.loc.header_line("metric") or ck.loc.line_of("metric"),
        )
        raw_metrics = []
    elif not isinstance(raw_metrics, list) or not all(isinstance(m, dict) for m in raw_metrics):
        r._bad("metric", "[[metric]] tables", raw_metrics)
        raw_metrics = []
    elif not raw_metrics:
        ck.add(
            "metric",
            "the list of metrics is empty; a project needs at least one [[metric]] table",
            ck.loc.line_of("metric"),
        )
    seen_ids: set[str] = set()
    indexed: list[tuple[int, MetricSpec]] = []
    for i, m in enumerate(raw_metrics):
        spec = _metric(ck, m, i, folder, root, settings, comp_baseline, comp_after)
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
    # What the project holds but does not use, and could not be read: a warning, never more.
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
        phase_dates=tuple(phase_dates),
        events=tuple(events),
        metrics=tuple(metrics),
    )
    return project, [p for p in ck.problems if p.severity != "error"]


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
            or _fault(meta) is not None
        ):
            return {}
        data, _text, _problems = _read_toml(meta, root)
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


def _metric(
    ck: _Checker,
    m: dict,
    i: int,
    folder: Path,
    root: Path,
    settings: PortfolioSettings,
    comp_baseline: Period | None,
    comp_after: Period | None,
) -> MetricSpec | None:
    prefix = f"metric[{i + 1}]."
    before = len(ck.problems)
    ck.unknown_keys(m, METRIC_KEYS, prefix, table="metric", index=i)
    r = _Reader(ck, m, prefix, table="metric", index=i)
    mid = r.text("id", required=True, what="a short id like 'lead-time'")
    if mid is not None and not SLUG_RE.match(mid):
        ck.add(
            f"{prefix}id",
            f"{mid!r} is not a valid id; use lower-case letters, digits and hyphens",
            r._line("id"),
        )
    name = r.text("name", required=True, what="the metric's name")
    dtype = r.choice("type", DATA_TYPES, required=True)
    better = r.choice("better", BETTER, required=dtype != STUDY)
    # folder None: the data come from elsewhere (a DataFrame, see metric_from_dict), no file
    file_ = r.text(
        "file",
        required=folder is not None,
        what="the data file (CSV, .xlsx or .parquet), relative to the project folder",
    )
    path = None
    if file_ is not None and folder is not None:
        p = folder / file_
        if Path(file_).is_absolute() or not _inside(p, folder):
            ck.add(
                f"{prefix}file",
                f"{file_!r} points outside the project folder; metric files must live inside it",
                r._line("file"),
            )
        elif not files.exists(p):
            near = difflib.get_close_matches(
                file_,
                sorted(
                    x.name
                    for x in folder.iterdir()
                    if x.suffix.lower() in (".csv", ".xlsx", ".parquet")
                ),
                1,
            )
            hint = f"; did you mean '{near[0]}'?" if near else ""
            ck.add(f"{prefix}file", f"the file {file_!r} does not exist{hint}", r._line("file"))
        elif (why := _file_fault(p, file_)) is not None:
            ck.add(f"{prefix}file", why, r._line("file"))
        else:
            path = p.resolve()
    sheet = r.text("sheet")
    if file_ is not None and folder is not None:
        _check_format(ck, file_, sheet, m.get("csv"), prefix, r)
    cols = {k: r.text(k) for k in COLUMN_KEYS}
    study_id = r.text("measurement_study")
    if study_id is not None and not SLUG_RE.match(study_id):
        ck.add(
            f"{prefix}measurement_study",
            f"{study_id!r} is not a metric id; name the id of "
            "the measurement study metric of this project",
            r._line("measurement_study"),
        )
        study_id = None
    subgroup_size = r.integer("subgroup_size", minimum=1)
    rollup = None
    rt = r.table_("rollup")
    if rt is not None:
        ck.unknown_keys(rt, ROLLUP_KEYS, prefix + "rollup.", table="metric", index=i, sub="rollup")
        rr = _Reader(ck, rt, prefix + "rollup.", table="metric", index=i, sub="rollup")
        per = rr.choice("period", PERIODS, required=True)
        stat = rr.choice("statistic", STATISTICS, required=True)
        if per and stat:
            rollup = Rollup(per, stat)
    csv = CsvOptions()
    ct = r.table_("csv")
    if ct is not None:
        ck.unknown_keys(ct, CSV_KEYS, prefix + "csv.", table="metric", index=i, sub="csv")
        cr = _Reader(ck, ct, prefix + "csv.", table="metric", index=i, sub="csv")
        delim = cr.text("delimiter", default=",")
        if delim is not None and len(delim) != 1:
            ck.add(
                f"{prefix}csv.delimiter",
                f"expected one character, got {delim!r}",
                cr._line("delimiter"),
            )
            delim = ","
        dec = cr.choice("decimal", (".", ","), default=".")
        enc = cr.text("encoding", default="utf-8")
        if enc is not None and not is_text_encoding(enc):
            ck.add(
                f"{prefix}csv.encoding",
                f"unknown text encoding {enc!r}; try utf-8, utf-16 or latin-1",
                cr._line("encoding"),
            )
            enc = "utf-8"
        tz = cr.text("timezone")
        if tz is not None:
            try:
                import zoneinfo

                zoneinfo.ZoneInfo(tz)
            except (zoneinfo.ZoneInfoNotFoundError, ValueError):
                ck.add(
                    f"{prefix}csv.timezone",
                    f"unknown time zone {tz!r}; use a name like 'Europe/Berlin' or 'UTC'",
                    cr._line("timezone"),
                )
                tz = None
        if delim == dec:
            ck.add(
                f"{prefix}csv",
                "the delimiter and the decimal mark are the same character; "
                'files with decimal commas use delimiter = ";"',
                cr._line("decimal"),
            )
        csv = CsvOptions(delim or ",", dec or ".", enc or "utf-8", cr.text("date_format"), tz)

    own_baseline, own_after = r.period("baseline"), r.period("after")
    bins: str | tuple[float, ...] = settings.bins
    if "bins" in m:
        v = m["bins"]
        if isinstance(v, list):
            if (
                len(v) < 2
                or not all(isinstance(x, int | float) and not isinstance(x, bool) for x in v)
                or any(b <= a for a, b in zip(v, v[1:], strict=False))
            ):
                r._bad("bins", "a list of at least two increasing numbers", v)
            else:
                bins = tuple(float(x) for x in v)
        else:
            bins = r.choice("bins", BIN_RULES, settings.bins)

    spec = MetricSpec(
        id=mid or f"metric-{i + 1}",
        name=name or "",
        file=path or (folder / (file_ or "") if folder is not None else ck.path),
        file_rel=rel(folder / (file_ or ""), root) if folder is not None else ck.shown,
        type=dtype or "continuous",
        better=better or ("" if dtype == STUDY else "lower"),
        subgroup_size=subgroup_size,
        unit=r.text("unit", default="") or "",
        spec_lower=r.number("spec_lower"),
        spec_upper=r.number("spec_upper"),
        target=r.number("target"),
        headline=r.boolean("headline"),
        chart=r.choice("chart", CHARTS, "auto"),
        signal_rules=r.choice("signal_rules", SIGNAL_RULES, settings.signal_rules),
        run_rules=r.choice("run_rules", RUN_RULES, settings.run_rules),
        limits=r.choice("limits", LIMIT_MODES, "baseline"),
        quartiles=r.choice("quartiles", QUARTILE_METHODS, settings.quartiles),
        bins=bins,
        normal_curve=r.boolean("normal_curve"),
        opportunities_per_unit=r.number("opportunities_per_unit"),
        expected_change=r.number("expected_change"),
        sigma_level=settings.sigma_level,
        baseline=own_baseline or comp_baseline,
        after=own_after or comp_after,
        rollup=rollup,
        csv=csv,
        line=ck.loc.line_of(None, "metric", i),
        sheet=sheet,
        measurement_study=study_id,
        **cols,
    )
    if "set_aside" in m:
        spec = replace(spec, set_aside=_set_aside(ck, m["set_aside"], i, spec))
    if dtype is not None:
        _check_metric_shape(ck, spec, prefix, r)
    # Periods the metric sets itself are checked here, at the metric's own key; a clash of the
    # [comparison] periods alone is reported once, at [comparison].
    owned = [k for k, v in (("baseline", own_baseline), ("after", own_after)) if v is not None]
    if owned and spec.baseline and spec.after:
        clash = period_clash(spec.baseline, spec.after)
        if clash:
            key = clash[0] if clash[0] in owned else owned[0]
            ck.add(f"{prefix}{key}", clash[1], r._line(key))
    if len([p for p in ck.problems[before:] if p.severity == "error"]):
        return None
    return spec


class _EntryReader(_Reader):
    """A reader of one entry of a list of tables inside a metric (``[[metric.set_aside]]``),
    whose messages name the entry's own line."""

    def __init__(self, ck: _Checker, data: dict, prefix: str, index: int, sub: str, entry: int):
        super().__init__(ck, data, prefix, table="metric", index=index)
        self.sub_name, self.entry = sub, entry

    def _line(self, key):
        return self.ck.loc.entry_line(key, "metric", self.index, self.sub_name, self.entry)

    def missing(self, key, what):
        self.ck.add(f"{self.prefix}{key}", f"required key is missing: {what}", self._line(None))


def _set_aside(ck: _Checker, raw: Any, i: int, spec: MetricSpec) -> tuple[SetAside, ...]:
    """The metric's set-aside days, checked on their own and against the baseline period:
    each inside the baseline, none overlapping another, not all of the baseline. Whether any
    point falls in them is checked with the data (:mod:`steadyline.loading`)."""
    prefix = f"metric[{i + 1}].set_aside"
    line = ck.loc.entry_line(None, "metric", i, "set_aside", 0)
    if not isinstance(raw, list) or not all(isinstance(e, dict) for e in raw):
        ck.add(
            prefix,
            "expected [[metric.set_aside]] tables, each with dates and reason, got "
            f"{_type_name(raw)} {raw!r}",
            line,
        )
        return ()
    if spec.type == "categories":
        ck.add(
            prefix,
            "a categories metric has no control limits or centre line to set points "
            "aside from; remove set_aside",
            line,
        )
        return ()
    out: list[SetAside] = []
    for j, e in enumerate(raw):
        where = f"{prefix}[{j + 1}]"
        er = _EntryReader(ck, e, f"{where}.", i, "set_aside", j)
        for key in e:
            if key not in SET_ASIDE_KEYS:
                guess = difflib.get_close_matches(key, SET_ASIDE_KEYS, n=1, cutoff=0.6)
                hint = (
                    f"did you mean '{guess[0]}'?"
                    if guess
                    else "allowed keys are: " + ", ".join(SET_ASIDE_KEYS)
                )
                ck.add(f"{where}.{key}", f"unknown key; {hint}", er._line(key))
        reason = er.text(
            "reason",
            required=True,
            what="why these points are set aside: the cause found and removed",
        )
        if "dates" not in e:
            er.missing("dates", "[day] or [first day, last day] of the points set aside")
            continue
        p = er.period("dates")
        if p is None or reason is None:
            continue
        entry = SetAside(p.start, p.end or p.start, reason, where, ck.shown, er._line("dates"))
        b = spec.baseline
        if b is not None and (entry.start < b.start or (b.end is not None and entry.end > b.end)):
            ck.add(
                f"{where}.dates",
                f"{entry.label()} is not inside the baseline period "
                f"({b.label()}); only baseline points can be set aside",
                entry.line,
            )
            continue
        out.append(entry)
    out.sort(key=lambda e: (e.start, e.end))
    kept: list[SetAside] = []
    for e in out:
        if kept and e.start <= kept[-1].end:
            ck.add(
                f"{e.where}.dates",
                f"{e.label()} overlaps {kept[-1].where} "
                f"({kept[-1].label()}); give each day once: merge them into one range",
                e.line,
            )
            continue
        kept.append(e)
    b = spec.baseline
    if kept and b is not None and b.end is not None:
        day, covered = b.start, True
        for e in kept:
            if e.start > day:
                covered = False
                break
            day = max(day, e.end + dt.timedelta(days=1))
        if covered and day > b.end:
            ck.add(
                prefix,
                f"the days set aside cover the whole baseline period ({b.label()}); "
                "no point would be left to compute the baseline from",
                line,
            )
            return ()
    return tuple(kept)


# [metric.csv] keys that say how text is stored, which a workbook or Parquet file does not have.
_TEXT_ONLY_KEYS = ("delimiter", "encoding")


def _check_format(
    ck: _Checker, file_: str, sheet: str | None, csv_table, prefix: str, r: _Reader
) -> None:
    """What the data file's kind (by its name's ending) allows: `sheet` only for a workbook;
    a spreadsheet of a kind that is not read is named with what to do; the [metric.csv] keys
    of text files do nothing for a workbook or Parquet file (a warning)."""
    kind = formats.data_format(file_)
    other = formats.unread_sheet_kind(file_)
    if other is not None:
        ck.add(
            f"{prefix}file",
            f"{file_!r} is {other}, which is not read; save it as an Excel "
            "Workbook (.xlsx) or export the data as CSV",
            r._line("file"),
        )
    if sheet is not None and kind != formats.WORKBOOK:
        ck.add(
            f"{prefix}sheet",
            f"'sheet' names a sheet of a workbook (.xlsx), but {file_!r} "
            "is not one; remove the key",
            r._line("sheet"),
        )
    if kind != formats.CSV and isinstance(csv_table, dict):
        what = "a workbook" if kind == formats.WORKBOOK else "a Parquet file"
        for key in _TEXT_ONLY_KEYS:
            if key in csv_table:
                ck.add(
                    f"{prefix}csv.{key}",
                    f"has no effect on {what}: its cells are read as stored; remove the key",
                    ck.loc.line_of(key, "metric", r.index, "csv"),
                    severity="warning",
                )


def metric_from_dict(
    data: dict, settings: PortfolioSettings | None = None, source: str = "<DataFrame>"
) -> MetricSpec:
    """One metric's keys, as a ``[[metric]]`` table of project.toml holds them (dates as
    ``datetime.date`` or ISO text), checked by the very rules a project's metrics are, for data
    that come from elsewhere (a DataFrame): ``file`` is not needed (and not read when given).
    *source* names the data in
    messages. Returns the metric; raises ProjectError with every error (warnings are dropped:
    :func:`steadyline.notebook.analyse_frame` reports the data's own)."""
    settings = settings or PortfolioSettings()
    ck = _Checker(Path(source), None, "")
    if not isinstance(data, dict):
        ck.add("metric", f"expected a dict of the metric's keys, got {_type_name(data)}")
        raise ProjectError(ck.problems)
    comp = {}
    # a metric copied from project.toml keeps its `file`: not read, the DataFrame is the data
    data = {k: v for k, v in data.items() if k != "file"}
    for key in ("baseline", "after"):  # a period may be given as a tuple too
        if isinstance(data.get(key), tuple):
            comp[key] = list(data[key])
    spec = _metric(ck, data | comp, 0, None, None, settings, None, None)
    if spec is None or any(p.severity == "error" for p in ck.problems):
        raise ProjectError(ck.problems)
    return spec


def _check_metric_shape(ck: _Checker, m: MetricSpec, prefix: str, r: _Reader) -> None:
    """Which keys each data type needs, and which combinations make sense."""
    line = r._line(None)

    def need(key, what):
        if getattr(m, key) is None:
            ck.add(f"{prefix}{key}", f"a {m.type} metric needs '{key}': {what}", line)

    if m.type == STUDY:
        _check_study_shape(ck, m, prefix, r, need)
        return
    for key in ("part", "appraiser"):
        if getattr(m, key) is not None:
            ck.add(
                f"{prefix}{key}",
                f"'{key}' names a column of a measurement study (type = "
                f'"{STUDY}"); a {m.type} metric has none: remove it',
                r._line(key),
            )
    if m.type != "categories":
        need("time", "the column with the date or time of each row")
    if m.type == "continuous":
        need("value", "the column with the measured value")
    elif m.type == "subgroups":
        need("value", "the column with the measured value")
        if (m.subgroup is None) == (m.subgroup_size is None):
            ck.add(
                f"{prefix}subgroup",
                "a subgroups metric needs exactly one of 'subgroup' (the "
                "column naming each subgroup) or 'subgroup_size' (a fixed size over "
                "consecutive rows)",
                line,
            )
    elif m.type == "defectives":
        flags = m.value is not None and m.rollup is not None
        if not flags:
            need("count", "the column with the number of defective items")
            need("size", "the column with the number of items checked")
    elif m.type == "defects":
        need("count", "the column with the number of defects")
    elif m.type == "categories":
        need("category", "the column with each row's category")
    if m.rollup is not None:
        if m.type in ("subgroups", "categories"):
            ck.add(
                f"{prefix}rollup", f"a roll-up does not apply to a {m.type} metric; remove it", line
            )
        else:
            fits, what = rollup_statistics(m)
            if m.rollup.statistic not in fits:
                use = " or ".join(f'"{f}"' for f in fits)
                ck.add(
                    f"{prefix}rollup.statistic",
                    f'"{m.rollup.statistic}" does not fit {what}; use statistic = {use}',
                    ck.loc.line_of("statistic", r.table, r.index, "rollup"),
                )
    if m.spec_lower is not None and m.spec_upper is not None and m.spec_lower >= m.spec_upper:
        ck.add(
            f"{prefix}spec_lower",
            f"spec_lower ({m.spec_lower:g}) must be below spec_upper ({m.spec_upper:g})",
            r._line("spec_lower"),
        )
    # A target outside the specification limits is an error: a process run at its target would
    # be out of specification, so the limits or the target are mistyped, and what the pages say
    # about either (capability, closeness to target) could not be true. On a limit is allowed
    # (a target of zero with spec_lower = 0).
    lo, hi, t = m.spec_lower, m.spec_upper, m.target
    if t is not None and not (lo is not None and hi is not None and lo >= hi):
        if (lo is not None and t < lo) or (hi is not None and t > hi):
            if lo is not None and hi is not None:
                limits = f"outside the specification limits ({_num(lo)} to {_num(hi)})"
            else:
                limits = (
                    f"below spec_lower ({_num(lo)})"
                    if lo is not None
                    else f"above spec_upper ({_num(hi)})"
                )
            ck.add(
                f"{prefix}target",
                f"the target {_num(t)} is {limits}; a process on target "
                "would be out of specification: check the target and the limits",
                r._line("target"),
            )
    _check_business_keys(ck, m, prefix, r)
    if m.better == "target" and m.target is None:
        ck.add(
            f"{prefix}target", 'better = "target" needs a target value', line, severity="warning"
        )
    if m.type not in ("categories", STUDY) and m.baseline is None:
        ck.add(
            f"{prefix}baseline",
            "no baseline period (here or in [comparison]); all the data is treated as baseline",
            line,
            severity="warning",
        )


# Keys a measurement study has no use for: it has no time axis, no direction of better, no
# control chart and no periods of its own (the project's [comparison] does not apply to it).
_NOT_FOR_STUDY = (
    "time",
    "subgroup",
    "subgroup_size",
    "count",
    "size",
    "category",
    "better",
    "target",
    "chart",
    "signal_rules",
    "run_rules",
    "limits",
    "quartiles",
    "bins",
    "normal_curve",
    "baseline",
    "after",
    "rollup",
    "measurement_study",
    "opportunities_per_unit",
    "expected_change",
)


def _check_study_shape(ck: _Checker, m: MetricSpec, prefix: str, r: _Reader, need) -> None:
    """A measurement study names its value, part and appraiser columns; every key of a process
    metric is refused by name, so that nothing in its table is silently ignored."""
    need("value", "the column with each measurement")
    need("part", "the column naming the part measured")
    need("appraiser", "the column naming who measured it")
    for key in _NOT_FOR_STUDY:
        if key in r.data:
            why = (
                "a study's measurements of one part and appraiser are its trials, in the "
                "file's order"
                if key == "time"
                else "a study is named by the process metric it checks, not the other way round"
                if key == "measurement_study"
                else "it has no time axis, control chart or direction of better"
            )
            ck.add(
                f"{prefix}{key}",
                f"'{key}' does not apply to a measurement study ({why}); remove it",
                r._line(key),
            )
    if m.spec_lower is not None and m.spec_upper is not None and m.spec_lower >= m.spec_upper:
        ck.add(
            f"{prefix}spec_lower",
            f"spec_lower ({m.spec_lower:g}) must be below spec_upper ({m.spec_upper:g})",
            r._line("spec_lower"),
        )


def check_study_links(ck: _Checker, indexed: list[tuple[int, MetricSpec]]) -> None:
    """What only the whole project can tell of its measurement studies: a metric's
    ``measurement_study`` names a study of the same project; a study is never the headline
    (the index judges a process by it); a project holds at least one metric besides its
    studies."""
    by_id = {m.id: m for _, m in indexed}
    for i, m in indexed:
        sid = m.measurement_study
        if sid is None:
            continue
        line = ck.loc.line_of("measurement_study", "metric", i)
        target = by_id.get(sid)
        if target is None:
            studies = [x.id for _, x in indexed if x.type == STUDY]
            near = difflib.get_close_matches(sid, studies, n=1, cutoff=0.6)
            hint = (
                f"; did you mean '{near[0]}'?"
                if near
                else f"; its studies are: {', '.join(studies)}"
                if studies
                else f'; it has no metric of type "{STUDY}"'
            )
            ck.add(
                f"metric[{i + 1}].measurement_study",
                f"no metric of this project has the id {sid!r}{hint}",
                line,
            )
        elif target.type != STUDY:
            ck.add(
                f"metric[{i + 1}].measurement_study",
                f'{sid!r} is a {target.type} metric, not a measurement study (type = "{STUDY}")',
                line,
            )
    for i, m in indexed:
        if m.type == STUDY and m.headline:
            ck.add(
                f"metric[{i + 1}].headline",
                "a measurement study cannot be the headline "
                "metric: the index judges a project by a process metric; mark one of those",
                ck.loc.line_of("headline", "metric", i),
            )
    if indexed and all(m.type == STUDY for _, m in indexed):
        ck.add(
            "metric",
            "every metric is a measurement study; a project needs at least one "
            "process metric for its measurements to qualify and its status to judge",
            ck.loc.line_of(None, "metric", 0),
        )


def _check_business_keys(ck: _Checker, m: MetricSpec, prefix: str, r: _Reader) -> None:
    """opportunities_per_unit and expected_change: what each needs to mean anything."""
    opp = m.opportunities_per_unit
    if opp is not None:
        key, line = f"{prefix}opportunities_per_unit", r._line("opportunities_per_unit")
        if m.type != "defects":
            ck.add(key, f"applies to defects metrics only (this one is {m.type}); remove it", line)
        elif opp <= 0:
            ck.add(
                key,
                f"must be a positive number of places a defect can occur on one "
                f"unit, got {_num(opp)}",
                line,
            )
        elif m.size is None:
            ck.add(
                key,
                "needs 'size', the column with the number of units checked, to count "
                "the opportunities",
                line,
            )
    change = m.expected_change
    if change is not None:
        key, line = f"{prefix}expected_change", r._line("expected_change")
        if m.type == "categories":
            ck.add(
                key,
                "does not apply to a categories metric (no single measure to change); remove it",
                line,
            )
        elif change == 0:
            ck.add(
                key, "must not be zero: it is the change the after sample is sized to detect", line
            )
        elif m.type == "defectives" and not -1 < change < 1:
            ck.add(
                key,
                f"a change of a proportion lies between -1 and 1 (write -0.02 for two "
                f"percentage points down), got {_num(change)}",
                line,
            )
        elif (m.better, change > 0) in (("lower", True), ("higher", False)):
            ck.add(
                key,
                f'{_num(change)} is a change for the worse (better = "{m.better}"); '
                "the after sample is sized to detect it all the same",
                line,
                severity="warning",
            )


def _num(x: float) -> str:
    """A number from the metadata as written: short, but never rounded."""
    short = f"{x:g}"
    return short if float(short) == x else repr(x)


def rollup_statistics(m: MetricSpec) -> tuple[tuple[str, ...], str]:
    """The roll-up statistics that fit a metric, and what its roll-up does (for messages).

    Only these are accepted, so that a roll-up always does what its statistic says: the
    attribute types are rolled up by adding their counts per period (the p, u and c charts
    need the totals), never by the statistic's name.
    - continuous: every statistic, of the values of each period ("count" counts the rows with
      a value, "proportion" is the share of 1s in a 0/1 column, charted as defectives);
    - defectives: "proportion", the defective items over the items checked in each period
      (from count and size, or the share of 1s in a 0/1 value column);
    - defects without a size: "sum", the defects counted in each period (a mean per row would
      be a rate per row, and a row is no defined area of opportunity);
    - defects with a size: "mean", the defects per unit of area of each period: its summed
      counts over its summed size.
    """
    if m.type == "defectives":
        src = (
            "the share of 1s in its 0/1 'value' column"
            if m.value is not None
            else "its defective items over the items checked"
        )
        return ("proportion",), (f"a defectives metric: its roll-up plots {src} in each period")
    if m.type == "defects" and m.size is None:
        return ("sum",), (
            "a defects metric without a 'size' column: its roll-up adds the "
            "defects counted in each period (a mean per row is a rate only with a "
            "'size' column, the area of opportunity of each row)"
        )
    if m.type == "defects":
        return ("mean",), (
            "a defects metric with a 'size' column: its roll-up plots the "
            "defects per unit of 'size' in each period, the summed counts over "
            "the summed size"
        )
    return STATISTICS, "a continuous metric"


def period_clash(baseline: Period, after: Period) -> tuple[str, str] | None:
    """Why a baseline and an after period cannot be compared, and which of the two to change
    ("baseline" or "after"); None when the after period starts after the baseline ends.

    An error, not a warning: a day in both periods would be counted as "after" only (the
    baseline silently loses it), the baseline's limits and median would be drawn from data
    they are then compared with, and every before/after figure would compare the process with
    itself. An open-ended baseline ([start]) takes in every later day, so it overlaps any after
    period that does not end before it starts; an after period wholly before the baseline is
    refused too, since the pages would call the earlier data "after".
    """
    label = baseline.label()
    if after.end is not None and after.end < baseline.start:
        return "after", (
            f"the after period ({after.label()}) ends before the baseline "
            f"({label}) starts; the after period follows the baseline"
        )
    if after.start <= baseline.start:
        when = "before" if after.start < baseline.start else "on the day"
        fix = f", so start it after {baseline.end}" if baseline.end else ""
        return "after", (
            f"the after period starts {after.start}, {when} the baseline ({label}) "
            f"starts; the after period follows the baseline{fix}"
        )
    if baseline.end is None:
        return "baseline", (
            f"the baseline ({label}) has no end, so it overlaps the after period "
            f"({after.label()}); give the baseline an end before {after.start}"
        )
    if after.start > baseline.end:
        return None
    return "after", (
        f"the after period starts {after.start}, inside the baseline ({label}); a "
        f"day belongs to one period only, so start the after period after "
        f"{baseline.end}"
    )


def discover(root: Path) -> list[Path]:
    """Project folders under the portfolio root: every sub-folder that is not hidden.

    A folder without project.toml is still listed so that the user is told about it, and so is
    a link to a folder outside the projects folder (it is refused when loaded). A folder named
    portfolio.toml is not a project: it is reported as a broken portfolio.toml.
    """
    if not root.is_dir():
        return []
    return sorted(
        p
        for p in root.iterdir()
        if p.is_dir() and p.name != PORTFOLIO_FILE and not p.name.startswith((".", "_"))
    )


def stray_entries(root: Path) -> list[Problem]:
    """Warnings for what lies directly in the projects folder, is neither a folder nor
    portfolio.toml, and cannot be read (a named pipe, socket or device, a dangling link or a
    loop of links, an unreadable file): no project uses it, so it costs none. Reads nothing,
    and opens nothing but regular files (to learn whether they can be read)."""
    if not root.is_dir():
        return []
    problems = []
    for p in sorted(root.iterdir()):
        if p.name.startswith((".", "_")) or p.name == PORTFOLIO_FILE or files.is_ignored(p.name):
            continue
        if p.is_dir() or not files.inside(p, root):
            continue
        why = files.readable_fault(p)
        if why is not None:
            problems.append(
                Problem(
                    rel(p, root),
                    None,
                    "",
                    f"{why}; no project uses it, so it is left alone",
                    "warning",
                )
            )
    return problems
