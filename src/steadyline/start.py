"""Start a project from a data file: guess its columns and write a commented project.toml.

``steadyline start DATA.csv`` (or a workbook, .xlsx, whose first sheet is read, or a Parquet
file) reads the file with the same reader and the same number and date parsing as a build
(:mod:`steadyline.loading`, which opens files only through
:mod:`steadyline.files`), guesses which column holds the time, the values, the subgroups, the
counts, the sizes or the categories, and so the metric's data type, and writes ``project.toml``
beside the file. Each guess is written with a comment saying what it rests on, so the owner can
judge it; options set any of them instead. It asks nothing (it runs in CI too) and never
overwrites a file: the new file is created exclusively (O_EXCL), which fails when anything is
at ``project.toml``, a link included.

The guesses rest on what the cells are (dates, whole numbers, decimals, 0/1 flags, repeated
text) and, where the cells cannot tell, on words in the column names (a column named
``..._checked`` is the number of items checked). The word lists are common practice of data
exports, not a standard.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import getpass
import json
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from . import files, formats
from .config import (
    DATA_TYPES,
    PROJECT_FILE,
    SLUG_RE,
    CsvOptions,
    MetricSpec,
    PortfolioSettings,
)
from .errors import SteadylineError
from .vocab import DataType

# the types a data file's guesses can end in: a measurement study has no time column to guess by
PROCESS_TYPES = tuple(t for t in DATA_TYPES if t != DataType.STUDY)
COLUMN_OPTIONS = ("time", "value", "subgroup", "count", "size", "category")

# Words in column names (matched on the lower-cased name split at "_", "-", spaces).
_ID_NAME = re.compile(r"(^|[_\s-])(id|no|nr|num|number|serial|seq|index|row|code|key)$")
_SIZE_NAME = re.compile(
    r"checked|inspected|tested|audited|sampled|painted|produced|built|"
    r"shipped|made|size|area|m2|total|opportunit|units"
)
_DEFECT_NAME = re.compile(r"defects\b|defects$|blemish|flaw|scratch|faults|nonconformit")
_CATEGORY_NAME = re.compile(
    r"reason|type|cause|category|kind|class|mode|failure|issue|problem|"
    r"defect"
)
_MEASURE_NAME = re.compile(
    r"time|duration|minutes|hours|days|seconds|length|weight|force|"
    r"tension|offset|pressure|temp|speed|cost|price|height|width|"
    r"diameter|torque|voltage|(^|_)(mm|cm|kg|g|h|min|s|kn|n|kgf|nm)$"
)
_HIGHER_NAME = re.compile(r"yield|score|efficiency|uptime|availability|throughput|output")
_UNITS = {
    "mm": "mm",
    "cm": "cm",
    "m": "m",
    "kg": "kg",
    "g": "g",
    "kn": "kN",
    "n": "N",
    "kgf": "kgf",
    "nm": "N·m",
    "h": "hours",
    "hours": "hours",
    "min": "minutes",
    "minutes": "minutes",
    "s": "seconds",
    "seconds": "seconds",
    "days": "days",
    "pct": "%",
    "percent": "%",
    "m2": "m²",
    "bar": "bar",
    "c": "°C",
    "v": "V",
}
# Subgroups: at least this many groups of 2 to 25 rows each, every group in one run of rows
# (20 to 25 subgroups are the usual minimum for trial limits: Montgomery, Introduction to
# Statistical Quality Control, §6.2; the size range is common practice).
_MIN_SUBGROUPS, _MAX_SUBGROUP = 20, 25
# Categories: at most this many distinct texts (common practice: a Pareto chart of more is
# hard to read; steadyline gathers the rest into one bar past 25 anyway).
_MAX_CATEGORIES = 30
# A 0/1 column is rolled up into the shortest period whose median number of rows is at least
# this many (common practice: a p chart wants subgroups large enough for defectives to show).
_MIN_ROWS_PER_PERIOD = 50


class StartError(SteadylineError):
    """The project cannot be started (no file, a file already there, nothing to chart)."""


@dataclass
class Column:
    name: str
    kind: str  # "time", "number", "text"
    sorted: bool = False  # times: in ascending order down the file
    integer: bool = False
    nonnegative: bool = False
    flags: bool = False  # only 0 and 1
    distinct: int = 0
    unique: bool = False
    values: np.ndarray | None = None  # numbers (blanks left out), or times as datetime64
    cells: np.ndarray | None = None  # the cells as read, one per row


@dataclass
class Guess:
    type: str
    better: str
    columns: dict[str, str]
    why: dict[str, str]  # a key -> the reason, in words
    rollup: tuple[str, str] | None = None
    csv: CsvOptions = dataclasses.field(default_factory=CsvOptions)
    dates: tuple[dt.date, dt.date] | None = None
    rows: int = 0
    sheet: str | None = None  # the workbook's sheet read (a workbook only)


# ----------------------------------------------------------------------------- reading


def _spec(path: Path, shown: str, csv: CsvOptions) -> MetricSpec:
    """A metric of the file, for the reader's functions (which read a metric's file)."""
    return MetricSpec(
        id="start",
        name="start",
        file=path,
        file_rel=shown,
        type="continuous",
        better="lower",
        csv=csv,
    )


def _sniff(raw: bytes) -> tuple[CsvOptions, list[str]]:
    """The reading options the file seems to need, with a reason for each that is not the
    default: the encoding (a byte-order mark decides by itself when reading), the delimiter
    and the decimal mark."""
    from .loading import _BOMS, _wide_guess

    why = []
    encoding = "utf-8"
    head = raw[:65536]
    bom = next((codec for mark, codec in _BOMS if raw.startswith(mark)), None)
    if bom is not None:
        reading = bom  # a byte-order mark decides when the file is read; nothing to declare
    elif b"\x00" in head and (guess := _wide_guess(raw)):
        encoding = reading = guess
        why.append(f"encoding: the file holds NUL bytes as {guess.upper()} text does")
    else:
        try:
            raw.decode("utf-8")
        except UnicodeDecodeError:
            encoding = "latin-1"
            why.append(
                "encoding: the file is not UTF-8 text; latin-1 is what older exports commonly use"
            )
        reading = encoding
    text = head.decode(reading, errors="replace").lstrip("\ufeff")
    lines = [ln for ln in text.splitlines() if ln.strip()][:20]
    if len(lines) > 1 and len(head) == 65536:
        lines = lines[:-1]  # the last line may be cut
    delimiter, best = ",", 0
    for d in (",", ";", "\t", "|"):
        counts = {ln.count(d) for ln in lines}
        if lines and len(counts) == 1 and (n := counts.pop()) > best:
            delimiter, best = d, n
    if delimiter != ",":
        why.append(f"delimiter: every line has the same number of {delimiter!r}")
    decimal = "."
    if delimiter != ",":
        cells = [c.strip().strip('"') for ln in lines[1:] for c in ln.split(delimiter)]
        if any(re.fullmatch(r"[+-]?\d+,\d+", c) for c in cells) and not any(
            re.fullmatch(r"[+-]?\d+\.\d+", c) for c in cells
        ):
            decimal = ","
            why.append("decimal: numbers are written with a decimal comma (0,5)")
    return CsvOptions(delimiter=delimiter, decimal=decimal, encoding=encoding), why


def _profile(df: pd.DataFrame, spec: MetricSpec) -> list[Column]:
    """What each column holds, by the build's own number and date parsing: a column is a
    number column when every non-blank cell reads as a number, a time column when every
    non-blank cell reads as a date or date-time (and it is no number column)."""
    from .loading import _numbers, _Rows, _times

    cols = []
    for name in df.columns:
        cells = df[name].to_numpy(dtype=object)
        filled = cells[cells != ""]
        if filled.size == 0:
            continue
        out = _Rows(spec)
        nums = _numbers(df, name, spec, out)
        if not out.failed:
            v = nums.to_numpy(dtype=float)
            v = v[~np.isnan(v)]
            whole = bool((v == np.floor(v)).all())
            uniq = np.unique(v)
            cols.append(
                Column(
                    name,
                    "number",
                    integer=whole,
                    nonnegative=bool((v >= 0).all()),
                    flags=whole and set(uniq.tolist()) <= {0.0, 1.0} and uniq.size == 2,
                    distinct=uniq.size,
                    unique=uniq.size == v.size,
                    values=v,
                    cells=cells,
                )
            )
            continue
        out = _Rows(spec)
        t = _times(df, name, spec, out)
        if not out.failed and t.notna().any():
            tv = t.dropna().to_numpy()
            cols.append(
                Column(
                    name,
                    "time",
                    sorted=bool((np.diff(tv) >= np.timedelta64(0)).all()),
                    values=tv,
                    cells=cells,
                )
            )
            continue
        distinct = len(pd.unique(filled))
        cols.append(
            Column(name, "text", distinct=distinct, unique=distinct == filled.size, cells=cells)
        )
    return cols


# ----------------------------------------------------------------------------- guessing


def _words(name: str) -> str:
    return re.sub(r"[\s-]+", "_", name.strip().lower())


def _is_id(c: Column) -> bool:
    return bool(_ID_NAME.search(_words(c.name)))


def _runs(cells: np.ndarray) -> np.ndarray | None:
    """The lengths of the runs of equal cells down the file, when every value has one run only
    (each group in one block of rows); None otherwise."""
    if cells.size == 0:
        return None
    change = np.flatnonzero(cells[1:] != cells[:-1]) + 1
    starts = np.concatenate([[0], change])
    if len(pd.unique(cells[starts])) != starts.size:
        return None
    return np.diff(np.concatenate([starts, [cells.size]]))


def _subgroup_column(cols: list[Column], value: str) -> tuple[Column, int, float] | None:
    """The column naming subgroups: the one with the most groups of 2 to 25 rows, each in one
    block of rows, at least 20 of them."""
    best = None
    for c in cols:
        if c.name == value or c.kind == "time":
            continue
        if c.cells is None:
            continue
        runs = _runs(c.cells)
        if runs is None or runs.size < _MIN_SUBGROUPS:
            continue
        med = float(np.median(runs))
        if 2 <= med <= _MAX_SUBGROUP and (best is None or runs.size > best[1]):
            best = (c, int(runs.size), med)
    return best


def _rollup_period(t: np.ndarray) -> tuple[str, float]:
    from .loading import period_start

    s = pd.Series(t)
    for period in ("day", "week", "month", "quarter"):
        counts = period_start(s, period).value_counts()
        med = float(counts.median())
        if med >= _MIN_ROWS_PER_PERIOD:
            return period, med
    return "quarter", med


def _name_words(name: str) -> list[str]:
    return [w for w in re.split(r"[_\s-]+", name.strip()) if w]


def _unit_of(name: str) -> str:
    words = _name_words(name.lower())
    return _UNITS.get(words[-1], "") if len(words) > 1 else ""


def _humane(name: str, drop_unit=True) -> str:
    words = _name_words(name)
    if drop_unit and len(words) > 1 and words[-1].lower() in _UNITS:
        words = words[:-1]
    text = " ".join(words).lower()
    return text[:1].upper() + text[1:] if text else name


def guess(cols: list[Column], rows: int, given: dict[str, str | None], type_: str | None) -> Guess:
    """The data type and the columns of a metric of these columns; *given* columns and *type_*
    (from the options) are taken as they are."""
    by = {c.name: c for c in cols}
    why: dict[str, str] = {}
    chosen: dict[str, str] = {k: v for k, v in given.items() if v}
    for k in chosen:
        why[k] = "given on the command line"
    times = [c for c in cols if c.kind == "time"]
    numbers = [c for c in cols if c.kind == "number" and not _is_id(c)]
    texts = [c for c in cols if c.kind == "text"]

    if "time" not in chosen and times:
        in_order = [c for c in times if c.sorted]
        pick = (in_order or times)[-1]
        chosen["time"] = pick.name
        if len(times) == 1:
            why["time"] = "the only column of dates or times"
        elif in_order:
            why["time"] = (
                f"of the date columns ({', '.join(c.name for c in times)}), the "
                + ("last " if len(in_order) > 1 else "")
                + "one in time order down "
                "the file"
            )
        else:
            why["time"] = (
                f"the last of the date columns ({', '.join(c.name for c in times)})"
                "; none is in time order"
            )

    kind = type_
    rollup = None

    def take(key: str, col: Column, reason: str) -> None:
        if key not in chosen:
            chosen[key] = col.name
            why[key] = reason

    counts = [
        c
        for c in numbers
        if c.integer and c.nonnegative and not c.flags and not _SIZE_NAME.search(_words(c.name))
    ]
    sizes = [c for c in numbers if c.nonnegative and _SIZE_NAME.search(_words(c.name))]
    decimals = [
        c
        for c in numbers
        if not c.integer
        or (_MEASURE_NAME.search(_words(c.name)) and not _SIZE_NAME.search(_words(c.name)))
    ]
    flags = [c for c in numbers if c.flags]
    categories = [
        c
        for c in texts
        if not c.unique
        and not _is_id(c)
        and c.distinct <= _MAX_CATEGORIES
        and c.distinct < rows / 2
    ]

    def pair() -> tuple[Column, Column] | None:
        if sizes and counts:
            named = [c for c in counts if _DEFECT_NAME.search(_words(c.name))]
            return (named or counts)[-1], sizes[0]
        whole = [c for c in numbers if c.integer and c.nonnegative and not c.flags]
        if len(whole) == 2:
            a, b = whole
            if a.values is not None and b.values is not None and a.values.size == b.values.size:
                if (a.values <= b.values).all() and (a.values != b.values).any():
                    return a, b
                if (b.values <= a.values).all() and (a.values != b.values).any():
                    return b, a
        return None

    found = pair() if kind in (None, "defectives", "defects") else None
    if kind is None:
        if found:
            c, s = found
            fewer = (
                c.values is not None
                and s.values is not None
                and c.values.size == s.values.size
                and bool((c.values <= s.values).all())
            )
            if _DEFECT_NAME.search(_words(c.name)) or not s.integer or not fewer:
                kind = "defects"
                what = (
                    "its name says defects"
                    if _DEFECT_NAME.search(_words(c.name))
                    else f"'{s.name}' is an area or amount, not a number of items"
                    if not s.integer
                    else f"'{c.name}' is larger than '{s.name}' in some rows"
                )
                why["type"] = (
                    f"'{c.name}' counts defects (several can fall on one item: "
                    f"{what}) over '{s.name}', the area of opportunity"
                )
            else:
                kind = "defectives"
                why["type"] = (
                    f"'{c.name}' counts items found defective out of '{s.name}' "
                    "items checked (never more than those checked)"
                )
        elif decimals:
            sub = _subgroup_column(cols, decimals[-1].name)
            if sub:
                kind = "subgroups"
                why["type"] = (
                    f"'{decimals[-1].name}' holds measured values, in {sub[1]} groups "
                    f"of about {sub[2]:g} rows named by '{sub[0].name}'"
                )
            else:
                kind = "continuous"
                why["type"] = f"'{decimals[-1].name}' holds measured values, one per row"
        elif flags:
            kind = "defectives"
            why["type"] = (
                f"'{flags[-1].name}' holds only 0 and 1: a flag per item (1 "
                "defective), charted as the share of 1s per period"
            )
        elif categories:
            kind = "categories"
            why["type"] = "a column of repeated texts and no column of measured values"
        elif counts:
            kind = "defects"
            why["type"] = (
                f"'{counts[-1].name}' holds whole numbers of 0 or more, counted per "
                "row, with no column of items checked"
            )
        else:
            raise StartError(
                "found no column to chart: no numbers, 0/1 flags or repeated "
                "texts; name the columns with --type and --value, --count or "
                "--category"
            )
    else:
        why["type"] = "given on the command line"

    if kind == "continuous" and decimals:
        take(
            "value",
            decimals[-1],
            "numbers with decimals (a measured value)"
            if not decimals[-1].integer
            else "its name says it is a measured value",
        )
    elif kind == "subgroups":
        if decimals:
            take("value", decimals[-1], "numbers with decimals (a measured value)")
        sub = _subgroup_column(cols, chosen.get("value", ""))
        if sub:
            take(
                "subgroup",
                sub[0],
                f"names {sub[1]} groups of about {sub[2]:g} consecutive rows each",
            )
    elif kind in ("defectives", "defects") and found:
        c, s = found
        take("count", c, "whole numbers of 0 or more: the number found in each row")
        take(
            "size",
            s,
            (
                "the number of items checked in each row"
                if kind == "defectives"
                else "the area of opportunity of each row (what was inspected)"
            ),
        )
    elif kind == "defectives" and flags:
        take("value", flags[-1], "only 0 and 1: one flag per item")
    elif kind == "categories" and categories:
        named = [c for c in categories if _CATEGORY_NAME.search(_words(c.name))]
        pick = (named or categories)[-1]
        take(
            "category",
            pick,
            f"{pick.distinct} distinct texts, repeated down the file"
            + (", and its name says it sorts the rows" if named else ""),
        )
    elif kind == "defects" and counts:
        take("count", counts[-1], "whole numbers of 0 or more: the number found in each row")

    if kind == "defectives" and "value" in chosen and "count" not in chosen:
        t = by.get(chosen.get("time", ""))
        if t is not None and t.values is not None:
            period, med = _rollup_period(t.values)
            rollup = (period, "proportion")
            why["rollup"] = (
                f"a 0/1 flag per item is charted per period: a {period} holds "
                f"{med:g} rows (the median), the shortest period with "
                f"{_MIN_ROWS_PER_PERIOD} or more"
            )

    _needs(kind, chosen)
    better = "lower"
    measured = chosen.get("value") if kind in ("continuous", "subgroups") else None
    if measured and _HIGHER_NAME.search(_words(measured)):
        better = "higher"
        why["better"] = "its name says more is better; check it"
    elif measured:
        why["better"] = (
            "a guess: lower for most measures of time, cost and deviation; set "
            '"higher", or "target" with a target, if that is what better is'
        )
    else:
        why["better"] = "fewer defects, defectives or occurrences are better"
    return Guess(kind, better, chosen, why, rollup=rollup, rows=rows)


# What each data type needs, in the words of the command's options (config's shape check says
# the same of a project.toml).
_NEEDS = {
    "continuous": (("time",), ("value",)),
    "subgroups": (("time",), ("value",), ("subgroup",)),
    "defectives": (("time",), ("count", "value")),
    "defects": (("time",), ("count",)),
    "categories": (("category",),),
}


def _needs(kind: str, chosen: dict[str, str]) -> None:
    """Refuse, before anything is written, a guess that lacks a column its type needs."""
    for options in _NEEDS[kind]:
        if not any(o in chosen for o in options):
            what = " or ".join(f"--{o}" for o in options)
            found = "dates or times" if options == ("time",) else "that fits"
            raise StartError(
                f"a {kind} metric needs a {options[0]} column and none {found} was "
                f"found; name it with {what}"
            )
    if kind == "defectives" and "count" in chosen and "size" not in chosen:
        raise StartError(
            "a defectives metric with a count column needs a size column (the "
            "items checked) and none was found; name it with --size"
        )


# ----------------------------------------------------------------------------- writing


def _q(text: str) -> str:
    return json.dumps(text, ensure_ascii=False)  # a TOML basic string is JSON's form


def _comment(text: str, width: int = 98) -> list[str]:
    words, lines, line = text.split(), [], "#"
    for w in words:
        if len(line) + 1 + len(w) > width and line != "#":
            lines.append(line)
            line = "#"
        line += " " + w
    lines.append(line)
    return lines


def render(
    folder: Path,
    data: str,
    g: Guess,
    sniffed: list[str],
    owner: str,
    title: str | None,
    problem: str | None,
) -> str:
    slug = folder.name
    measure = g.columns.get("value") or g.columns.get("count") or g.columns.get("category") or ""
    if g.type == "defects" and g.columns.get("size"):
        name = f"{_humane(g.columns['count'])} per {_humane(g.columns['size']).lower()}"
    else:
        name = _humane(measure) if measure else "Metric"
    mid = re.sub(r"[^a-z0-9]+", "-", _humane(measure).lower()).strip("-") or "metric"
    if not SLUG_RE.match(mid):
        mid = "metric-" + mid
    unit = _unit_of(g.columns["value"]) if g.type in ("continuous", "subgroups") else ""
    if g.type == "defectives" and g.columns.get("size"):
        unit = (
            _name_words(g.columns["size"])[0].lower()
            if len(_name_words(g.columns["size"])) > 1
            else ""
        )
    project_title = title or _humane(slug.replace("-", "_"), drop_unit=False)
    span = f"from {g.dates[0].isoformat()} to {g.dates[1].isoformat()}" if g.dates else ""
    statement = problem or f"{name}: {g.rows} rows of {data}{' ' + span if span else ''}."

    out = _comment(
        f"Written by `steadyline start` from {data} ({g.rows} data rows). Every "
        "value is a guess from the data; the comment above each says what it rests "
        "on. Check them, then run `steadyline check`. Every key is explained in the "
        "README (The project folder format)."
    ) + [""]

    def key(k: str, value: str, reason: str) -> None:
        out.extend(_comment(reason[:1].upper() + reason[1:]))
        out.append(f"{k} = {value}")

    key(
        "title",
        _q(project_title),
        "From the folder's name." if not title else "Given on the command line.",
    )
    key(
        "owner",
        _q(owner),
        "Who ran `steadyline start`; put the name of the project's lead."
        if owner == _default_owner()
        else "Given on the command line.",
    )
    key(
        "phase",
        _q("measure"),
        "A project with its first data is measuring its baseline: "
        "define | measure | analyze | improve | control.",
    )
    key(
        "problem",
        _q(statement),
        "Given on the command line."
        if problem
        else "Say what goes wrong, how often, and what it costs; this line only describes the data.",
    )
    out.append("")
    if g.dates:
        out.extend(
            _comment(
                "All the data so far is the baseline. When a change is made, end "
                "the baseline before it and add after = [its first day]."
            )
        )
        out.append("[comparison]")
        out.append(f"baseline = [{g.dates[0].isoformat()}, {g.dates[1].isoformat()}]")
        out.append("")
    out.append("[[metric]]")
    key("id", _q(mid), "From the charted column's name.")
    key("name", _q(name), "From the charted column's name; say what is measured.")
    key("file", _q(data), "The data file this project was started from.")
    if g.sheet is not None:
        key(
            "sheet",
            _q(g.sheet),
            "The workbook's first sheet, which was read; name another "
            "sheet here to chart it instead.",
        )
    key("type", _q(g.type), g.why["type"] + ".")
    for col in COLUMN_OPTIONS:
        if col in g.columns:
            key(col, _q(g.columns[col]), g.why.get(col, "given on the command line") + ".")
    if unit:
        key(
            "unit",
            _q(unit),
            "From the end of the column's name."
            if g.type != "defectives"
            else "What is checked, from the name of the column of items checked.",
        )
    key("better", _q(g.better), g.why["better"][:1].upper() + g.why["better"][1:] + ".")
    csv_lines = []
    defaults = CsvOptions()
    for field in ("delimiter", "decimal", "encoding"):
        v = getattr(g.csv, field)
        if v != getattr(defaults, field):
            reason = next((s.split(": ", 1)[1] for s in sniffed if s.startswith(field)), "")
            csv_lines += _comment(reason[:1].upper() + reason[1:] + ".") + [f"{field} = {_q(v)}"]
    if g.rollup:
        out += ["", "[metric.rollup]"]
        key("period", _q(g.rollup[0]), g.why["rollup"] + ".")
        key("statistic", _q(g.rollup[1]), "The share of 1s (defective items) in each period.")
    if csv_lines:
        out += ["", "[metric.csv]"] + csv_lines
    return "\n".join(out) + "\n"


def _default_owner() -> str:
    try:
        return getpass.getuser()
    except (KeyError, OSError):  # no user name to be found (a container without one)
        return "unknown"


def start(
    data: Path,
    *,
    type_: str | None = None,
    columns: dict[str, str | None] | None = None,
    owner: str | None = None,
    title: str | None = None,
    problem: str | None = None,
) -> tuple[Path, Guess, list[str]]:
    """Write ``project.toml`` beside *data*; the path written, the guesses and notes to print.
    Raises StartError when it cannot (no such file, a project.toml already there, nothing to
    chart); nothing is written then."""
    from .loading import _read_table, _Rows, _text

    columns = columns or {}
    if type_ == DataType.STUDY:  # no time column, no guess to make: written by hand
        raise StartError(
            f"--type {type_}: start writes process metrics; a measurement study "
            "names its part, appraiser and value columns by hand (see the README)"
        )
    if type_ is not None and type_ not in PROCESS_TYPES:
        raise StartError(f"--type must be one of {', '.join(PROCESS_TYPES)}, got {type_!r}")
    folder = data.parent
    target = folder / PROJECT_FILE
    shown = os.fspath(data)
    if files.exists(target):
        raise StartError(
            f"{target}: already exists; steadyline start never overwrites a file: "
            "edit it, or move it away first"
        )
    try:
        raw = files.read_bytes(data)  # only a regular file is opened, read-only
    except files.Unreadable as e:
        raise StartError(f"{shown}: {e}") from None
    if formats.data_format(data.name) == formats.CSV:
        csv, sniffed = _sniff(raw)
    else:  # a workbook's or Parquet file's cells are read as stored: nothing to sniff
        csv, sniffed = CsvOptions(), []
    spec = _spec(data, shown, csv)
    out = _Rows(spec)
    df, _header = _read_table(spec, PortfolioSettings(), out, None)  # every column
    if df is None:
        first = next(p for p in out.problems if p.severity == "error")
        raise StartError(first.format())
    df = pd.DataFrame({c: _text(df[c]) for c in df.columns}, index=df.index)  # stripped text
    for k, v in columns.items():
        if v is not None and v not in df.columns:
            raise StartError(
                f"{shown}: --{k} {v!r}: no such column; the file has columns: "
                f"{', '.join(df.columns)}"
            )
    cols = _profile(df, spec)
    g = guess(cols, len(df), columns, type_)
    g.csv = csv
    g.sheet = out.sheet
    t = next((c for c in cols if c.name == g.columns.get("time")), None)
    if t is not None and t.kind == "time" and t.values is not None and t.values.size:
        lo, hi = t.values.min(), t.values.max()
        g.dates = (pd.Timestamp(lo).date(), pd.Timestamp(hi).date())
    notes = []
    if not SLUG_RE.match(folder.resolve().name):
        notes.append(
            f"the folder name {folder.resolve().name!r} is not a valid project slug; "
            "rename it with lower-case letters, digits and hyphens before building"
        )
    text = render(
        folder.resolve(), data.name, g, sniffed, owner or _default_owner(), title, problem
    )
    _write_new(target, text)
    return target, g, notes


def _write_new(target: Path, text: str) -> None:
    """Write *text* to *target*, which must not exist: opened with O_EXCL, so the open fails
    when anything is at the name (nothing is ever overwritten, a link is never followed). A
    write that fails half-way removes the file it made, so no half-written project.toml is
    left."""
    data = text.encode("utf-8")
    try:
        fd = os.open(target, os.O_WRONLY | os.O_CREAT | os.O_EXCL | os.O_CLOEXEC, 0o666)
    except FileExistsError:
        raise StartError(
            f"{target}: already exists; steadyline start never overwrites a "
            "file: edit it, or move it away first"
        ) from None
    except OSError as e:
        raise StartError(f"{target}: cannot write it: {e.strerror}") from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
    except OSError as e:
        os.unlink(target)  # ours: made by the open above
        raise StartError(f"{target}: cannot write it: {e.strerror}") from None
