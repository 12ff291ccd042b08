"""The machinery every Shewhart chart shares: input checks, fitting by period, limits per point.

Each chart family has its own module (individuals, subgroups, rates, counts); what they have in
common lives here, so that a stage, a set-aside point or a degenerate fit is handled the same way
on every chart. Which points are successive observations (for moving ranges) is in neighbours.

Charts and the sources of their formulas (all from memory unless a test says otherwise; see
docs/methods.md §2):

- individuals and moving range, X-mR: Montgomery, *Introduction to Statistical Quality Control*
  section 6.4; Wheeler & Chambers, *Understanding Statistical Process Control*; NIST/SEMATECH
  e-Handbook 6.3.2.2. Sigma is the average moving range of two divided by d2(2), never the
  overall standard deviation (which includes the very shifts the chart is meant to find).
- Xbar-R and Xbar-S: Montgomery sections 6.2-6.3 (variable subgroup size: pooled s, limits that
  step with n); ASTM E2587.
- p, np, c, u: Montgomery chapter 7; NIST/SEMATECH e-Handbook 6.3.3.
- Laney p' and u': Laney, D.B. (2002) "Improved control charts for attributes", *Quality
  Engineering* 14(4):531-537.

Common arguments
----------------
``stage``
    integer stage number per plotted point (0 = baseline); default all 0.
``limits``
    ``"baseline"``: the limits are fitted on the stage-0 points and carried forward unchanged
    over later stages (if no point is in stage 0, the lowest stage is the baseline and a note
    says so). ``"per-period"``: each stage gets its own fit, so the limits step at each change
    of stage.
``sigma_multiple``
    k in centre +- k sigma; 3 by default.

Degenerate data (stated behaviour, never a silent NaN)
------------------------------------------------------
- Empty input, negative counts, defectives above the number checked, non-finite values, sizes
  that do not match: :class:`StatsError` whose message states the requirement.
- One point on an individuals chart: :class:`StatsError` ("requires at least two data points").
  The same applies to any baseline fit that has too little data. With ``"per-period"`` a later
  stage that is too short to fit gets no limits (nan) and a note; at least one stage must fit.
- Zero sigma (all fitted values equal): the limits collapse onto the centre line and a note
  says so.
- A subgroup of one value in an Xbar chart: its mean is plotted, but it has no range or standard
  deviation, so it is left out of R-bar / s-bar and plotted as nan on the R / S chart (note).
- p or u chart with nothing checked (n = 0 or area 0): the point is nan, left out of the fit,
  and a note lists how many were dropped.
- Laney chart with fewer than 3 usable points in a fit: falls back to the classic p / u chart
  for that fit (sigma_z = 1) with a note.

Moving ranges never span a change of period or a gap: the moving range at the first point of a
new stage, or at the first point after a gap in the periods (``segment``), is undefined -- not
plotted (nan) and not used -- and a fit uses only moving ranges between consecutive points of
its own fitted set with no change of period or segment between them.

``set_aside``
    optional boolean mask of points set aside: an assignable cause was found and removed there,
    so they are left out of every fit, the practice of revising trial limits (Montgomery,
    *Introduction to Statistical Quality Control*, on phase I control charts, from memory). They
    keep their place on the chart, are never judged by the signal rules (``rules`` skips them)
    and the chart's ``set_aside`` carries the mask. A moving range that involves a set-aside
    point is no moving range of the process without that cause: it is plotted (and set aside on
    the moving-range chart) but never enters the sigma estimate, and the points either side of
    a set-aside point do not form a moving range either (they are not successive observations).

``segment`` (individuals and Laney charts)
    optional segment number per point, as a rolled-up series numbers its runs of periods: a new
    segment starts after one or more missing periods. Two points either side of a gap are not
    neighbours, so their difference is no moving range (NIST/SEMATECH e-Handbook 6.3.2.2 and
    Montgomery section 6.4 define MR_i = |x_i - x_(i-1)| for successive observations).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, fields
from typing import Any

import numpy as np

from ..codes import LimitMode
from ..results import ControlChart, StatsError

LIMIT_MODES = LimitMode.codes()


class TooFew(Exception):
    """A fit group has too little data; becomes StatsError or a per-stage note."""


# --------------------------------------------------------------------------------------------
# input checks and fitting machinery


def as_float_array(values: Any, what: str) -> np.ndarray:
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise StatsError(f"{what} must be numbers") from exc
    if arr.ndim == 0:
        arr = arr.reshape(1)
    if arr.ndim != 1:
        raise StatsError(f"{what} must be a one-dimensional sequence, got shape {arr.shape}")
    if arr.size == 0:
        raise StatsError(f"{what} must not be empty")
    if not np.all(np.isfinite(arr)):
        raise StatsError(f"{what} must be finite numbers; remove missing values first")
    return arr


def as_counts(values: Any, what: str) -> np.ndarray:
    arr = as_float_array(values, what)
    if np.any(arr < 0):
        raise StatsError(f"{what} must not be negative")
    if np.any(arr != np.round(arr)):
        raise StatsError(f"{what} must be whole numbers")
    return arr


def check_common(m: int, stage: Any, limits: str, sigma_multiple: float) -> np.ndarray:
    if limits not in LIMIT_MODES:
        raise StatsError(f"limits must be one of {', '.join(LIMIT_MODES)}; got {limits!r}")
    if not (isinstance(sigma_multiple, (int, float)) and math.isfinite(sigma_multiple)) or (
        sigma_multiple <= 0
    ):
        raise StatsError(f"sigma_multiple must be a positive number, got {sigma_multiple!r}")
    if stage is None:
        return np.zeros(m, dtype=int)
    st = np.asarray(stage)
    if st.ndim != 1 or st.size != m:
        raise StatsError(f"stage must give one stage number per point ({m}), got {st.size}")
    if st.size and not np.all(np.asarray(st, dtype=float) == np.round(np.asarray(st, dtype=float))):
        raise StatsError("stage numbers must be whole numbers")
    return st.astype(int)


@dataclass
class Group:
    stage: int
    fit: np.ndarray  # points used for the fit (already restricted to usable points)
    apply: np.ndarray  # points that get this fit's limits
    result: Any = None


def fit_groups(
    stage: np.ndarray,
    limits: str,
    usable: np.ndarray,
    fit: Callable[[np.ndarray], Any],
    notes: list[str],
) -> list[Group]:
    """Run ``fit`` on each fit group and return the groups with their results."""
    stages = sorted(set(stage.tolist()))
    groups: list[Group] = []
    if limits == "baseline":
        base = 0 if 0 in stages else stages[0]
        if base != 0:
            notes.append(f"No point is in stage 0, so stage {base} is used as the baseline.")
        groups.append(Group(base, (stage == base) & usable, np.ones_like(usable)))
    else:
        groups = [Group(s, (stage == s) & usable, stage == s) for s in stages]
    for g in groups:
        try:
            g.result = fit(g.fit)
        except TooFew as exc:
            if limits == "baseline":
                raise StatsError(f"the baseline (stage {g.stage}) {exc}") from None
            notes.append(f"Stage {g.stage} {exc}; no limits are drawn for it.")
            g.result = None
    if all(g.result is None for g in groups):
        raise StatsError("no stage has enough data to compute control limits")
    return groups


def counts_and_exposure(
    counts: Any, exposure: Any, proportion: bool
) -> tuple[np.ndarray, np.ndarray]:
    """A rate chart's counts and exposures (number checked, or area of opportunity) as checked
    arrays of one length; defectives no more than the number checked."""
    d = as_counts(counts, "counts")
    what = "sizes (number checked)" if proportion else "areas of opportunity"
    if proportion:
        a = as_counts(exposure, what)
    else:
        a = as_float_array(exposure, what)
        if np.any(a < 0):
            raise StatsError("areas of opportunity must not be negative")
    if a.size != d.size:
        raise StatsError(f"counts and {what} must have the same length ({d.size} vs {a.size})")
    if proportion and np.any(d > a):
        bad = positions(d > a)
        raise StatsError(
            f"defectives cannot exceed the number checked (positions {bad}); "
            "each count must be between 0 and its size"
        )
    return d, a


def check_aside(set_aside: Any, m: int) -> np.ndarray | None:
    """The set-aside mask as booleans, or None when no point is set aside."""
    if set_aside is None:
        return None
    a = np.asarray(set_aside)
    if a.ndim != 1 or a.size != m:
        raise StatsError(f"set_aside must give one true/false per point ({m}), got {a.size}")
    a = a.astype(bool)
    return a if a.any() else None


def aside_note(aside: np.ndarray | None, ranges: bool) -> list[str]:
    """How the points set aside were handled, where it is not plain from their being left out
    (the pages list them and their reasons themselves)."""
    if aside is None or not ranges:
        return []
    return ["Moving ranges that involve a point set aside are not used for the limits."]


def fill(groups: list[Group], m: int, per_point: Callable[[Any, np.ndarray], tuple]) -> tuple:
    """Fill centre and sigma arrays from each group's fit (nan where no fit applies)."""
    centre = np.full(m, np.nan)
    sigma = np.full(m, np.nan)
    for g in groups:
        if g.result is None:
            continue
        idx = np.flatnonzero(g.apply)
        c, s = per_point(g.result, idx)
        centre[idx] = c
        sigma[idx] = s
    return centre, sigma


