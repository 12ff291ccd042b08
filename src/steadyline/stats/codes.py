"""The closed sets of codes the statistics take as arguments, each defined once, here.

Codes as project.toml, portfolio.toml and results.json write them (an interface: they never
change), and for the sets the pages name, ``.label``: the published name of the method or the
plain words for the kind of data, the one name every page, chart title and README table gives
the code. :mod:`steadyline.vocab` hands these same classes on to the pages, and the metadata's
validation takes its choices from them; this module imports nothing but the standard library,
and importing it loads no statistics (the package's names load on first use), so the light
modules (the validation, the index) may import it.
"""

from __future__ import annotations

from enum import StrEnum


class Coded(StrEnum):
    """A closed set of codes; a set whose codes the pages show as they are, or not at all."""

    @classmethod
    def codes(cls) -> tuple[str, ...]:
        return tuple(m.value for m in cls)


class Named(Coded):
    """A code with its one name in words (``label``)."""

    @property
    def label(self) -> str:
        return _NAMES[self]


class DataType(Named):
    """The types of data a metric holds (``type`` in project.toml)."""

    CONTINUOUS = "continuous"
    SUBGROUPS = "subgroups"
    DEFECTIVES = "defectives"
    DEFECTS = "defects"
    CATEGORIES = "categories"
    STUDY = "measurement-study"


# The types a chart is chosen for and a before/after comparison made of, as the statistics
# are asked for them: measured values in subgroups are "continuous" with their subgroup sizes.
CHARTED_TYPES = (DataType.CONTINUOUS.value, DataType.DEFECTIVES.value, DataType.DEFECTS.value)


class ChartKind(Named):
    """The control charts a metric can ask for (``chart`` in project.toml); ``auto`` asks for
    the one that fits the data."""

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


class SignalRules(Named):
    """The sets of rules a control chart's points are judged by."""

    WESTERN_ELECTRIC = "western-electric"
    NELSON = "nelson"


class RunRules(Named):
    """The sets of rules a run chart's points are judged by."""

    ANHOJ = "anhoj"
    PERLA = "perla"


class LimitMode(Coded):
    """Whose points a control chart's limits are fitted to (``limits`` in project.toml): the
    baseline's, carried forward, or each period's own, drawn as steps."""

    BASELINE = "baseline"
    PER_PERIOD = "per-period"


class Better(Coded):
    """Which way a metric improves (``better`` in project.toml)."""

    LOWER = "lower"
    HIGHER = "higher"
    TARGET = "target"


_NAMES: dict[Named, str] = {
    DataType.CONTINUOUS: "single measured values",
    DataType.SUBGROUPS: "measured values in subgroups",
    DataType.DEFECTIVES: "defective items out of items checked",
    DataType.DEFECTS: "defects counted over an area of opportunity",
    DataType.CATEGORIES: "one category per row",
    DataType.STUDY: "parts measured repeatedly by several appraisers",
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
    SignalRules.WESTERN_ELECTRIC: "Western Electric zone rules",
    SignalRules.NELSON: "Nelson rules",
    RunRules.ANHOJ: "Anhøj rules",
    RunRules.PERLA: "Perla, Provost & Murray rules",
}

# What the run-chart rule sets test and where they are published, after their name.
RUN_RULES_DETAIL = {
    RunRules.ANHOJ: "longest run and number of crossings; Anhøj & Olesen 2014",
    RunRules.PERLA: "shift, trend and number of runs; Perla, Provost & Murray 2011",
}

# numpy quantile method names and their Hyndman & Fan (1996) types (numpy docstring), plus
# Tukey's hinges (Tukey 1977), which are not in general any single H&F type: the codes of
# ``quartiles`` in project.toml and portfolio.toml, and what each is.
QUARTILE_METHODS: dict[str, str] = {
    "inverted_cdf": "Hyndman & Fan type 1 (inverse of the empirical distribution function)",
    "averaged_inverted_cdf": "Hyndman & Fan type 2 (inverse empirical distribution, averaged at steps)",
    "closest_observation": "Hyndman & Fan type 3 (nearest even order statistic)",
    "interpolated_inverted_cdf": "Hyndman & Fan type 4 (linear interpolation of the empirical distribution)",
    "hazen": "Hyndman & Fan type 5 (Hazen, piecewise linear with midpoints)",
    "weibull": "Hyndman & Fan type 6 (Weibull, position (n+1)p)",
    "linear": "Hyndman & Fan type 7 (linear)",
    "median_unbiased": "Hyndman & Fan type 8 (approximately median-unbiased)",
    "normal_unbiased": "Hyndman & Fan type 9 (approximately unbiased for normal data)",
    "tukey-hinges": "Tukey's hinges (medians of the lower and upper halves, median in both when n is odd)",
}

# The histogram bin rules the statistics know, by numpy's names, and their names in words;
# project.toml and portfolio.toml offer the first three (``bins``), or explicit edges.
HISTOGRAM_RULES: dict[str, str] = {
    "fd": "Freedman–Diaconis",
    "sturges": "Sturges",
    "scott": "Scott",
    "doane": "Doane",
    "rice": "Rice",
    "sqrt": "square root of n",
    "stone": "Stone",
    "auto": "smaller bin width of Sturges and Freedman–Diaconis",
    "edges": "given bin edges",
}
BIN_RULES = tuple(HISTOGRAM_RULES)[:3]
