"""The parts every finding is made of: the Finding, its markers and words, and the one sentence
for every occurrence of one signal rule, with its dates.

The charts draw the same markers and name them in their legends with the same words, so a
sentence and the mark it speaks of always match.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from ..stats.evidence import BETTER, NOT_JUDGED, WORSE
from ..stats.results import Signal

__all__ = [
    "CHANGE_MARKERS",
    "CHANGE_WORDS",
    "CLEAR_MARKER",
    "Finding",
    "MAX_DATES_LISTED",
    "OWN_SIGNAL_WORDS",
    "SIGNAL_MARKER",
    "first_point",
    "group_sentence",
    "grouped_signals",
    "list_dates",
]

# A sentence names the first few dates of a signal and counts the rest: the card's data table
# names them all.
MAX_DATES_LISTED = 3


@dataclass(frozen=True)
class Finding:
    """One sentence under a chart. kind: "signal" (with a marker shape), "change-…" or "clear".
    ``at`` is the index of the first point the sentence concerns (None when none): the card
    orders its sentences by it. ``names_points`` marks a sentence that lists the points of a
    signal: a card short of room leaves those to its data table (whose "signals" column names
    every point) and keeps the sentences that count or sum up."""

    kind: str
    marker: str
    text: str
    at: int | None = None
    names_points: bool = False


SIGNAL_MARKER = "◆"  # the same diamond the charts use for signal points
CLEAR_MARKER = "●"
# The control chart by period marks evidence of a change in shapes of their own (charts.series:
# a square for better, a cross for worse, a triangle where no direction is judged) and names
# them in its legend with these words; the sentences under it use the same glyphs and words.
CHANGE_MARKERS = {BETTER: "■", WORSE: "✚", NOT_JUDGED: "▲"}
CHANGE_WORDS = {
    BETTER: "baseline limits: change, better",
    WORSE: "baseline limits: change, worse",
    NOT_JUDGED: "baseline limits: change, direction not judged",
}
OWN_SIGNAL_WORDS = "signal on its own period's limits"


def list_dates(labels: Sequence[str]) -> str:
    """The dates in words: all of them, or the first MAX_DATES_LISTED and how many more."""
    labels = list(dict.fromkeys(labels))
    if len(labels) <= MAX_DATES_LISTED:
        if len(labels) == 1:
            return labels[0]
        return ", ".join(labels[:-1]) + " and " + labels[-1]
    return ", ".join(labels[:MAX_DATES_LISTED]) + f" and {len(labels) - MAX_DATES_LISTED} more"


# Run-chart rules that judge the series as a whole (how often it crosses its median, how many
# runs it makes): their points are every point of the series, so none is named.
_WHOLE_SERIES = frozenset({"too-few-crossings", "too-few-runs", "too-many-runs"})


def group_sentence(
    group: Sequence[Signal],
    x: Sequence[str],
    what: str = "point",
    period: str = "",
    line: str = "centre line",
) -> str:
    """One sentence for every occurrence of one rule (on one chart, in one period); ``line`` is
    what the chart's sides are of (the centre line, or a run chart's median)."""
    sig = group[0]
    points = sorted({i for s in group for i in s.indices})
    dates = list_dates([x[i] for i in points])
    sides = {s.side for s in group if s.side}
    side = ""
    if len(sides) == 1:
        one = sides.pop()
        named = {"above": "above the", "below": "below the", "up": "rising", "down": "falling"}
        if named.get(one, one) not in sig.description:  # else the rule's words name the side
            side = {
                "above": f" (above the {line})",
                "below": f" (below the {line})",
                "up": " (rising)",
                "down": " (falling)",
            }.get(one, "")
    chart = "" if sig.chart == "main" else " on the dispersion chart"
    times = "" if len(group) == 1 else f"{len(group)} times, "
    plural = what if len(points) == 1 else what + "s"
    lead = f"{period}: " if period else ""
    if sig.rule in _WHOLE_SERIES or len(points) >= len(x):
        return f"{lead}{sig.description}{side}{chart}."  # the whole series': no list of points
    return f"{lead}{sig.description}{side}{chart}: {times}{len(points)} {plural}, {dates}."


def first_point(signals: Sequence[Signal]) -> int | None:
    """The first point any of the signals covers."""
    return min((min(s.indices) for s in signals if len(s.indices)), default=None)


def grouped_signals(
    signals: Sequence[Signal], stage_names: Sequence[str] | None
) -> dict[tuple[str, str, str, str], list[Signal]]:
    """The signals by period, chart, rule and description, in the order they first occur."""
    groups: dict[tuple[str, str, str, str], list[Signal]] = {}
    for s in signals:
        period = stage_names[s.indices[0]] if stage_names and s.indices else ""
        groups.setdefault((period, s.chart, s.rule, s.description), []).append(s)
    return groups
