"""Guessing a metric from its columns' profiles: which column holds the time, the values, the
subgroups, the counts, the sizes or the categories, and so the metric's data type, each guess
with the reason it rests on.

The guesses rest on what the cells are (dates, whole numbers, decimals, 0/1 flags, repeated
text) and, where the cells cannot tell, on words in the column names (a column named
``..._checked`` is the number of items checked). The word lists are common practice of data
exports, not a standard.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import re
from dataclasses import dataclass

from ..config import CsvOptions
from ..errors import SteadylineError
from .reading import MIN_ROWS_PER_PERIOD, Column, rollup_period, subgroup_column

# The options naming a column, in the order project.toml lists them.
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
# Categories: at most this many distinct texts (common practice: a Pareto chart of more is
# hard to read; steadyline gathers the rest into one bar past 25 anyway).
_MAX_CATEGORIES = 30


class StartError(SteadylineError):
    """The project cannot be started (no file, a file already there, nothing to chart)."""


@dataclass
class Guess:
    """A metric's guessed keys, each with its reason in ``why``."""

    type: str
    better: str
    columns: dict[str, str]
    why: dict[str, str]  # a key -> the reason, in words
    rollup: tuple[str, str] | None = None
    csv: CsvOptions = dataclasses.field(default_factory=CsvOptions)
    dates: tuple[dt.date, dt.date] | None = None
    rows: int = 0
    sheet: str | None = None  # the workbook's sheet read (a workbook only)


def _words(name: str) -> str:
    return re.sub(r"[\s-]+", "_", name.strip().lower())


def _is_id(c: Column) -> bool:
    return bool(_ID_NAME.search(_words(c.name)))


def guess(cols: list[Column], rows: int, given: dict[str, str | None], type_: str | None) -> Guess:
    """The data type and the columns of a metric of these columns; *given* columns and *type_*
    (from the options) are taken as they are."""
    why: dict[str, str] = {}
    chosen: dict[str, str] = {k: v for k, v in given.items() if v}
    for k in chosen:
        why[k] = "given on the command line"
    if "time" not in chosen:
        _time_column(cols, chosen, why)
    cand = _candidates(cols, rows)
    found = _pair(cand) if type_ in (None, "defectives", "defects") else None
    if type_ is None:
        kind = _guess_type(cols, cand, found, why)
    else:
        kind = type_
        why["type"] = "given on the command line"
    _take_columns(kind, cols, cand, found, chosen, why)
    rollup = _flag_rollup(kind, cols, chosen, why)
    _needs(kind, chosen)
    better = _better(kind, chosen, why)
    return Guess(kind, better, chosen, why, rollup=rollup, rows=rows)


def _time_column(cols: list[Column], chosen: dict[str, str], why: dict[str, str]) -> None:
    """The time column: the last of the date columns in time order down the file, or the last
    of them when none is."""
    times = [c for c in cols if c.kind == "time"]
    if not times:
        return
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


@dataclass
class _Candidates:
    """The columns that could play each part, in the file's order (id columns left out)."""

    numbers: list[Column]
    counts: list[Column]
    sizes: list[Column]
    decimals: list[Column]
    flags: list[Column]
    categories: list[Column]


def _candidates(cols: list[Column], rows: int) -> _Candidates:
    numbers = [c for c in cols if c.kind == "number" and not _is_id(c)]
    texts = [c for c in cols if c.kind == "text"]
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
    return _Candidates(numbers, counts, sizes, decimals, flags, categories)


def _pair(cand: _Candidates) -> tuple[Column, Column] | None:
    """A count column and the size column it is counted over: named so, or the only two
    columns of whole numbers, one never above the other."""
    if cand.sizes and cand.counts:
        named = [c for c in cand.counts if _DEFECT_NAME.search(_words(c.name))]
        return (named or cand.counts)[-1], cand.sizes[0]
    whole = [c for c in cand.numbers if c.integer and c.nonnegative and not c.flags]
    if len(whole) == 2:
        a, b = whole
        if a.values is not None and b.values is not None and a.values.size == b.values.size:
            if (a.values <= b.values).all() and (a.values != b.values).any():
                return a, b
            if (b.values <= a.values).all() and (a.values != b.values).any():
                return b, a
    return None


