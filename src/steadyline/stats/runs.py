"""Run-chart analysis: the median as centre line and the non-parametric run rules.

This module judges and words; the patterns are found in run_patterns.py and the limits they are
judged against computed in run_limits.py.

Two rule sets are offered; the result always says which one was used.

``"anhoj"`` (default) — Anhøj & Olesen (2014), *PLoS ONE* 9(11):e113825.
    n_useful is the number of points not on the median (points on the median are ignored).
    - Unusually long run: a signal when the longest run of useful points on one side of the
      median is **longer than** ``round(log2(n_useful) + 3)``. The paper's wording "longer than"
      is taken as authoritative (a popular write-up says "at least"; we do not follow it).
      ``log2(n) + 3`` is never exactly x.5 for an integer n, so the rounding convention is moot.
    - Too few crossings: a signal when the number of crossings (changes of side between
      consecutive useful points) is **less than** ``scipy.stats.binom.ppf(0.05, n_useful - 1, 0.5)``,
      i.e. less than the smallest c with P(C <= c) >= 0.05 for C ~ Binomial(n_useful - 1, 1/2)
      (R's ``qbinom(0.05, n - 1, 0.5)``). With m = n_useful - 1 that is the smallest c with
      20 * sum_(i <= c) C(m, i) >= 2^m, which is computed exactly in integers up to
      m = ``EXACT_CROSSINGS_MAX`` (scipy.stats.binom above, imported then; run_limits.py).

``"perla"`` — Perla, Provost & Murray (2011), *BMJ Qual Saf* 20:46–51.
    - Shift: 6 or more consecutive useful points on one side of the median. Points on the
      median are skipped: they neither add to nor break the shift.
    - Trend: 5 or more consecutive points all going up or all going down. Successive equal
      values are counted once (they neither add to nor break the trend).
    - Too few / too many runs: runs = crossings + 1 among useful points, judged against the
      exact runs distribution of Swed & Eisenhart (1943) with N = n_useful split at the median
      (n1 = floor(N/2), n2 = ceil(N/2)), **alpha = 0.05 in each tail**: too few when
      runs <= the largest r with P(R <= r) <= 0.05; too many when runs >= the smallest r with
      P(R >= r) <= 0.05.
    - Astronomical point: a judgement rule ("a point all would agree is unusual"); it is not
      automated, only mentioned in the notes.

Signal indices are 0-based positions in the input sequence:
    - a long run / shift carries the useful points of that run (points on the median inside it
      are not included, because they are not part of the run);
    - a trend carries every point from its first to its last point, equal repeats included;
    - the crossings signal and the runs-count signals describe the whole series, so they carry
      **all useful points**.
Every run longer than the limit (Anhøj) or of 6+ points (Perla) is reported as its own signal.

Missing values (nan) are allowed: they are ignored like points on the median and keep their
position, so indices still match the plotted sequence.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from .codes import RUN_RULES_DETAIL, RunRules
from .results import RunChartAnalysis, Signal, StatsError
from .run_limits import anhoj_limits, perla_runs_limits
from .run_patterns import SideRuns, runs_of_sides, trends

RULE_SETS = RunRules.codes()
# each rule set by its name ("... by the Anhøj rules"), and with what it tests in the notes
RULE_SET_SHORT = {r.value: r.label for r in RunRules}
RULE_SET_LABELS = {r.value: f"{r.label} ({RUN_RULES_DETAIL[r]})" for r in RunRules}


def _count(n: int, word: str) -> str:
    """'1 point', '3 points': a count with its noun in the right number."""
    return f"{n} {word if n == 1 else word + 's'}"


def _are(n: int) -> str:
    return "is" if n == 1 else "are"


def _sig(v: float, digits: int = 4) -> str:
    """A number for a sentence to ``digits`` significant figures, never in exponent form:
    a median is a measured value and carries no more figures than the data do."""
    if v == 0 or not math.isfinite(v):
        return f"{v:g}"
    decimals = max(0, digits - 1 - int(math.floor(math.log10(abs(v)))))
    text = f"{v:.{decimals}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


PERLA_SHIFT_LENGTH = 6
PERLA_TREND_LENGTH = 5
MIN_RELIABLE_POINTS = 10  # Perla et al. 2011 (from memory): at least 10 useful points


def _as_array(values: Sequence[float] | np.ndarray) -> np.ndarray:
    x = np.asarray(values, dtype=float)
    if x.ndim != 1:
        raise StatsError("run-chart analysis needs a one-dimensional sequence of values")
    if np.isinf(x).any():
        raise StatsError("run-chart values must be finite numbers (missing values may be nan)")
    return x


def analyse_runs(
    values: Sequence[float] | np.ndarray,
    rule_set: str = "anhoj",
    median: float | None = None,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> RunChartAnalysis:
    """Analyse a run chart with the Anhøj rules (default) or the Perla et al. rules.

    ``median`` may be given to judge the points against a fixed centre line (e.g. the baseline
    median when looking at after-improvement data); otherwise it is the median of the values.
    ``set_aside`` marks points whose known cause was found and removed: like missing values
    they are left out of the median (when it is not given), the runs and the crossings, and
    the points either side of one are neighbours.
    """
    if rule_set not in RULE_SETS:
        raise StatsError(f"unknown run-chart rule set {rule_set!r}; choose 'anhoj' or 'perla'")
    x = _as_array(values)
    n = int(len(x))
    finite, n_aside = _judged(x, set_aside)
    n_finite = int(finite.sum())
    if n_finite == 0:
        raise StatsError("a run chart needs at least one data point, got none")
    centre, notes = _centre(x, finite, median, rule_set)
    notes += _left_out_notes(n, n_finite, n_aside)

    useful_idx = np.flatnonzero(finite & (x != centre))
    n_useful = int(len(useful_idx))
    notes += _median_notes(n_finite - n_useful, n_useful)
    runs = runs_of_sides(useful_idx, np.where(x[useful_idx] > centre, 1, -1))
    crossings = max(len(runs) - 1, 0)
    all_useful = tuple(useful_idx.tolist())

    longest_limit, crossings_limit, runs_limits, signals = _judge(
        rule_set, x, runs, n_useful, crossings, all_useful
    )
    if rule_set == "perla":
        notes.append(
            "A single astronomically different point is a matter of judgement and is not "
            "checked automatically; look at the chart."
        )
    signals.sort(key=lambda s: (s.indices[0] if s.indices else -1, s.rule))
    return RunChartAnalysis(
        rule_set=rule_set,
        median=centre,
        n=n,
        n_useful=n_useful,
        longest_run=int(runs.longest),
        longest_run_limit=longest_limit,
        crossings=int(crossings),
        crossings_limit=crossings_limit,
        runs=int(len(runs)),
        runs_limits=runs_limits,
        signals=tuple(signals),
        notes=tuple(notes),
    )


def _judged(x: np.ndarray, set_aside: Sequence[bool] | np.ndarray | None) -> tuple[np.ndarray, int]:
    """The points judged (a value, not set aside), and how many values are set aside."""
    finite = np.isfinite(x)
    if set_aside is None:
        return finite, 0
    aside = np.asarray(set_aside, dtype=bool)
    if aside.shape != x.shape:
        raise StatsError(
            f"set_aside must give one true/false per point ({len(x)}), got {aside.size}"
        )
    return finite & ~aside, int((aside & finite).sum())


def _centre(
    x: np.ndarray, finite: np.ndarray, median: float | None, rule_set: str
) -> tuple[float, list[str]]:
    """The centre line (the median of the judged points, or the one given) and the first notes."""
    notes: list[str] = [f"Rules used: {RULE_SET_LABELS[rule_set]}."]
    if median is None:
        return float(np.median(x[finite])), notes
    centre = float(median)
    if not math.isfinite(centre):
        raise StatsError("the reference median must be a finite number")
    notes.append(f"Points are judged against a fixed median of {_sig(centre)}.")
    return centre, notes


def _left_out_notes(n: int, n_finite: int, n_aside: int) -> list[str]:
    notes: list[str] = []
    if n_finite + n_aside < n:
        k = n - n_finite - n_aside
        notes.append(f"{_count(k, 'missing value')} {_are(k)} left out of the analysis.")
    if n_aside:
        notes.append(
            f"{_count(n_aside, 'point')} set aside {_are(n_aside)} left out of the "
            "runs and crossings."
        )
    return notes


def _median_notes(on_median: int, n_useful: int) -> list[str]:
    """Points on the median, and too few points off it for the rules to be reliable."""
    notes: list[str] = []
    if on_median:
        notes.append(
            f"{_count(on_median, 'point')} {'lies' if on_median == 1 else 'lie'} exactly on the "
            f"median; {'it is' if on_median == 1 else 'they are'} not counted in runs "
            "or crossings."
        )
    if n_useful < MIN_RELIABLE_POINTS:
        notes.append(
            f"Only {_count(n_useful, 'point')} {_are(n_useful)} off the median; run-chart rules "
            "need at least "
            f"{MIN_RELIABLE_POINTS} to be reliable, so treat any result with caution."
        )
    return notes


def _judge(
    rule_set: str,
    x: np.ndarray,
    runs: SideRuns,
    n_useful: int,
    crossings: int,
    all_useful: tuple[int, ...],
) -> tuple[int | None, int | None, tuple[int, int] | None, list[Signal]]:
    """(longest-run limit, crossings limit, runs-count limits, signals) by the rule set."""
    if rule_set == "anhoj":
        longest_limit, crossings_limit, signals = _anhoj_signals(
            runs, n_useful, crossings, all_useful
        )
        return longest_limit, crossings_limit, None, signals
    runs_limits, signals = _perla_signals(x, runs, n_useful, all_useful)
    return PERLA_SHIFT_LENGTH, None, runs_limits, signals


def _side_word(s: int) -> str:
    return "above" if s > 0 else "below"


def _anhoj_signals(
    runs: SideRuns, n_useful: int, crossings: int, all_useful: tuple[int, ...]
) -> tuple[int | None, int | None, list[Signal]]:
    """Anhøj: the longest-run and crossings limits, and the signals: each run longer than the
    limit, and too few crossings."""
    if n_useful < 1:
        return None, None, []
    longest_limit, crossings_limit = anhoj_limits(n_useful)
    signals: list[Signal] = []
    for s, idx in runs.at_least(longest_limit + 1):
        if len(idx) > longest_limit:
            signals.append(
                Signal(
                    rule="unusually-long-run",
                    description=(
                        f"{len(idx)} points in a row {_side_word(s)} the median; more than "
                        f"{longest_limit} in a row is unlikely by chance"
                    ),
                    indices=tuple(idx),
                    side=_side_word(s),
                )
            )
    if crossings < crossings_limit:
        signals.append(
            Signal(
                rule="too-few-crossings",
                description=(
                    f"the line crosses the median only {_count(crossings, 'time')}; fewer than "
                    f"{crossings_limit} crossings is unlikely by chance"
                ),
                indices=all_useful,
            )
        )
    return longest_limit, crossings_limit, signals


def _perla_signals(
    x: np.ndarray, runs: SideRuns, n_useful: int, all_useful: tuple[int, ...]
) -> tuple[tuple[int, int] | None, list[Signal]]:
    """Perla, Provost & Murray: the runs-count limits, and the signals: shifts, trends, too few
    or too many runs."""
    signals: list[Signal] = []
    for s, idx in runs.at_least(PERLA_SHIFT_LENGTH):
        if len(idx) >= PERLA_SHIFT_LENGTH:
            signals.append(
                Signal(
                    rule="shift",
                    description=(
                        f"shift: {len(idx)} points in a row {_side_word(s)} the median "
                        f"({PERLA_SHIFT_LENGTH} or more signals)"
                    ),
                    indices=tuple(idx),
                    side=_side_word(s),
                )
            )
    for direction, idx in trends(x, PERLA_TREND_LENGTH):
        distinct = len({float(x[i]) for i in idx})
        word = "rising" if direction == "up" else "falling"
        signals.append(
            Signal(
                rule="trend",
                description=(
                    f"trend: {distinct} points in a row all {word} "
                    f"({PERLA_TREND_LENGTH} or more signals; equal neighbours count once)"
                ),
                indices=tuple(idx),
                side=direction,
            )
        )
    if n_useful < 2:
        return None, signals
    runs_limits = perla_runs_limits(n_useful)
    signals += _runs_count_signals(len(runs), runs_limits, n_useful, all_useful)
    return runs_limits, signals


def _runs_count_signals(
    n_runs: int, limits: tuple[int, int], n_useful: int, all_useful: tuple[int, ...]
) -> list[Signal]:
    low, high = limits
    if n_runs <= low:
        return [
            Signal(
                rule="too-few-runs",
                description=(
                    f"too few runs: {_count(n_runs, 'run')} where {low} or fewer is unlikely by "
                    f"chance for {n_useful} points"
                ),
                indices=all_useful,
            )
        ]
    if n_runs >= high:
        return [
            Signal(
                rule="too-many-runs",
                description=(
                    f"too many runs: {n_runs} runs where {high} or more is unlikely by "
                    f"chance for {n_useful} points"
                ),
                indices=all_useful,
            )
        ]
    return []


def shift_against(
    values: Sequence[float] | np.ndarray,
    reference_median: float,
    rule_set: str = "anhoj",
) -> RunChartAnalysis:
    """Judge (after-period) values against a fixed reference median, e.g. the baseline median.

    Returns the run analysis against that median keeping only the signals that speak of a
    shift in level: long runs / shifts and too few crossings or runs. Trends and "too many
    runs" say nothing about a sustained shift and are left out.
    """
    res = analyse_runs(values, rule_set=rule_set, median=reference_median)
    keep = {"unusually-long-run", "too-few-crossings", "shift", "too-few-runs"}
    signals = tuple(s for s in res.signals if s.rule in keep)
    notes = res.notes + (
        "Only signals of a sustained shift against the reference median are reported.",
    )
    return RunChartAnalysis(
        rule_set=res.rule_set,
        median=res.median,
        n=res.n,
        n_useful=res.n_useful,
        longest_run=res.longest_run,
        longest_run_limit=res.longest_run_limit,
        crossings=res.crossings,
        crossings_limit=res.crossings_limit,
        runs=res.runs,
        runs_limits=res.runs_limits,
        signals=signals,
        notes=notes,
    )
