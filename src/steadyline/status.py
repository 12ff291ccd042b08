"""A project's status in plain words: does the gain hold?

One vocabulary (:class:`Status`), defined here only and used by the index, results.json, the
index's CSV download and the README. The judgement is a pure function of a few facts about the
project's **headline metric** (the metric its index card shows), so that the card's status and
its headline change always speak of the same figures:

0. the headline metric could not be built (its data file has errors) -> not built
1. no after period with data                                        -> baseline only
2. no before-and-after test (a categories metric, a comparison that
   failed, or a test that had nothing to test with different values) -> not judged
3. better = "target" with no target value: no direction             -> not judged
4. the test's p-value is 0.05 or more (the change could be chance)
   or the two periods are the same                                   -> no clear change
5. a change in the worse direction, unlikely to be chance           -> worse
6. a change in the better direction, unlikely to be chance, and the
   after period stable on its own control limits (no signal there)   -> gain holds
7. the same, but with signals on the after period's own limits, or
   too few after points for limits of its own, or no control chart  -> gain not yet stable

Staleness depends on the day, not on the results: results.json carries the status above
(byte-identical from one day to the next), and only the index, which every build renders
again, turns a project whose last data are more than ``stale_after_days`` before the build
date into "data stale" (:func:`on_index`), saying what the last data showed. The build date is
``SOURCE_DATE_EPOCH`` when set (the reproducible-builds convention), else today in UTC.

This module imports nothing else of ours and nothing heavy: the index stage of a no-op
rebuild uses it without loading the statistics stack.
"""

from __future__ import annotations

import datetime as dt
import os
from dataclasses import dataclass
from enum import StrEnum


class Status(StrEnum):
    """The statuses, in the index's order: what needs attention first."""

    NOT_BUILT = "not-built"
    WORSE = "worse"
    STALE = "data-stale"
    NOT_STABLE = "gain-not-yet-stable"
    NO_CLEAR_CHANGE = "no-clear-change"
    NOT_JUDGED = "not-judged"
    BASELINE_ONLY = "baseline-only"
    GAIN_HOLDS = "gain-holds"

    @property
    def label(self) -> str:
        return LABELS[self]

    @property
    def rank(self) -> int:
        return list(Status).index(self)


LABELS = {
    Status.NOT_BUILT: "not built",
    Status.WORSE: "worse",
    Status.STALE: "data stale",
    Status.NOT_STABLE: "gain not yet stable",
    Status.NO_CLEAR_CHANGE: "no clear change",
    Status.NOT_JUDGED: "not judged",
    Status.BASELINE_ONLY: "baseline only",
    Status.GAIN_HOLDS: "gain holds",
}

# What each status means, once, for the index's legend and the README.
MEANINGS = {
    Status.NOT_BUILT: "the project's files have errors, or its headline metric's data do, so "
    "there is nothing to judge it by",
    Status.WORSE: "the headline metric moved in the worse direction, unlikely to be chance",
    Status.STALE: "no data for longer than the portfolio's stale_after_days before the build",
    Status.NOT_STABLE: "better, unlikely to be chance, but the after period is not (yet) shown "
    "stable on its own control limits",
    Status.NO_CLEAR_CHANGE: "the before-and-after test cannot tell the change from chance",
    Status.NOT_JUDGED: "the headline metric has no before-and-after test to judge by",
    Status.BASELINE_ONLY: "no after period with data yet",
    Status.GAIN_HOLDS: "better, unlikely to be chance, and stable on its own control limits",
}

# A change is "unlikely to be chance" below this p-value: the conventional 5% level, the same
# the pages' sentences use (stats.compare.ALPHA; common practice).
ALPHA = 0.05

# Days without data after which the index calls a project's data stale (portfolio.toml:
# stale_after_days). A quarter: portfolios are commonly reviewed monthly or quarterly, and a
# project with no data over a whole quarter cannot show that a gain still holds (common
# practice).
STALE_AFTER_DAYS = 90


@dataclass(frozen=True)
class HeadlineFacts:
    """What the status is judged from: the headline metric's analysis, in plain values."""

    metric_id: str
    metric_name: str
    has_after: bool  # the after period has data
    built: bool = True  # False: the metric's data have errors, nothing was computed
    problem_count: int = 0  # its errors, when not built
    categories: bool = False  # a categories metric: Pareto by period, no test
    compared: bool = False  # a before-and-after comparison was made
    failure: str = ""  # why not, when it was tried and failed
    improved: bool | None = None  # direction against `better`; None: no target to judge by
    p_value: float | None = None
    p_text: str = ""  # the p-value as the pages write it ("p < 0.001")
    change: float = 0.0  # after minus baseline
    percent_change: float | None = None
    after_points: int = 0  # points of the after period on the control chart
    own_limits: bool = False  # the after period has control limits of its own
    own_limits_min: int = 12  # points needed for them
    after_signals: int = 0  # signals of the after period against its own limits
    control: bool = True  # a control chart could be drawn at all


@dataclass(frozen=True)
class Verdict:
    status: Status
    reason: str  # plain words, a sentence without its full stop
    note: str = ""  # what the reason adds to the card's headline line (which gives the change)

    def as_json(self) -> dict:
        return {
            "code": str(self.status),
            "label": self.status.label,
            "reason": self.reason,
            "note": self.note,
        }


def _change_words(f: HeadlineFacts) -> str:
    if f.percent_change is not None and f.percent_change != 0:
        return f"{'down' if f.change < 0 else 'up'} {abs(f.percent_change):.0f}%"
    return "down" if f.change < 0 else "up"


