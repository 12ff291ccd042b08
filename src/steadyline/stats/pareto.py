"""Pareto analysis: totals by category, largest first, with cumulative percentages.

Definitions used here:
- Categories are compared as text (``str(category)``). Totals are counts of observations, or
  sums of ``weights`` (e.g. cost or minutes lost) when given; weights must not be negative.
- Order: descending total; ties are broken by category name so the result is deterministic.
  A catch-all category (``other_label``, "Other" by default) always comes last, whether it is
  in the data or made by collapsing the tail.
- ``cumulative_percent`` is computed from the running sum divided by the grand total, so the
  last value is exactly 100 and the sequence never decreases.
- ``vital_few``: rank the real categories (the catch-all excluded) by total, largest first,
  ties by name; the vital few are the smallest leading set of them whose share of the grand
  total reaches at least ``threshold`` percent. If even all of them do not reach it (because
  the catch-all is large), all of them with a non-zero total are listed. The 80% threshold is Juran's heuristic
  (from memory), not a law.
- ``max_bars`` limits the number of bars including the catch-all: the largest
  ``max_bars − 1`` categories are kept and the rest are added into the catch-all.
- A grand total of zero (e.g. a period with no defects) gives percentages of 0 and no vital few.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

import numpy as np

from .results import Pareto, StatsError


def _totals(categories: Iterable[object], weights: Sequence[float] | None) -> dict[str, float]:
    cats = [str(c) for c in categories]
    if weights is None:
        w = np.ones(len(cats))
    else:
        w = np.asarray(weights, dtype=float)
        if w.ndim != 1 or len(w) != len(cats):
            raise StatsError(
                f"a Pareto needs one weight per category entry, got {w.size} weights for "
                f"{len(cats)} entries"
            )
        if not np.all(np.isfinite(w)):
            raise StatsError("Pareto weights must be finite numbers")
        if np.any(w < 0):
            raise StatsError("Pareto weights must not be negative")
    totals: dict[str, float] = {}
    for c, v in zip(cats, w.tolist(), strict=True):
        totals[c] = totals.get(c, 0.0) + float(v)
    return totals


def _ranked(totals: dict[str, float], exclude: str | None = None) -> list[str]:
    return sorted((c for c in totals if c != exclude), key=lambda c: (-totals[c], c))


# Totals from here on take the share before multiplying by 100 (the product would overflow).
_HUGE = 1e300


def _percent(part, whole: float):
    """100 * part / whole (scalars or arrays): rounded once for whole counts (exact products),
    the share taken first for totals near the float limit, where the product would overflow."""
    return 100.0 * part / whole if whole < _HUGE else part / whole * 100.0


def _vital_few(totals: dict[str, float], other_label: str, threshold: float) -> tuple[str, ...]:
    grand = sum(totals.values())
    if grand <= 0:
        return ()
    ranked = [c for c in _ranked(totals, exclude=other_label) if totals[c] > 0]
    running = 0.0
    chosen: list[str] = []
    for c in ranked:
        running += totals[c]
        chosen.append(c)
        if _percent(running, grand) >= threshold - 1e-9:
            break
    return tuple(chosen)


def _build(
    order: list[str], totals: dict[str, float], vital: tuple[str, ...], threshold: float
) -> Pareto:
    counts = np.array([totals[c] for c in order], dtype=float)
    running = np.cumsum(counts)
    grand = float(running[-1]) if len(running) else 0.0
    if grand > 0:
        percent = _percent(counts, grand)
        cumulative = _percent(running, grand)
        cumulative[-1] = 100.0
        cumulative = np.maximum.accumulate(cumulative)
    else:
        percent = np.zeros(len(counts))
        cumulative = np.zeros(len(counts))
    return Pareto(
        categories=tuple(order),
        counts=tuple(float(v) for v in counts),
        percent=tuple(float(v) for v in percent),
        cumulative_percent=tuple(float(v) for v in cumulative),
        total=grand,
        vital_few=vital,
        threshold=float(threshold),
    )


def _check_threshold(threshold: float) -> None:
    if not (0 < threshold <= 100):
        raise StatsError(f"the Pareto threshold must be above 0 and at most 100, got {threshold}")


def pareto(
    categories: Sequence[object],
    weights: Sequence[float] | None = None,
    threshold: float = 80.0,
    max_bars: int | None = None,
    other_label: str = "Other",
) -> Pareto:
    """Pareto of ``categories`` (one entry per observation), optionally weighted."""
    _check_threshold(threshold)
    totals = _totals(categories, weights)
    if not totals:
        raise StatsError("a Pareto needs at least one category entry, got none")
    vital = _vital_few(totals, other_label, threshold)
    ranked = _ranked(totals, exclude=other_label)
    if max_bars is not None:
        if max_bars < 2:
            raise StatsError(f"max_bars must be at least 2 (one category and '{other_label}')")
        n_bars = len(ranked) + (1 if other_label in totals else 0)
        if n_bars > max_bars:
            keep = ranked[: max_bars - 1]
            tail = ranked[max_bars - 1 :]
            collapsed = totals.get(other_label, 0.0) + sum(totals[c] for c in tail)
            totals = {c: totals[c] for c in keep}
            totals[other_label] = collapsed
            ranked = keep
    order = ranked + ([other_label] if other_label in totals else [])
    return _build(order, totals, vital, threshold)


def pareto_in_order(
    categories: Sequence[object],
    weights: Sequence[float] | None,
    order: Sequence[str],
    threshold: float = 80.0,
    other_label: str = "Other",
) -> Pareto:
    """Pareto with a fixed category order, e.g. the baseline order for every later period.

    Categories in ``order`` that do not occur get a total of 0. Categories that occur but are
    not in ``order`` are added into ``other_label`` when it is in ``order``; otherwise they are
    an error. ``vital_few`` follows the module definition (ranked by this period's totals).
    """
    _check_threshold(threshold)
    order = [str(c) for c in order]
    if not order:
        raise StatsError("pareto_in_order needs a non-empty category order")
    if len(set(order)) != len(order):
        raise StatsError("the category order lists a category more than once")
    raw = _totals(categories, weights)
    totals = {c: 0.0 for c in order}
    unknown = []
    for c, v in raw.items():
        if c in totals:
            totals[c] += v
        elif other_label in totals:
            totals[other_label] += v
        else:
            unknown.append(c)
    if unknown:
        raise StatsError(
            "categories not in the given order and no '"
            + other_label
            + "' bar to put them in: "
            + ", ".join(sorted(unknown))
        )
    vital = _vital_few(totals, other_label, threshold)
    return _build(order, totals, vital, threshold)
