"""The closed sets of words the tool shows, each word defined once.

Every set is a :class:`enum.StrEnum`: its members' values are the codes that project.toml,
portfolio.toml and results.json use (an interface: they never change), and ``.label`` is the
one name the pages, the chart titles and the README give that code. A page that names a rule
set, a chart kind, a kind of period or a type of data takes the name from here, so that one
thing is never named two ways on one site. The README's lists are checked against these sets
by the tests.

The sets the statistics take as arguments (data types, chart kinds, rule sets, limit modes,
directions of better) are defined in :mod:`steadyline.stats.codes`, which imports nothing and
loads no statistics; they are handed on here as they are, the same classes. The sets only the
pages and the metadata use (phases, kinds of period, roll-ups) are defined here.

The statuses live in :mod:`steadyline.status` (the index reads them without loading anything
else) and are re-exported here.

This module imports nothing else of ours but those two and nothing heavy.
"""

from __future__ import annotations

from .stats.codes import (
    RUN_RULES_DETAIL,
    Better,
    ChartKind,
    Coded,
    DataType,
    LimitMode,
    RunRules,
    SignalRules,
)
from .status import LABELS as STATUS_LABELS
from .status import Status


class _Worded(Coded):
    """A code with its one name in words (``label``)."""

    @property
    def label(self) -> str:
        return _LABELS[type(self)][self]


class Phase(_Worded):
    """The stages of a project's improvement cycle, in order (``phase`` in project.toml)."""

    DEFINE = "define"
    MEASURE = "measure"
    ANALYZE = "analyze"
    IMPROVE = "improve"
    CONTROL = "control"


class PeriodKind(_Worded):
    """The kinds of period a time axis is shaded by, in time order. The codes are the words
    themselves: the charts' legends show them as they are."""

    BEFORE = "before the baseline"
    BASELINE = "baseline"
    BETWEEN = "between periods"
    AFTER = "after"
    LATER = "after the after period"


class RollupPeriod(_Worded):
    """The periods a roll-up gathers rows into (``rollup.period``); the label is the adjective
    that names one period's value ("daily mean")."""

    DAY = "day"
    WEEK = "week"
    MONTH = "month"
    QUARTER = "quarter"


class RollupStatistic(_Worded):
    """What a roll-up makes of one period's rows (``rollup.statistic``); the label names one
    period's value after the period's adjective ("daily mean", "weekly total")."""

    MEAN = "mean"
    MEDIAN = "median"
    SUM = "sum"
    COUNT = "count"
    PROPORTION = "proportion"


_LABELS: dict[type, dict] = {
    Phase: {p: p.value.capitalize() for p in Phase},
    PeriodKind: {k: k.value for k in PeriodKind},
    RollupPeriod: {
        RollupPeriod.DAY: "daily",
        RollupPeriod.WEEK: "weekly",
        RollupPeriod.MONTH: "monthly",
        RollupPeriod.QUARTER: "quarterly",
    },
    RollupStatistic: {
        RollupStatistic.MEAN: "mean",
        RollupStatistic.MEDIAN: "median",
        RollupStatistic.SUM: "total",
        RollupStatistic.COUNT: "count",
        RollupStatistic.PROPORTION: "proportion",
    },
}


def period_value(period: str, statistic: str, plural: bool = False) -> str:
    """One rolled-up point in words: 'daily mean', or 'weekly totals' with ``plural``."""
    word = RollupStatistic(statistic).label
    return f"{RollupPeriod(period).label} {word}{'s' if plural else ''}"


def control_chart_kind(kind: str, secondary: str | None = None) -> ChartKind:
    """The chart kind of a computed control chart, from its ``kind`` and its companion's
    (``ControlChart.kind`` names what the points are: "individuals", "xbar", "p" ...)."""
    if kind == "individuals":
        return ChartKind.XMR
    if kind == "xbar":
        return ChartKind.XBAR_S if secondary == "stdev" else ChartKind.XBAR_R
    return ChartKind(kind)


def chart_name(label: str) -> str:
    """A chart's label as the name of a chart: 'Laney p′ chart' stays as it is, 'Proportion
    defective (p)' becomes 'Proportion defective (p) chart' (never 'chart chart')."""
    return label if label.lower().endswith("chart") else f"{label} chart"


def percentage_points(change: float | None, digits: int = 2) -> str:
    """A change between two proportions, in percentage points ('−3.13 percentage points'):
    a change of a share is a difference of percentages, not a percentage of it."""
    if change is None or change != change:
        return "—"
    value = 100 * change
    text = f"{abs(value):.{digits}f}"
    if float(text) == 0:
        return f"{text} percentage points"
    sign = "−" if value < 0 else "+"
    return f"{sign}{text} percentage points"


_PROPORTION_OF = "proportion of "


def proportion_unit(items: str) -> str:
    """The unit of a proportion of items checked: 'proportion of wheels' (a bare 'proportion'
    reads as no unit at all)."""
    return _PROPORTION_OF + items if items else "proportion"


def is_proportion_unit(unit: str) -> bool:
    """Whether ``unit`` is one :func:`proportion_unit` makes."""
    return unit == "proportion" or unit.startswith(_PROPORTION_OF)


def items_of(unit: str) -> str:
    """The items of a :func:`proportion_unit` ('wheels'); any other unit as it is."""
    if unit == "proportion":
        return ""
    return unit[len(_PROPORTION_OF) :] if unit.startswith(_PROPORTION_OF) else unit


def proportion_text(value, unit: str, fmt) -> str:
    """A proportion as a percentage of its items: '7.53% of wheels'; ``fmt`` formats the
    number (to the page's significant figures)."""
    if value is None or value != value:
        return "n/a"
    items = items_of(unit)
    return f"{fmt(100 * value)}%" + (f" of {items}" if items else "")


def plural(n: int, word: str, words: str | None = None) -> str:
    """'1 row', '2 rows': a count with its noun in the right number (never 'row(s)')."""
    return f"{n} {word if n == 1 else (words or word + 's')}"


__all__ = [
    "RUN_RULES_DETAIL",
    "Better",
    "ChartKind",
    "DataType",
    "LimitMode",
    "PeriodKind",
    "Phase",
    "RollupPeriod",
    "RollupStatistic",
    "RunRules",
    "SignalRules",
    "Status",
    "STATUS_LABELS",
    "chart_name",
    "control_chart_kind",
    "percentage_points",
    "period_value",
    "plural",
]
