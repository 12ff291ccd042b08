"""The closed sets of words the tool shows, each word defined once.

Every set is a :class:`enum.StrEnum`: its members' values are the codes that project.toml,
portfolio.toml and results.json use (an interface: they never change), and ``.label`` is the
one name the pages, the chart titles and the README give that code. A page that names a rule
set, a chart kind, a kind of period or a type of data takes the name from here, so that one
thing is never named two ways on one site. The README's lists are checked against these sets
by the tests.

The statistics take some of these sets as arguments (data types, chart kinds, rule sets, limit
modes, directions of better); they import nothing of ours, so they hold those codes in
:mod:`steadyline.stats.codes`, which tests/test_vocabulary.py holds equal to the sets here. This
module cannot build on that one: importing it would load the statistics into the light
modules that name the sets (the metadata's validation, the index).

The statuses live in :mod:`steadyline.status` (the index reads them without loading anything
else) and are re-exported here.

This module imports nothing else of ours but the status vocabulary and nothing heavy.
"""

from __future__ import annotations

from enum import StrEnum

from .status import LABELS as STATUS_LABELS
from .status import Status


class _Coded(StrEnum):
    """A closed set of codes; a set whose codes the pages show as they are, or not at all."""

    @classmethod
    def codes(cls) -> tuple[str, ...]:
        return tuple(m.value for m in cls)


class _Worded(_Coded):
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


class LimitMode(_Coded):
    """Whose points a control chart's limits are fitted to (``limits`` in project.toml): the
    baseline's, carried forward, or each period's own, drawn as steps."""

    BASELINE = "baseline"
    PER_PERIOD = "per-period"


class Better(_Coded):
    """Which way a metric improves (``better`` in project.toml)."""

    LOWER = "lower"
    HIGHER = "higher"
    TARGET = "target"


class SignalRules(_Worded):
    """The sets of rules a control chart's points are judged by."""

    WESTERN_ELECTRIC = "western-electric"
    NELSON = "nelson"


class RunRules(_Worded):
    """The sets of rules a run chart's points are judged by."""

    ANHOJ = "anhoj"
    PERLA = "perla"


class ChartKind(_Worded):
    """The control charts a metric can ask for (``chart`` in project.toml)."""

    AUTO = "auto"
    XMR = "xmr"
    XBAR_R = "xbar-r"
    XBAR_S = "xbar-s"
    P = "p"
    NP = "np"
    C = "c"
    U = "u"
    LANEY_P = "laney-p"
    LANEY_U = "laney-u"


class PeriodKind(_Worded):
    """The kinds of period a time axis is shaded by, in time order. The codes are the words
    themselves: the charts' legends show them as they are."""

    BEFORE = "before the baseline"
    BASELINE = "baseline"
    BETWEEN = "between periods"
    AFTER = "after"
    LATER = "after the after period"


class DataType(_Worded):
    """The types of data a metric holds (``type`` in project.toml)."""

    CONTINUOUS = "continuous"
    SUBGROUPS = "subgroups"
    DEFECTIVES = "defectives"
    DEFECTS = "defects"
    CATEGORIES = "categories"
    STUDY = "measurement-study"


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
    SignalRules: {
        SignalRules.WESTERN_ELECTRIC: "Western Electric zone rules",
        SignalRules.NELSON: "Nelson rules",
    },
    RunRules: {
        RunRules.ANHOJ: "Anhøj rules",
        RunRules.PERLA: "Perla, Provost & Murray rules",
    },
    ChartKind: {
        ChartKind.AUTO: "chosen from the data",
        ChartKind.XMR: "individuals and moving-range chart (X-mR)",
        ChartKind.XBAR_R: "Xbar-R chart",
        ChartKind.XBAR_S: "Xbar-S chart",
        ChartKind.P: "p chart",
        ChartKind.NP: "np chart",
        ChartKind.C: "c chart",
        ChartKind.U: "u chart",
        ChartKind.LANEY_P: "Laney p′ chart",
        ChartKind.LANEY_U: "Laney u′ chart",
    },
    PeriodKind: {k: k.value for k in PeriodKind},
    DataType: {
        DataType.CONTINUOUS: "single measured values",
        DataType.SUBGROUPS: "measured values in subgroups",
        DataType.DEFECTIVES: "defective items out of items checked",
        DataType.DEFECTS: "defects counted over an area of opportunity",
        DataType.CATEGORIES: "one category per row",
        DataType.STUDY: "parts measured repeatedly by several appraisers",
    },
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

# What the run-chart rule sets test, for a card's method line (after the name).
RUN_RULES_DETAIL = {
    RunRules.ANHOJ: "longest run and number of crossings; Anhøj & Olesen 2014",
    RunRules.PERLA: "shift, trend and number of runs; Perla, Provost & Murray 2011",
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
