"""Which keys each data type needs, and which combinations of a metric's keys make sense.

What only a whole metric can tell (a roll-up that fits its type, specification limits and a
target that agree, a baseline and an after period that can be compared), after each key has
been read on its own.
"""

from __future__ import annotations

from collections.abc import Callable

from .keys import STATISTICS, STUDY
from .model import MetricSpec, Period, Rollup
from .reading import Checker, Reader
from .studies import check_study_shape


def check_metric_shape(ck: Checker, m: MetricSpec, prefix: str, r: Reader) -> None:
    """Which keys each data type needs, and which combinations make sense."""
    line = r._line(None)

    def need(key, what):
        if getattr(m, key) is None:
            ck.add(f"{prefix}{key}", f"a {m.type} metric needs '{key}': {what}", line)

    if m.type == STUDY:
        check_study_shape(ck, m, prefix, r, need)
        return
    _check_columns(ck, m, prefix, r, need)
    if m.rollup is not None:
        _check_rollup(ck, m, m.rollup, prefix, r)
    _check_limits_and_target(ck, m, prefix, r)
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


def _check_columns(
    ck: Checker, m: MetricSpec, prefix: str, r: Reader, need: Callable[[str, str], None]
) -> None:
    """The columns a process metric's type needs, and none of a measurement study's."""
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
                r._line(None),
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


def _check_rollup(ck: Checker, m: MetricSpec, rollup: Rollup, prefix: str, r: Reader) -> None:
    """The metric's roll-up only where it applies, and only with a statistic that fits."""
    if m.type in ("subgroups", "categories"):
        ck.add(
            f"{prefix}rollup",
            f"a roll-up does not apply to a {m.type} metric; remove it",
            r._line(None),
        )
        return
    fits, what = rollup_statistics(m)
    if rollup.statistic not in fits:
        use = " or ".join(f'"{f}"' for f in fits)
        ck.add(
            f"{prefix}rollup.statistic",
            f'"{rollup.statistic}" does not fit {what}; use statistic = {use}',
            ck.loc.line_of("statistic", r.table, r.index, "rollup"),
        )


def _check_limits_and_target(ck: Checker, m: MetricSpec, prefix: str, r: Reader) -> None:
    """The specification limits in order, and the target between them."""
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
    if t is None or (lo is not None and hi is not None and lo >= hi):
        return
    limits = _off_spec(t, lo, hi)
    if limits is not None:
        ck.add(
            f"{prefix}target",
            f"the target {_num(t)} is {limits}; a process on target "
            "would be out of specification: check the target and the limits",
            r._line("target"),
        )


def _off_spec(t: float, lo: float | None, hi: float | None) -> str | None:
    """Where a target lies off the specification limits, in words; None when it is on them
    or between them."""
    if lo is not None and hi is not None:
        return (
            None
            if lo <= t <= hi
            else f"outside the specification limits ({_num(lo)} to {_num(hi)})"
        )
    if lo is not None and t < lo:
        return f"below spec_lower ({_num(lo)})"
    if hi is not None and t > hi:
        return f"above spec_upper ({_num(hi)})"
    return None


def _check_business_keys(ck: Checker, m: MetricSpec, prefix: str, r: Reader) -> None:
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