def _guess_type(
    cols: list[Column],
    cand: _Candidates,
    found: tuple[Column, Column] | None,
    why: dict[str, str],
) -> str:
    """The data type the columns suggest, in this order: counts over sizes, measured values
    (in subgroups or one per row), 0/1 flags, repeated texts, counts alone."""
    if found:
        return _count_type(found, why)
    if cand.decimals:
        measured = cand.decimals[-1].name
        sub = subgroup_column(cols, measured)
        if sub:
            why["type"] = (
                f"'{measured}' holds measured values, in {sub[1]} groups "
                f"of about {sub[2]:g} rows named by '{sub[0].name}'"
            )
            return "subgroups"
        why["type"] = f"'{measured}' holds measured values, one per row"
        return "continuous"
    if cand.flags:
        why["type"] = (
            f"'{cand.flags[-1].name}' holds only 0 and 1: a flag per item (1 "
            "defective), charted as the share of 1s per period"
        )
        return "defectives"
    if cand.categories:
        why["type"] = "a column of repeated texts and no column of measured values"
        return "categories"
    if cand.counts:
        why["type"] = (
            f"'{cand.counts[-1].name}' holds whole numbers of 0 or more, counted per "
            "row, with no column of items checked"
        )
        return "defects"
    raise StartError(
        "found no column to chart: no numbers, 0/1 flags or repeated "
        "texts; name the columns with --type and --value, --count or "
        "--category"
    )


def _count_type(found: tuple[Column, Column], why: dict[str, str]) -> str:
    """Defects or defectives, for a count over a size: defectives when the count is of items
    (never more than those checked), else defects over an area of opportunity."""
    c, s = found
    fewer = (
        c.values is not None
        and s.values is not None
        and c.values.size == s.values.size
        and bool((c.values <= s.values).all())
    )
    if _DEFECT_NAME.search(_words(c.name)) or not s.integer or not fewer:
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
        return "defects"
    why["type"] = (
        f"'{c.name}' counts items found defective out of '{s.name}' "
        "items checked (never more than those checked)"
    )
    return "defectives"


def _take_columns(
    kind: str,
    cols: list[Column],
    cand: _Candidates,
    found: tuple[Column, Column] | None,
    chosen: dict[str, str],
    why: dict[str, str],
) -> None:
    """The columns the data type charts, each unless given on the command line."""

    def take(key: str, col: Column, reason: str) -> None:
        if key not in chosen:
            chosen[key] = col.name
            why[key] = reason

    decimals, flags, categories = cand.decimals, cand.flags, cand.categories
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
        sub = subgroup_column(cols, chosen.get("value", ""))
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
    elif kind == "defects" and cand.counts:
        take("count", cand.counts[-1], "whole numbers of 0 or more: the number found in each row")


def _flag_rollup(
    kind: str, cols: list[Column], chosen: dict[str, str], why: dict[str, str]
) -> tuple[str, str] | None:
    """A 0/1 flag per item is charted as the share of 1s per period: the shortest period with
    enough rows."""
    if not (kind == "defectives" and "value" in chosen and "count" not in chosen):
        return None
    by = {c.name: c for c in cols}
    t = by.get(chosen.get("time", ""))
    if t is None or t.values is None:
        return None
    period, med = rollup_period(t.values)
    why["rollup"] = (
        f"a 0/1 flag per item is charted per period: a {period} holds "
        f"{med:g} rows (the median), the shortest period with "
        f"{MIN_ROWS_PER_PERIOD} or more"
    )
    return (period, "proportion")


def _better(kind: str, chosen: dict[str, str], why: dict[str, str]) -> str:
    """Which direction is better: higher when the measured column's name says so, else lower."""
    measured = chosen.get("value") if kind in ("continuous", "subgroups") else None
    if measured and _HIGHER_NAME.search(_words(measured)):
        why["better"] = "its name says more is better; check it"
        return "higher"
    if measured:
        why["better"] = (
            "a guess: lower for most measures of time, cost and deviation; set "
            '"higher", or "target" with a target, if that is what better is'
        )
    else:
        why["better"] = "fewer defects, defectives or occurrences are better"
    return "lower"


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
