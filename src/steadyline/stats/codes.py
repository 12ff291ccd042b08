"""The codes of the closed sets the statistics take as arguments, each set defined once here.

Codes only, as project.toml and results.json write them: what the pages call each code lives
in :mod:`steadyline.vocab`, whose sets tests/test_vocabulary.py holds equal to these, member for
member. The two cannot be one class: this package imports nothing else of ours, and the light
modules that name these sets (the metadata's validation, the index) must not load the
statistics.
"""

from __future__ import annotations

from enum import StrEnum


class DataType(StrEnum):
    """The types of data a metric holds."""

    CONTINUOUS = "continuous"
    SUBGROUPS = "subgroups"
    DEFECTIVES = "defectives"
    DEFECTS = "defects"
    CATEGORIES = "categories"
    STUDY = "measurement-study"


# The types a chart is chosen for and a before/after comparison made of, as the statistics
# are asked for them: measured values in subgroups are "continuous" with their subgroup sizes.
CHARTED_TYPES = (DataType.CONTINUOUS.value, DataType.DEFECTIVES.value, DataType.DEFECTS.value)


class ChartKind(StrEnum):
    """The control charts; ``auto`` asks for the one that fits the data."""

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


class SignalRules(StrEnum):
    """The sets of rules a control chart's points are judged by."""

    WESTERN_ELECTRIC = "western-electric"
    NELSON = "nelson"


class RunRules(StrEnum):
    """The sets of rules a run chart's points are judged by."""

    ANHOJ = "anhoj"
    PERLA = "perla"


class LimitMode(StrEnum):
    """Whose points a control chart's limits are fitted to: the baseline's, carried forward, or
    each period's own."""

    BASELINE = "baseline"
    PER_PERIOD = "per-period"


class Better(StrEnum):
    """Which way a metric improves."""

    LOWER = "lower"
    HIGHER = "higher"
    TARGET = "target"
