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
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .errors import Problem, ProjectError, rel
from .status import STALE_AFTER_DAYS

PROJECT_FILE = "project.toml"
PORTFOLIO_FILE = "portfolio.toml"
NOTES_DEFAULT = "notes.md"

PHASES = ("define", "measure", "analyze", "improve", "control")
DATA_TYPES = ("continuous", "subgroups", "defectives", "defects", "categories")
BETTER = ("lower", "higher", "target")
CHARTS = ("auto", "xmr", "xbar-r", "xbar-s", "p", "np", "c", "u", "laney-p", "laney-u")
SIGNAL_RULES = ("western-electric", "nelson")
RUN_RULES = ("anhoj", "perla")
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
PERIODS = ("day", "week", "month", "quarter")
STATISTICS = ("mean", "median", "sum", "count", "proportion")
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
    baseline: Period | None = None
    after: Period | None = None
    rollup: Rollup | None = None
    csv: CsvOptions = field(default_factory=CsvOptions)
    line: int | None = None  # line of its [[metric]] header in project.toml


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
        for m in self.metrics:
            if m.headline:
                return m
        return self.metrics[0]


# ----------------------------------------------------------------------------- key locating


class _Locator:
    """Finds the line of a key in TOML text, for messages (tomllib gives no positions)."""

    def __init__(self, text: str):
        self.lines = text.splitlines()

    def _table_start(self, table: str | None, index: int | None) -> int:
        if table is None:
            return 0
        pattern = re.compile(r"^\s*\[\[\s*" + re.escape(table) + r"\s*\]\]" if index is not None
                             else r"^\s*\[\s*" + re.escape(table) + r"\s*\]")
        seen = -1
        for i, line in enumerate(self.lines):
            if pattern.match(line):
                seen += 1
                if index is None or seen == index:
                    return i
        return 0

    def line_of(self, key: str | None, table: str | None = None, index: int | None = None,
                sub: str | None = None) -> int | None:
        start = self._table_start(table, index)
        if sub is not None:
            pat = re.compile(r"^\s*\[\s*" + re.escape(f"{table}.{sub}") + r"\s*\]")
            for i in range(start, len(self.lines)):
                if pat.match(self.lines[i]):
                    start = i
                    break
        if key is None:
            return start + 1 if (table or sub) else None
        kp = re.compile(r"^\s*(?:\"?" + re.escape(key) + r"\"?)\s*=")
        for i in range(start, len(self.lines)):
            if i > start and table is None and self.lines[i].lstrip().startswith("["):
                break
            if kp.match(self.lines[i]):
                return i + 1
            if i > start and index is not None and re.match(r"^\s*\[\[", self.lines[i]):
                break
        return start + 1 if table else None


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

    def unknown_keys(self, data: dict, allowed: tuple[str, ...], prefix: str, table=None,
                     index=None, sub=None):
        for key in data:
            if key not in allowed:
                guess = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
                hint = f"; did you mean '{guess[0]}'?" if guess else \
                    f"; allowed keys are: {', '.join(allowed)}"
                self.add(f"{prefix}{key}", f"unknown key{hint}",
                         self.loc.line_of(key, table, index, sub))


def _type_name(v: Any) -> str:
    return {str: "text", int: "integer", float: "number", bool: "true/false", list: "list",
            dict: "table", dt.date: "date", dt.datetime: "date-time"}.get(type(v), type(v).__name__)


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
        self.ck.add(f"{self.prefix}{key}",
                    f"expected {expected}, got {_type_name(got)} {got!r}", self._line(key))

    def missing(self, key, what):
        self.ck.add(f"{self.prefix}{key}", f"required key is missing: {what}",
                    self.ck.loc.line_of(None, self.table, self.index, self.sub))

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
            self.ck.add(f"{self.prefix}{key}",
                        f"expected one of {', '.join(options)}, got {v!r}{hint}", self._line(key))
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
            self.ck.add(f"{self.prefix}{key}", f"must be at least {minimum}, got {v}",
                        self._line(key))
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
            self.ck.add(f"{self.prefix}{key}", f"the end {dates[1]} is before the start "
                        f"{dates[0]}; write [start, end]", self._line(key))
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


PROJECT_KEYS = ("title", "owner", "phase", "problem", "tags", "notes", "safety_related",
                "phase_dates", "comparison", "event", "metric")
METRIC_KEYS = ("id", "name", "file", "type", "time", "value", "subgroup", "subgroup_size", "count",
               "size", "category", "unit", "better", "spec_lower", "spec_upper", "target",
               "headline", "chart", "signal_rules", "run_rules", "limits", "quartiles", "bins",
               "normal_curve", "baseline", "after", "rollup", "csv")
PORTFOLIO_KEYS = ("title", "signal_rules", "run_rules", "quartiles", "bins", "max_file_mb",
                  "stale_after_days")
