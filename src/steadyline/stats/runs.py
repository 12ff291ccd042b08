"""Run-chart analysis: the median as centre line and the non-parametric run rules.

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
      m = ``EXACT_CROSSINGS_MAX`` (scipy.stats.binom above, imported then).

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
from functools import lru_cache

import numpy as np

from . import normal
from ._lazy import lazy
from .results import RunChartAnalysis, Signal, StatsError

_st = lazy("scipy.stats")

RULE_SETS = ("anhoj", "perla")
RULE_SET_LABELS = {
    "anhoj": "Anhøj rules (longest run and number of crossings; Anhøj & Olesen 2014)",
    "perla": "Perla, Provost & Murray rules (shift, trend and number of runs; Perla, Provost & "
    "Murray 2011)",
}
# the same rule sets by their name alone ("... by the Anhøj rules"); each label above starts
# with this name, the one the pages use (a test holds them to the site's vocabulary)
RULE_SET_SHORT = {"anhoj": "Anhøj rules", "perla": "Perla, Provost & Murray rules"}


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
PERLA_RUNS_ALPHA = 0.05  # per tail
MIN_RELIABLE_POINTS = 10  # Perla et al. 2011 (from memory): at least 10 useful points
# Up to this many trials (n_useful - 1) the crossings limit is found with exact integers; the
# sum runs over about m/2 binomial coefficients of up to m bits (a few milliseconds at 10,000).
EXACT_CROSSINGS_MAX = 10_000


@lru_cache(maxsize=256)
def _crossings_limit(m: int) -> int:
    """The smallest c with P(C <= c) >= 1/20 for C ~ Binomial(m, 1/2), i.e. with
    20 * sum_(i <= c) C(m, i) >= 2^m."""
    if m > EXACT_CROSSINGS_MAX:
        return int(_st.binom.ppf(0.05, m, 0.5))
    target = 1 << m  # 2^m
    coeff = 1  # C(m, c)
    total = 1  # sum_(i <= c) C(m, i)
    c = 0
    while 20 * total < target:
        coeff = coeff * (m - c) // (c + 1)
        c += 1
        total += coeff
    return c


def anhoj_limits(n_useful: int) -> tuple[int, int]:
    """Anhøj limits for ``n_useful`` points not on the median.

    Returns ``(longest_run_limit, crossings_min)``: a signal when the longest run is greater
    than ``longest_run_limit``, or when crossings are fewer than ``crossings_min``.
    """
    n = int(n_useful)
    if n < 1:
        raise StatsError(f"the Anhøj limits need at least one point off the median, got {n}")
    longest = int(round(math.log2(n) + 3))
    crossings = _crossings_limit(n - 1)
    return longest, crossings


@lru_cache(maxsize=512)
def runs_distribution(n1: int, n2: int) -> tuple[float, ...]:
    """Exact P(R = r), r = 0..n1+n2, for the number of runs in a random arrangement of
    n1 items of one kind and n2 of another (Swed & Eisenhart 1943)."""
    if n1 < 0 or n2 < 0:
        raise StatsError("group sizes must not be negative")
    total = n1 + n2
    probs = [0.0] * (total + 1)
    if n1 == 0 or n2 == 0:
        if total > 0:
            probs[1] = 1.0
        return tuple(probs)
    denom = math.comb(total, n1)
    for r in range(2, total + 1):
        k, odd = divmod(r, 2)
        if not odd:
            ways = 2 * math.comb(n1 - 1, k - 1) * math.comb(n2 - 1, k - 1)
        else:
            ways = math.comb(n1 - 1, k - 1) * math.comb(n2 - 1, k) + math.comb(
                n1 - 1, k
            ) * math.comb(n2 - 1, k - 1)
        probs[r] = ways / denom
    return tuple(probs)


# Above this many points the exact distribution (big-integer binomials, O(n) terms) is replaced by
# its normal approximation with mean 2·n1·n2/N + 1 and variance 2·n1·n2·(2·n1·n2 − N)/(N²(N − 1))
# (Wald & Wolfowitz 1940, from memory), with a continuity correction; the tests check that both
# agree within one run where they meet.
EXACT_RUNS_MAX = 1000


def _runs_limits_normal(n: int, alpha: float) -> tuple[int, int]:
    n1, n2 = n // 2, n - n // 2
    mean = 2.0 * n1 * n2 / n + 1.0
    var = 2.0 * n1 * n2 * (2.0 * n1 * n2 - n) / (n * n * (n - 1.0))
    sd = math.sqrt(var)
    z = normal.ppf(1.0 - alpha)
    low = max(1, math.floor(mean - 0.5 - z * sd))
    high = min(n + 1, math.ceil(mean + 0.5 + z * sd))
    return low, high


def perla_runs_limits(n: int, alpha: float = PERLA_RUNS_ALPHA) -> tuple[int, int]:
    """Runs-count limits for ``n`` points not on the median, ``alpha`` in each tail.

    Returns ``(low, high)``: too few runs when runs <= low, too many when runs >= high.
    ``low`` is the largest r with P(R <= r) <= alpha and ``high`` the smallest r with
    P(R >= r) <= alpha, for n1 = floor(n/2), n2 = ceil(n/2). When no attainable count is that
    unlikely, the limits fall outside the attainable range (low = 1, high = n + 1), so they can
    never signal for a median split.
    """
    n = int(n)
    if n < 2:
        raise StatsError(f"the runs-count limits need at least two points off the median, got {n}")
    if n > EXACT_RUNS_MAX:
        return _runs_limits_normal(n, alpha)
    probs = runs_distribution(n // 2, n - n // 2)
    eps = 1e-12
    low = 1
    cum = 0.0
    for r in range(0, n + 1):
        cum += probs[r]
        if cum <= alpha + eps:
            low = max(low, r)
        else:
            break
    high = n + 1
    cum = 0.0
    for r in range(n, -1, -1):
        cum += probs[r]
        if cum <= alpha + eps:
            high = r
        else:
            break
    return low, high


def _as_array(values: Sequence[float] | np.ndarray) -> np.ndarray:
    x = np.asarray(values, dtype=float)
    if x.ndim != 1:
        raise StatsError("run-chart analysis needs a one-dimensional sequence of values")
    if np.isinf(x).any():
        raise StatsError("run-chart values must be finite numbers (missing values may be nan)")
    return x


class _SideRuns:
    """Runs of useful points on one side of the median, found with numpy.

    Only the runs asked for (``at_least``) are turned into index lists, so a long series costs
    little more than one pass over its points.
    """

    def __init__(self, useful_idx: np.ndarray, sides: np.ndarray):
        self.idx = useful_idx
        self.sides = sides
        if sides.size:
            starts = np.concatenate([[0], np.flatnonzero(sides[1:] != sides[:-1]) + 1])
        else:
            starts = np.zeros(0, dtype=int)
        self.starts = starts
        self.lengths = np.diff(np.concatenate([starts, [sides.size]])).astype(int)

    def __len__(self) -> int:
        return int(self.starts.size)

    @property
    def longest(self) -> int:
        return int(self.lengths.max()) if self.lengths.size else 0

    def at_least(self, k: int) -> list[tuple[int, list[int]]]:
        """(side, indices) of every run of k or more points, in order."""
        out = []
        for j in np.flatnonzero(self.lengths >= k).tolist():
            a = int(self.starts[j])
            out.append((int(self.sides[a]), self.idx[a : a + int(self.lengths[j])].tolist()))
        return out


def _runs_of_sides(useful_idx: np.ndarray, sides: np.ndarray) -> _SideRuns:
    """Group useful points into runs on one side."""
    return _SideRuns(useful_idx, sides)


def _trends(x: np.ndarray, min_points: int) -> list[tuple[str, list[int]]]:
    """Trends of at least ``min_points`` distinct successive values all rising or all falling.

    Missing values break a trend. Successive equal values count once and do not break it.
    Returns (direction, indices from first to last point inclusive). Vectorised: only the
    trends found are turned into index lists.
    """
    found: list[tuple[str, list[int]]] = []
    finite = np.isfinite(x)
    edges = np.diff(np.concatenate([[0], finite.astype(np.int8), [0]]))
    for a, b in zip(
        np.flatnonzero(edges == 1).tolist(), np.flatnonzero(edges == -1).tolist(), strict=True
    ):
        seg = x[a:b]
        if seg.size < 2:
            continue
        # groups of equal successive values: first and last index of each
        first = np.flatnonzero(np.concatenate([[True], seg[1:] != seg[:-1]])) + a
        last = np.concatenate([first[1:] - 1, [b - 1]])
        vals = x[first]
        m = vals.size
        if m < 2:
            continue
        up = vals[1:] > vals[:-1]  # one step between successive groups
        change = np.flatnonzero(up[1:] != up[:-1]) + 1
        run_start = np.concatenate([[0], change])
        run_stop = np.concatenate([change, [m - 1]])  # steps [start, stop) join groups start..stop
        keep = np.flatnonzero(run_stop - run_start + 1 >= min_points)
        for r in keep.tolist():
            j, k = int(run_start[r]), int(run_stop[r])
            # From the last repeat of the first value to the first repeat of the last value.
            found.append(("up" if up[j] else "down", list(range(int(last[j]), int(first[k]) + 1))))
    return found


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
    finite = np.isfinite(x)
    n_aside = 0
    if set_aside is not None:
        aside = np.asarray(set_aside, dtype=bool)
        if aside.shape != x.shape:
            raise StatsError(
                f"set_aside must give one true/false per point ({n}), got {aside.size}"
            )
        n_aside = int((aside & finite).sum())
        finite = finite & ~aside
    n_finite = int(finite.sum())
    if n_finite == 0:
        raise StatsError("a run chart needs at least one data point, got none")
    notes: list[str] = [f"Rules used: {RULE_SET_LABELS[rule_set]}."]
    if median is None:
        centre = float(np.median(x[finite]))
    else:
        centre = float(median)
        if not math.isfinite(centre):
            raise StatsError("the reference median must be a finite number")
        notes.append(f"Points are judged against a fixed median of {_sig(centre)}.")
    if n_finite + n_aside < n:
        k = n - n_finite - n_aside
        notes.append(f"{_count(k, 'missing value')} {_are(k)} left out of the analysis.")
    if n_aside:
        notes.append(
            f"{_count(n_aside, 'point')} set aside {_are(n_aside)} left out of the "
            "runs and crossings."
        )

    useful_mask = finite & (x != centre)
    useful_idx = np.flatnonzero(useful_mask)
    n_useful = int(len(useful_idx))
    on_median = n_finite - n_useful
    if on_median:
        notes.append(
            f"{_count(on_median, 'point')} {'lies' if on_median == 1 else 'lie'} exactly on the "
            f"median; {'it is' if on_median == 1 else 'they are'} not counted in runs "
            "or crossings."
        )
    sides = np.where(x[useful_idx] > centre, 1, -1)
    runs = _runs_of_sides(useful_idx, sides)
    longest = runs.longest
    crossings = max(len(runs) - 1, 0)
    n_runs = len(runs)
    all_useful = tuple(useful_idx.tolist())

    if n_useful < MIN_RELIABLE_POINTS:
        notes.append(
            f"Only {_count(n_useful, 'point')} {_are(n_useful)} off the median; run-chart rules "
            "need at least "
            f"{MIN_RELIABLE_POINTS} to be reliable, so treat any result with caution."
        )

    signals: list[Signal] = []
    longest_limit: int | None
    crossings_limit: int | None = None
    runs_limits: tuple[int, int] | None = None

    def side_word(s: int) -> str:
        return "above" if s > 0 else "below"

    if rule_set == "anhoj":
        if n_useful >= 1:
            longest_limit, crossings_limit = anhoj_limits(n_useful)
        else:
            longest_limit = None
        if longest_limit is not None:
            for s, idx in runs.at_least(longest_limit + 1):
                if len(idx) > longest_limit:
                    signals.append(
                        Signal(
                            rule="unusually-long-run",
                            description=(
                                f"{len(idx)} points in a row {side_word(s)} the median; more than "
                                f"{longest_limit} in a row is unlikely by chance"
                            ),
                            indices=tuple(idx),
                            side=side_word(s),
                        )
                    )
        if crossings_limit is not None and crossings < crossings_limit:
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
    else:
        longest_limit = PERLA_SHIFT_LENGTH
        for s, idx in runs.at_least(PERLA_SHIFT_LENGTH):
            if len(idx) >= PERLA_SHIFT_LENGTH:
                signals.append(
                    Signal(
                        rule="shift",
                        description=(
                            f"shift: {len(idx)} points in a row {side_word(s)} the median "
                            f"({PERLA_SHIFT_LENGTH} or more signals)"
                        ),
                        indices=tuple(idx),
                        side=side_word(s),
                    )
                )
        for direction, idx in _trends(x, PERLA_TREND_LENGTH):
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
        if n_useful >= 2:
            runs_limits = perla_runs_limits(n_useful)
            low, high = runs_limits
            if n_runs <= low:
                signals.append(
                    Signal(
                        rule="too-few-runs",
                        description=(
                            f"too few runs: {_count(n_runs, 'run')} where {low} or fewer is unlikely by "
                            f"chance for {n_useful} points"
                        ),
                        indices=all_useful,
                    )
                )
            elif n_runs >= high:
                signals.append(
                    Signal(
                        rule="too-many-runs",
                        description=(
                            f"too many runs: {n_runs} runs where {high} or more is unlikely by "
                            f"chance for {n_useful} points"
                        ),
                        indices=all_useful,
                    )
                )
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
        longest_run=int(longest),
        longest_run_limit=longest_limit,
        crossings=int(crossings),
        crossings_limit=crossings_limit,
        runs=int(n_runs),
        runs_limits=runs_limits,
        signals=tuple(signals),
        notes=tuple(notes),
    )


def shift_against(
    values: Sequence[float] | np.ndarray,
    reference_median: float,
    rule_set: str = "anhoj",
) -> RunChartAnalysis:
    """Judge (after-phase) values against a fixed reference median, e.g. the baseline median.

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
