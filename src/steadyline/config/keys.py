"""The words project.toml and portfolio.toml accept, and the one table of every key.

The closed sets of values (phases, data types, chart kinds, rule sets ...) and :data:`KEYS`, the
table of every key with its kind, choices and whether it is required, live apart from the code
that reads the files: the validator names keys against this table and the editors' JSON Schemas
(:mod:`steadyline.schema`) are made from it, so the two cannot drift apart.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from ..stats import codes as stats_codes
from ..vocab import (
    Better,
    ChartKind,
    DataType,
    LimitMode,
    Phase,
    RollupPeriod,
    RollupStatistic,
    RunRules,
    SignalRules,
)

# The sets of the vocabulary, as the validator and KEYS take them: tuples of their codes.
PHASES = Phase.codes()
DATA_TYPES = DataType.codes()
STUDY = DataType.STUDY.value  # a measurement system study: no time, no better direction
BETTER = Better.codes()
CHARTS = ChartKind.codes()
SIGNAL_RULES = SignalRules.codes()
RUN_RULES = RunRules.codes()
LIMIT_MODES = LimitMode.codes()
PERIODS = RollupPeriod.codes()
STATISTICS = RollupStatistic.codes()

# The quartile methods and bin rules, by the codes the statistics define with their names; the
# sigma levels the validator defines for itself (the pages name them: site.studies.SIGMA_WORDS,
# held to this set by tests/test_vocabulary.py).
SIGMA_LEVELS = ("off", "with-shift", "without-shift")
QUARTILE_METHODS = tuple(stats_codes.QUARTILE_METHODS)
BIN_RULES = stats_codes.BIN_RULES
SLUG_RE = re.compile(r"^[a-z0-9][a-z0-9-]*$")


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
        # required of every type but a measurement study (checked in check_metric_shape)
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
PHASE_DATE_KEYS = _names("phase_dates")

# Which columns each data type needs (besides the metric's "time", needed by all but categories).
COLUMN_KEYS = ("time", "value", "subgroup", "count", "size", "category", "part", "appraiser")
