"""Signal (special-cause) rules applied to any :class:`ControlChart`.

Rule sets and their sources:

- ``"western-electric"`` (the default): Western Electric, *Statistical Quality Control Handbook*
  (1956), from memory -- a point beyond the limits; 2 of 3 beyond 2σ on one side; 4 of 5 beyond
  1σ on one side; 8 in a row on one side of the centre line.
- ``"nelson"``: Nelson, L.S. (1984) "The Shewhart control chart -- tests for special causes",
  *Journal of Quality Technology* 16(4):237-239, from memory -- the four above with the run
  lengthened to 9, plus 6 in a row steadily rising or falling, 14 alternating up and down,
  15 in a row within 1σ, and 8 in a row beyond 1σ.
- ``"limits-only"``: only the point-beyond-the-limits test.

Zones are measured per point as z = (value - centre) / sigma, using the chart's own per-point
centre and sigma, so stepped limits (variable n, per-period limits) work unchanged. The
beyond-limits test compares with the chart's drawn limits (which may be truncated at 0 or 1).

Conventions (explicit, see the constants below):

- "beyond kσ" is strict: |z| > k. A point exactly at 2σ is not beyond 2σ; "within 1σ" is
  |z| <= 1.
- A point exactly on the centre line is on neither side: it breaks a run on one side.
- Equal consecutive values (ties) break a steady rise or fall and an up-and-down alternation.
- Points whose value, centre or sigma is nan (no limits, dropped points, the first moving
  range) are skipped: they are left out of the sequence and patterns join across them.
- Patterns never span a change of period; each stage is examined on its own.
- The "within 1σ" and "beyond 1σ" runs of the Nelson set count points on either side of the
  centre line; they do not require both sides to appear.
- Overlapping detections of the same rule and side are merged into one signal whose indices
  are all the points taking part (e.g. a run of 11 on one side is one signal of 11 points).
  For the "k of m" rules the indices are the points beyond the zone, not the whole window.
- Dispersion charts (mR, R, S, the chart's ``secondary``) get only the beyond-limits test:
  their plotted statistic is skewed, and many authors apply only the beyond-limits test to R,
  S and mR charts (from memory; see also docs/methods.md §3).
- Attribute charts (p, np, c, u, Laney) get the full rule set. The zone tests assume a roughly
  normal plotted statistic, which holds when the expected count per point is not small; this
  is our choice, stated here so that a page can say it.
- With zero sigma (collapsed limits) every point off the centre line counts as beyond every
  zone.

Example
-------
>>> import numpy as np
>>> from steadyline.stats.control import individuals
>>> x = np.r_[np.tile([9.0, 11.0], 10), np.full(8, 10.5)]
>>> [s.rule for s in detect_signals(individuals(x))]
['run-of-8-one-side']
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from .codes import SignalRules
from .results import ControlChart, Signal, StatsError

DEFAULT_RULE_SET = SignalRules.WESTERN_ELECTRIC.value

# Conventions, as constants so that pages and tests can refer to them.
ON_CENTRE_BREAKS_RUN = True
TIES_BREAK_TREND = True
BEYOND_IS_STRICT = True
NAN_POINTS_SKIPPED = True
PATTERNS_SPAN_STAGES = False
DISPERSION_CHART_RULES = ("beyond-limits",)


@dataclass(frozen=True)
class _Rule:
    key: str
    description: str
    test: str  # "limits", "k-of-m", "run-side", "trend", "alternate", "within", "beyond-all"
    length: int = 1  # points in the pattern (m for k-of-m)
    count: int = 1  # k for k-of-m
    zone: float = 0.0  # sigma multiple for zone tests


_RULES = {
    r.key: r
    for r in (
        _Rule("beyond-limits", "a point outside the control limits", "limits"),
        _Rule(
            "two-of-three-beyond-2-sigma",
            "2 of 3 points in a row more than 2σ from the centre line, on the same side",
            "k-of-m",
            length=3,
            count=2,
            zone=2.0,
        ),
        _Rule(
            "four-of-five-beyond-1-sigma",
            "4 of 5 points in a row more than 1σ from the centre line, on the same side",
            "k-of-m",
            length=5,
            count=4,
            zone=1.0,
        ),
        _Rule(
            "run-of-8-one-side",
            "8 points in a row on the same side of the centre line",
            "run-side",
            length=8,
        ),
        _Rule(
            "run-of-9-one-side",
            "9 points in a row on the same side of the centre line",
            "run-side",
            length=9,
        ),
        _Rule(
            "trend-of-6",
            "6 points in a row, each higher than the one before (or each lower)",
            "trend",
            length=6,
        ),
        _Rule(
            "alternating-14",
            "14 points in a row that go up and down in turn",
            "alternate",
            length=14,
        ),
        _Rule(
            "hugging-centre-15",
            "15 points in a row within 1σ of the centre line (limits may be too wide)",
            "within",
            length=15,
            zone=1.0,
        ),
        _Rule(
            "avoiding-centre-8",
            "8 points in a row more than 1σ from the centre line, none close to it",
            "beyond-all",
            length=8,
            zone=1.0,
        ),
    )
}

_SETS: dict[str, tuple[str, ...]] = {
    SignalRules.WESTERN_ELECTRIC.value: (
        "beyond-limits",
        "two-of-three-beyond-2-sigma",
        "four-of-five-beyond-1-sigma",
        "run-of-8-one-side",
    ),
    SignalRules.NELSON.value: (
        "beyond-limits",
        "run-of-9-one-side",
        "trend-of-6",
        "alternating-14",
        "two-of-three-beyond-2-sigma",
        "four-of-five-beyond-1-sigma",
        "hugging-centre-15",
        "avoiding-centre-8",
    ),
    "limits-only": ("beyond-limits",),
}

RULE_SETS: dict[str, tuple[tuple[str, str], ...]] = {
    name: tuple((key, _RULES[key].description) for key in keys) for name, keys in _SETS.items()
}
"""Rule set name -> ((rule key, description), ...), in the order the rules are applied."""

RULE_SET_SOURCES: dict[str, str] = {
    SignalRules.WESTERN_ELECTRIC.value: "Western Electric, Statistical Quality Control Handbook (1956)",
    SignalRules.NELSON.value: "Nelson (1984), Journal of Quality Technology 16(4):237-239",
    "limits-only": "Shewhart's 3-sigma limits alone",
}


def default_rule_set() -> str:
    """The rule set used when none is chosen: ``"western-electric"``."""
    return DEFAULT_RULE_SET


def rule_description(key: str) -> str:
    """Plain-words description of a rule key, e.g. for a legend."""
    try:
        return _RULES[key].description
    except KeyError:
        raise StatsError(f"unknown rule {key!r}; known rules: {', '.join(_RULES)}") from None


# --------------------------------------------------------------------------------------------
# pattern finders on one clean segment (no nan), returning (indices into segment, side)


def _runs(flags: np.ndarray, min_len: int) -> Iterator[tuple[int, int]]:
    """Maximal runs of True of at least ``min_len``: (start, stop) half-open."""
    f = np.asarray(flags, dtype=bool)
    if f.size == 0:
        return iter(())
    edges = np.diff(np.concatenate([[False], f, [False]]).astype(np.int8))
    starts = np.flatnonzero(edges == 1)
    stops = np.flatnonzero(edges == -1)
    keep = stops - starts >= min_len
    return zip(starts[keep].tolist(), stops[keep].tolist(), strict=True)


def _k_of_m(flags: np.ndarray, length: int, count: int) -> list[list[int]]:
    """Groups of flagged points from windows of ``length`` holding ``count`` or more flags.

    Detections whose flagged points overlap are merged (the same as merging every qualifying
    window's set of flagged points when two sets share a point), in linear time.
    """
    n = flags.size
    if n < length:
        return []
    csum = np.concatenate([[0], np.cumsum(flags, dtype=np.int64)])
    window = csum[length:] - csum[:-length]
    starts = np.flatnonzero(window >= count)
    if starts.size == 0:
        return []
    flagged = np.flatnonzero(flags)
    lo = flagged[np.searchsorted(flagged, starts, side="left")]
    hi = flagged[np.searchsorted(flagged, starts + length, side="left") - 1]
    reach = np.maximum.accumulate(hi)
    breaks = np.flatnonzero(lo[1:] > reach[:-1]) + 1
    group_lo = lo[np.concatenate([[0], breaks])]
    group_hi = reach[np.concatenate([breaks - 1, [lo.size - 1]])]
    first = np.searchsorted(flagged, group_lo).tolist()
    after = np.searchsorted(flagged, group_hi, side="right").tolist()
    points = flagged.tolist()
    return [points[a:b] for a, b in zip(first, after, strict=True)]


def _find(
    rule: _Rule, v: np.ndarray, z: np.ndarray, lo: np.ndarray, hi: np.ndarray
) -> list[tuple[list[int], str | None]]:
    n = v.size
    out: list[tuple[list[int], str | None]] = []
    if rule.test == "limits":
        with np.errstate(invalid="ignore"):
            above = ~np.isnan(hi) & (v > hi)
            below = ~above & ~np.isnan(lo) & (v < lo)
        at = np.flatnonzero(above | below)
        sides = np.where(above[at], "above", "below").tolist()
        return [([i], side) for i, side in zip(at.tolist(), sides, strict=True)]
    if rule.test == "k-of-m":
        # each group is sorted and without repeats already (_k_of_m): ordered by its first point
        for side, flags in (("above", z > rule.zone), ("below", z < -rule.zone)):
            out += [(g, side) for g in _k_of_m(flags, rule.length, rule.count)]
        out.sort(key=lambda item: item[0][0])
        return out
    if rule.test == "run-side":
        res: list[tuple[list[int], str | None]] = []
        for side, flags in (("above", z > 0), ("below", z < 0)):
            res += [(list(range(a, b)), side) for a, b in _runs(flags, rule.length)]
        return res
    if rule.test in ("trend", "alternate"):
        if n < 2:
            return []
        d = np.diff(v)
        res = []
        if rule.test == "trend":
            for side, flags in (("up", d > 0), ("down", d < 0)):
                res += [(list(range(a, b + 1)), side) for a, b in _runs(flags, rule.length - 1)]
            return res
        # alternation: consecutive differences of opposite, non-zero sign
        if n < 3:
            return []
        flags = (d[:-1] * d[1:]) < 0  # flag j: points j, j+1, j+2 zig-zag
        return [(list(range(a, b + 2)), None) for a, b in _runs(flags, rule.length - 2)]
    if rule.test == "within":
        return [(list(range(a, b)), None) for a, b in _runs(np.abs(z) <= rule.zone, rule.length)]
    if rule.test == "beyond-all":
        return [(list(range(a, b)), None) for a, b in _runs(np.abs(z) > rule.zone, rule.length)]
    raise AssertionError(rule.test)  # pragma: no cover


def _zscores(chart: ControlChart) -> np.ndarray:
    v = np.asarray(chart.values, dtype=float)
    c = np.asarray(chart.centre, dtype=float)
    s = np.asarray(chart.sigma, dtype=float)
    diff = v - c
    with np.errstate(divide="ignore", invalid="ignore"):
        z = np.where(s > 0, diff / np.where(s > 0, s, 1.0), np.sign(diff) * np.inf)
    z = np.where(diff == 0, 0.0, z)
    return z


def _chart_signals(
    chart: ControlChart, keys: tuple[str, ...], which: str, only_stage: int | None
) -> list[Signal]:
    v = np.asarray(chart.values, dtype=float)
    c = np.asarray(chart.centre, dtype=float)
    s = np.asarray(chart.sigma, dtype=float)
    lo = np.asarray(chart.lower, dtype=float)
    hi = np.asarray(chart.upper, dtype=float)
    stage = np.asarray(chart.stage, dtype=int)
    z = _zscores(chart)
    ok = ~(np.isnan(v) | np.isnan(c) | np.isnan(s))
    if chart.set_aside is not None:
        # a point set aside (its cause found and removed) is not judged, and the points either
        # side of it are judged as neighbours, as around a point with no value
        ok &= ~np.asarray(chart.set_aside, dtype=bool)
    signals: list[Signal] = []
    if v.size == 0:
        return signals
    # a stage is a block of consecutive points with the same number; split at every change
    starts = np.concatenate([[0], np.flatnonzero(stage[1:] != stage[:-1]) + 1])
    stops = np.append(starts[1:], v.size)
    for a, b in zip(starts.tolist(), stops.tolist(), strict=True):
        if only_stage is not None and int(stage[a]) != only_stage:
            continue
        pos = np.flatnonzero(ok[a:b]) + a
        if pos.size == 0:
            continue
        # a block without gaps (the usual case) maps a finding's positions by adding its start
        shift = a if pos.size == b - a else None
        seg = slice(a, b) if shift is not None else pos
        for key in keys:
            rule = _RULES[key]
            desc = rule.description
            for idx, side in _find(rule, v[seg], z[seg], lo[seg], hi[seg]):
                at = (
                    tuple(map(shift.__add__, idx))
                    if shift is not None
                    else tuple(map(pos.item, idx))
                )
                signals.append(Signal(key, desc, at, side, which))
    order = {k: i for i, k in enumerate(keys)}
    signals.sort(key=lambda g: (g.indices[0], order[g.rule], g.side or ""))
    return signals


def detect_signals(
    chart: ControlChart,
    rule_set: str = DEFAULT_RULE_SET,
    only_stage: int | None = None,
) -> tuple[Signal, ...]:
    """All signals of ``rule_set`` on ``chart`` and (beyond-limits only) on its secondary chart.

    ``only_stage`` restricts the search to the points of one stage. Points the chart sets aside
    (``chart.set_aside``) are skipped like points with no value. Signals are sorted by chart
    ("main" first), then by their first point.

    >>> from steadyline.stats.control import c_chart
    >>> [(s.rule, s.indices, s.side) for s in detect_signals(c_chart([3, 4, 5, 4, 3, 20]))]
    [('beyond-limits', (5,), 'above')]
    """
    if rule_set not in _SETS:
        raise StatsError(f"unknown rule set {rule_set!r}; choose one of {', '.join(_SETS)}")
    main = _chart_signals(chart, _SETS[rule_set], "main", only_stage)
    second: list[Signal] = []
    if chart.secondary is not None:
        second = _chart_signals(chart.secondary, DISPERSION_CHART_RULES, "secondary", only_stage)
    return tuple(main + second)