def judge(f: HeadlineFacts) -> Verdict:
    """The status of a project from its headline metric (rules in the module docstring)."""
    if not f.built:
        n = f.problem_count
        note = (
            f"the headline metric could not be built: {n} problem{'' if n == 1 else 's'} "
            "in its data; the other metrics are published"
        )
        return Verdict(Status.NOT_BUILT, f"{f.metric_name}: {note}", note)
    if not f.has_after:
        return Verdict(Status.BASELINE_ONLY, f"{f.metric_name}: no after period with data yet")
    if f.categories:
        note = (
            "a count by category: the Pareto charts by period show the change, there is no "
            "test to judge it by"
        )
        return Verdict(Status.NOT_JUDGED, f"{f.metric_name} is {note}", note)
    if not f.compared:
        note = "the before-and-after comparison could not be made" + (
            f": {f.failure}" if f.failure else ""
        )
        return Verdict(Status.NOT_JUDGED, f"{f.metric_name}: {note}", note)
    if f.p_value is None:
        if f.change == 0:
            return Verdict(
                Status.NO_CLEAR_CHANGE, f"{f.metric_name}: the same in the baseline and after"
            )
        note = "no test is possible, as neither period varies"
        return Verdict(Status.NOT_JUDGED, f"{f.metric_name}: {note}", note)
    if f.improved is None:
        note = "better is 'target' but no target is set, so the direction cannot be judged"
        return Verdict(Status.NOT_JUDGED, f"{f.metric_name}: {note}", note)
    direction = "better" if f.improved else "worse"
    if f.p_value >= ALPHA or f.change == 0:
        return Verdict(
            Status.NO_CLEAR_CHANGE,
            f"{f.metric_name} {_change_words(f)}, "
            f"{direction}, but this could be chance ({f.p_text})",
        )
    said = f"{f.metric_name} {_change_words(f)}, {direction}, unlikely to be chance ({f.p_text})"
    if not f.improved:
        return Verdict(Status.WORSE, said)
    if not f.control:
        note = "no control chart, so the after period's stability is not judged"
    elif not f.own_limits:
        note = (
            f"the after period has {f.after_points} point{'' if f.after_points == 1 else 's'}"
            f"; {f.own_limits_min} are needed for limits of its own, so its stability is "
            "not yet judged"
        )
    elif f.after_signals:
        n = f.after_signals
        note = f"{n} signal{'' if n == 1 else 's'} on the after period's own control limits"
    else:
        note = f"the after period is stable on its own control limits ({f.after_points} points)"
        return Verdict(Status.GAIN_HOLDS, f"{said}; {note}", note)
    return Verdict(Status.NOT_STABLE, f"{said}; {note}", note)


def look_at(status: Status, metric_id: str, staged_chart: bool) -> tuple[str, str]:
    """What a reader should look at for this status: (words, link relative to the project's
    folder). *staged_chart*: the history page has the metric's control chart by period."""
    history = f"history.html#metric-{metric_id}"
    if status in (Status.GAIN_HOLDS, Status.NOT_STABLE) and staged_chart:
        return "the control chart by period", f"history.html#history-{metric_id}-staged-control"
    if status in (Status.GAIN_HOLDS, Status.NOT_STABLE, Status.WORSE, Status.NO_CLEAR_CHANGE):
        return "the before-and-after comparison", history
    if status is Status.STALE:
        return "where the data come from", "index.html#prov-h"
    if status is Status.NOT_BUILT:  # the whole project, or its headline metric's section
        return "what to fix", f"index.html#metric-{metric_id}" if metric_id else "index.html"
    return "the baseline's charts", f"index.html#metric-{metric_id}"


def build_date(environ: os._Environ | dict | None = None) -> dt.date:
    """The date a build judges staleness against: SOURCE_DATE_EPOCH (whole seconds since
    1970-01-01 UTC) when set, else today in UTC. ValueError for a malformed value (the
    convention asks a build to stop rather than guess)."""
    env = os.environ if environ is None else environ
    raw = env.get("SOURCE_DATE_EPOCH")
    if raw is None or raw == "":
        return dt.datetime.now(dt.UTC).date()
    text = raw.strip()
    if not text.isdigit():
        raise ValueError(
            f"SOURCE_DATE_EPOCH: expected a whole number of seconds since "
            f"1970-01-01 UTC, got {raw!r}"
        )
    try:
        return dt.datetime.fromtimestamp(int(text), dt.UTC).date()
    except (OverflowError, OSError, ValueError) as e:
        raise ValueError(f"SOURCE_DATE_EPOCH: {raw!r} is not a usable date ({e})") from None


def days_without_data(data_to: str, today: dt.date) -> int | None:
    """Whole days from the last period with data to *today*; None when there are no data."""
    if not data_to:
        return None
    return (today - dt.date.fromisoformat(data_to)).days


def on_index(
    verdict: Verdict, data_to: str, today: dt.date, stale_after_days: int = STALE_AFTER_DAYS
) -> Verdict:
    """The status the index shows: *verdict*, unless the data are stale on *today*, in which
    case "data stale", with what the last data showed."""
    if verdict.status is Status.NOT_BUILT:  # what to fix comes first, however old the data
        return verdict
    days = days_without_data(data_to, today)
    if days is None or days <= stale_after_days:
        return verdict
    note = (
        f"no data after {data_to}, {days} days before this build on {today.isoformat()} "
        f"(more than {stale_after_days}); up to then: {verdict.status.label}"
    )
    return Verdict(Status.STALE, note, note)


__all__ = [
    "ALPHA",
    "LABELS",
    "MEANINGS",
    "STALE_AFTER_DAYS",
    "HeadlineFacts",
    "Status",
    "Verdict",
    "build_date",
    "judge",
    "look_at",
    "on_index",
]