CSV_KEYS = ("delimiter", "decimal", "encoding", "date_format", "timezone")
ROLLUP_KEYS = ("period", "statistic")

# Which columns each data type needs (besides the metric's "time", needed by all but categories).
COLUMN_KEYS = ("time", "value", "subgroup", "count", "size", "category")


def _read_toml(path: Path, root: Path | None) -> tuple[dict | None, str, list[Problem]]:
    shown = rel(path, root)
    try:
        raw = path.read_bytes()
    except OSError as e:
        return None, "", [Problem(shown, None, "", f"cannot read the file: {e.strerror}")]
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
        return None, text, [Problem(shown, line, "", f"TOML syntax error at{col}: {msg}; "
                                    "see the project format in the README")]


def load_portfolio(root: Path) -> tuple[PortfolioSettings, list[Problem]]:
    path = root / PORTFOLIO_FILE
    if not path.is_file():
        return PortfolioSettings(), []
    data, text, problems = _read_toml(path, root)
    if data is None:
        return PortfolioSettings(), problems
    ck = _Checker(path, root, text)
    ck.unknown_keys(data, PORTFOLIO_KEYS, "")
    r = _Reader(ck, data, "")
    d = PortfolioSettings()
    mb = r.number("max_file_mb")
    if mb is not None and mb <= 0:
        ck.add("max_file_mb", f"must be a positive number of megabytes, got {mb:g}; the default "
               f"{d.max_file_mb:g} is used", ck.loc.line_of("max_file_mb"))
    settings = PortfolioSettings(
        title=r.text("title", default=d.title),
        signal_rules=r.choice("signal_rules", SIGNAL_RULES, d.signal_rules),
        run_rules=r.choice("run_rules", RUN_RULES, d.run_rules),
        quartiles=r.choice("quartiles", QUARTILE_METHODS, d.quartiles),
        bins=r.choice("bins", BIN_RULES, d.bins),
        max_file_mb=mb if mb and mb > 0 else d.max_file_mb,
        stale_after_days=r.integer("stale_after_days", minimum=1) or d.stale_after_days,
    )
    return settings, ck.problems


def _inside(path: Path, folder: Path) -> bool:
    try:
        path.resolve().relative_to(folder.resolve())
        return True
    except (ValueError, OSError):
        return False


def load_project(folder: Path, root: Path | None = None,
                 settings: PortfolioSettings | None = None) -> tuple[ProjectSpec, list[Problem]]:
    """Read and validate one project's metadata.

    Returns the model and the warnings; raises ProjectError with every error found.
    """
    settings = settings or PortfolioSettings()
    root = root or folder.parent
    meta = folder / PROJECT_FILE
    if not meta.is_file():
        raise ProjectError([Problem(rel(folder, root) + "/", None, "",
                                    f"no {PROJECT_FILE} in this project folder; add one (see the "
                                    "project format in the README) or move the folder out")])
    data, text, problems = _read_toml(meta, root)
    if data is None:
        raise ProjectError(problems)
    ck = _Checker(meta, root, text)
    slug = folder.name
    if not SLUG_RE.match(slug):
        ck.add("", f"the folder name {slug!r} is not a valid project slug; use lower-case "
               "letters, digits and hyphens")
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
            ck.add("notes", f"{notes!r} points outside the project folder; keep notes inside it",
                   ck.loc.line_of("notes"))
        elif not p.is_file():
            ck.add("notes", f"the notes file {notes!r} does not exist", ck.loc.line_of("notes"))
        else:
            notes_path = p
    elif (folder / NOTES_DEFAULT).is_file():
        if _inside(folder / NOTES_DEFAULT, folder):
            notes_path = folder / NOTES_DEFAULT
        else:
            ck.add("notes", f"the notes file {NOTES_DEFAULT!r} points outside the project folder "
                   "(a link); keep notes inside it")
    safety = r.boolean("safety_related")

    phase_dates: list[tuple[str, dt.date]] = []
    pd_table = r.table_("phase_dates")
    if pd_table is not None:
        ck.unknown_keys(pd_table, PHASES, "phase_dates.", table="phase_dates")
        pr = _Reader(ck, pd_table, "phase_dates.", table="phase_dates")
        for ph in PHASES:
            if ph in pd_table:
                d = pr.date(ph)
                if d is not None:
                    phase_dates.append((ph, d))
        for (a, da), (b, db) in zip(phase_dates, phase_dates[1:], strict=False):
            if db < da:
                ck.add(f"phase_dates.{b}", f"{b} starts {db}, before {a} ({da}); phases run "
                       "define, measure, analyze, improve, control", ck.loc.line_of(b, "phase_dates"))

    comp_baseline = comp_after = None
    comp = r.table_("comparison")
    if comp is not None:
        ck.unknown_keys(comp, ("baseline", "after"), "comparison.", table="comparison")
        cr = _Reader(ck, comp, "comparison.", table="comparison")
        comp_baseline, comp_after = cr.period("baseline"), cr.period("after")

    events: list[Event] = []
    ev = data.get("event", [])
    if not isinstance(ev, list) or not all(isinstance(e, dict) for e in ev):
        r._bad("event", "[[event]] tables with date and label", ev)
        ev = []
    for i, e in enumerate(ev):
        er = _Reader(ck, e, f"event[{i + 1}].", table="event", index=i)
        ck.unknown_keys(e, ("date", "label"), f"event[{i + 1}].", table="event", index=i)
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
    if raw_metrics is None:
        ck.add("metric", "no [[metric]] table; a project needs at least one metric")
        raw_metrics = []
    elif not isinstance(raw_metrics, list) or not all(isinstance(m, dict) for m in raw_metrics):
        r._bad("metric", "[[metric]] tables", raw_metrics)
        raw_metrics = []
    seen_ids: set[str] = set()
    for i, m in enumerate(raw_metrics):
        spec = _metric(ck, m, i, folder, root, settings, comp_baseline, comp_after)
        if spec is None:
            continue
        if spec.id in seen_ids:
            ck.add(f"metric[{i + 1}].id", f"the id {spec.id!r} is used by another metric; ids "
                   "must be unique in a project", ck.loc.line_of("id", "metric", i))
            continue
        seen_ids.add(spec.id)
        metrics.append(spec)
    if sum(m.headline for m in metrics) > 1:
        ck.add("metric.headline", "more than one metric is marked headline = true; mark one")

    errors = [p for p in ck.problems if p.severity == "error"]
    if errors:
        raise ProjectError(ck.problems)
    project = ProjectSpec(
        slug=slug, folder=folder, meta_path=meta, meta_rel=ck.shown, title=title or slug,
        owner=owner or "", phase=phase or "define", problem=problem or "", tags=tags,
        notes_path=notes_path, safety_related=safety, phase_dates=tuple(phase_dates),
        events=tuple(events), metrics=tuple(metrics),
    )
    return project, [p for p in ck.problems if p.severity != "error"]