def limit_lines(
    centre: np.ndarray,
    sigma: np.ndarray,
    k: float,
    floor: float | None = None,
    cap: np.ndarray | float | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    lower = centre - k * sigma
    upper = centre + k * sigma
    if floor is not None:
        lower = np.where(np.isnan(lower), np.nan, np.maximum(lower, floor))
    if cap is not None:
        upper = np.where(np.isnan(upper), np.nan, np.minimum(upper, cap))
    return lower, upper


def zero_sigma_note(groups: list[Group], get_sigma: Callable[[Any], float], what: str) -> list[str]:
    out = []
    for g in groups:
        if g.result is not None and get_sigma(g.result) == 0:
            out.append(
                f"The {what} of the fit for stage {g.stage} is zero, so the limits collapse onto "
                "the centre line."
            )
    return out


def base_result(groups: list[Group]) -> Any:
    for g in groups:
        if g.result is not None:
            return g.result
    return None  # pragma: no cover - fit_groups guarantees one


def fitted_mask(groups: list[Group], m: int) -> np.ndarray:
    """The points some fit was computed from (a stage without a fit adds none)."""
    fitted = np.zeros(m, dtype=bool)
    for g in groups:
        if g.result is not None:
            fitted |= g.fit
    return fitted


def exact_mean(values: np.ndarray, weights: np.ndarray | None = None) -> float:
    """Mean that returns the common value exactly when all values are equal.

    Floating-point summation can put the mean of identical values a hair away from them, which
    would make every point of a zero-sigma chart fall "beyond" the collapsed limits.
    """
    if values.size and np.all(values == values[0]):
        return float(values[0])
    if weights is None:
        return float(np.mean(values))
    return float(np.sum(weights * values) / np.sum(weights))


def positions(mask: np.ndarray) -> str:
    """Positions for sentences read by people: counted from 1 (the first subgroup is 1)."""
    idx = (np.flatnonzero(mask) + 1).tolist()
    shown = ", ".join(str(i) for i in idx[:10])
    return shown + (", ..." if len(idx) > 10 else "")


def read_only(chart: ControlChart) -> ControlChart:
    """``chart`` (and its companion) with every array made read-only, where the chart is made.

    The pages' memos (``steadyline.memo.by_identity``) and the serialiser find results again by
    identity and rely on them never changing after they are computed; a later write now raises
    instead of silently changing a figure already drawn or written. The arrays are the chart's
    own (copies of the input, never the caller's), so no input is changed.
    """
    for f in fields(chart):
        v = getattr(chart, f.name)
        if isinstance(v, np.ndarray):
            v.setflags(write=False)
    if chart.secondary is not None:
        read_only(chart.secondary)
    return chart