def _metric(ck: _Checker, m: dict, i: int, folder: Path, root: Path, settings: PortfolioSettings,
            comp_baseline: Period | None, comp_after: Period | None) -> MetricSpec | None:
    prefix = f"metric[{i + 1}]."
    before = len(ck.problems)
    ck.unknown_keys(m, METRIC_KEYS, prefix, table="metric", index=i)
    r = _Reader(ck, m, prefix, table="metric", index=i)
    mid = r.text("id", required=True, what="a short id like 'lead-time'")
    if mid is not None and not SLUG_RE.match(mid):
        ck.add(f"{prefix}id", f"{mid!r} is not a valid id; use lower-case letters, digits and "
               "hyphens", r._line("id"))
    name = r.text("name", required=True, what="the metric's name")
    dtype = r.choice("type", DATA_TYPES, required=True)
    better = r.choice("better", BETTER, required=True)
    file_ = r.text("file", required=True, what="the CSV file, relative to the project folder")
    path = None
    if file_ is not None:
        p = folder / file_
        if Path(file_).is_absolute() or not _inside(p, folder):
            ck.add(f"{prefix}file", f"{file_!r} points outside the project folder; metric files "
                   "must live inside it", r._line("file"))
        elif not p.is_file():
            near = difflib.get_close_matches(file_, sorted(x.name for x in folder.glob("*.csv")), 1)
            hint = f"; did you mean '{near[0]}'?" if near else ""
            ck.add(f"{prefix}file", f"the file {file_!r} does not exist{hint}", r._line("file"))
        else:
            path = p.resolve()
    cols = {k: r.text(k) for k in COLUMN_KEYS}
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
            ck.add(f"{prefix}csv.delimiter", f"expected one character, got {delim!r}",
                   cr._line("delimiter"))
            delim = ","
        dec = cr.choice("decimal", (".", ","), default=".")
        enc = cr.text("encoding", default="utf-8")
        try:
            import codecs

            codecs.lookup(enc)
        except LookupError:
            ck.add(f"{prefix}csv.encoding", f"unknown text encoding {enc!r}; try utf-8 or latin-1",
                   cr._line("encoding"))
            enc = "utf-8"
        tz = cr.text("timezone")
        if tz is not None:
            try:
                import zoneinfo

                zoneinfo.ZoneInfo(tz)
            except (zoneinfo.ZoneInfoNotFoundError, ValueError):
                ck.add(f"{prefix}csv.timezone", f"unknown time zone {tz!r}; use a name like "
                       "'Europe/Berlin' or 'UTC'", cr._line("timezone"))
                tz = None
        if delim == dec:
            ck.add(f"{prefix}csv", "the delimiter and the decimal mark are the same character; "
                   "files with decimal commas use delimiter = \";\"", cr._line("decimal"))
        csv = CsvOptions(delim or ",", dec or ".", enc or "utf-8", cr.text("date_format"), tz)

    bins: str | tuple[float, ...] = settings.bins
    if "bins" in m:
        v = m["bins"]
        if isinstance(v, list):
            if len(v) < 2 or not all(isinstance(x, int | float) and not isinstance(x, bool)
                                     for x in v) or any(b <= a for a, b in zip(v, v[1:],
                                                                                strict=False)):
                r._bad("bins", "a list of at least two increasing numbers", v)
            else:
                bins = tuple(float(x) for x in v)
        else:
            bins = r.choice("bins", BIN_RULES, settings.bins)

    spec = MetricSpec(
        id=mid or f"metric-{i + 1}", name=name or "", file=path or folder / (file_ or ""),
        file_rel=rel(folder / (file_ or ""), root), type=dtype or "continuous",
        better=better or "lower", subgroup_size=subgroup_size,
        unit=r.text("unit", default="") or "",
        spec_lower=r.number("spec_lower"), spec_upper=r.number("spec_upper"),
        target=r.number("target"), headline=r.boolean("headline"),
        chart=r.choice("chart", CHARTS, "auto"),
        signal_rules=r.choice("signal_rules", SIGNAL_RULES, settings.signal_rules),
        run_rules=r.choice("run_rules", RUN_RULES, settings.run_rules),
        limits=r.choice("limits", LIMIT_MODES, "baseline"),
        quartiles=r.choice("quartiles", QUARTILE_METHODS, settings.quartiles),
        bins=bins, normal_curve=r.boolean("normal_curve"),
        baseline=r.period("baseline") or comp_baseline,
        after=r.period("after") or comp_after,
        rollup=rollup, csv=csv, line=ck.loc.line_of(None, "metric", i), **cols,
    )
    if dtype is not None:
        _check_metric_shape(ck, spec, prefix, r)
    if len([p for p in ck.problems[before:] if p.severity == "error"]):
        return None
    return spec


def _check_metric_shape(ck: _Checker, m: MetricSpec, prefix: str, r: _Reader) -> None:
    """Which keys each data type needs, and which combinations make sense."""
    line = r._line(None)

    def need(key, what):
        if getattr(m, key) is None:
            ck.add(f"{prefix}{key}", f"a {m.type} metric needs '{key}': {what}", line)

    if m.type != "categories":
        need("time", "the column with the date or time of each row")
    if m.type == "continuous":
        need("value", "the column with the measured value")
    elif m.type == "subgroups":
        need("value", "the column with the measured value")
        if (m.subgroup is None) == (m.subgroup_size is None):
            ck.add(f"{prefix}subgroup", "a subgroups metric needs exactly one of 'subgroup' (the "
                   "column naming each subgroup) or 'subgroup_size' (a fixed size over "
                   "consecutive rows)", line)
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
            ck.add(f"{prefix}rollup", f"a roll-up does not apply to a {m.type} metric; remove it",
                   line)
        elif m.type == "defectives" and m.value is not None and m.rollup.statistic != "proportion":
            ck.add(f"{prefix}rollup.statistic", "defectives from a 0/1 'value' column roll up "
                   "with statistic = \"proportion\"", line)
        elif m.type == "continuous" and m.rollup.statistic == "proportion":
            pass  # a 0/1 value column rolled up to a share per period: handled as defectives
    if m.spec_lower is not None and m.spec_upper is not None and m.spec_lower >= m.spec_upper:
        ck.add(f"{prefix}spec_lower", f"spec_lower ({m.spec_lower:g}) must be below spec_upper "
               f"({m.spec_upper:g})", r._line("spec_lower"))
    if m.better == "target" and m.target is None:
        ck.add(f"{prefix}target", "better = \"target\" needs a target value", line,
               severity="warning")
    if m.type != "categories" and m.baseline is None:
        ck.add(f"{prefix}baseline", "no baseline period (here or in [comparison]); all the data "
               "is treated as baseline", line, severity="warning")
    if m.baseline and m.after and m.baseline.end and m.after.start <= m.baseline.end:
        ck.add(f"{prefix}after", f"the after period starts {m.after.start}, inside the baseline "
               f"({m.baseline.label()})", line)


def discover(root: Path) -> list[Path]:
    """Project folders under the portfolio root: every sub-folder that is not hidden.

    A folder without project.toml is still listed so that the user is told about it.
    """
    if not root.is_dir():
        return []
    return sorted(p for p in root.iterdir() if p.is_dir() and not p.name.startswith((".", "_")))
