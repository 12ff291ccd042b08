"""Shewhart control charts as pure functions: arrays in, :class:`ControlChart` out.

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
    says so). ``"per-phase"``: each stage gets its own fit, so the limits step at each change
    of stage.
``sigma_multiple``
    k in centre +- k sigma; 3 by default.

Degenerate data (stated behaviour, never a silent NaN)
------------------------------------------------------
- Empty input, negative counts, defectives above the number checked, non-finite values, sizes
  that do not match: :class:`StatsError` whose message states the requirement.
- One point on an individuals chart: :class:`StatsError` ("requires at least two data points").
  The same applies to any baseline fit that has too little data. With ``"per-phase"`` a later
  stage that is too short to fit gets no limits (nan) and a note; at least one stage must fit.
- Zero sigma (all fitted values equal): the limits collapse onto the centre line and a note
  says so.
- A subgroup of one value in an Xbar chart: its mean is plotted, but it has no range or standard
  deviation, so it is left out of R-bar / s-bar and plotted as nan on the R / S chart (note).
- p or u chart with nothing checked (n = 0 or area 0): the point is nan, left out of the fit,
  and a note lists how many were dropped.
- Laney chart with fewer than 3 usable points in a fit: falls back to the classic p / u chart
  for that fit (sigma_z = 1) with a note.

Moving ranges never span a change of stage or a gap: the moving range at the first point of a
new stage, or at the first point after a gap in the periods (``segment``), is undefined -- not
plotted (nan) and not used -- and a fit uses only moving ranges between consecutive points of
its own fitted set with no change of stage or segment between them.

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

Example
-------
>>> chart = individuals([10.0, 12.0, 11.0, 13.0])
>>> float(chart.centre[0]), round(float(chart.upper[0]), 3)
(11.5, 15.931)
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from steadyline.stats.constants import c4, d2, d3
from steadyline.stats.results import ControlChart, StatsError

LIMIT_MODES = ("baseline", "per-phase")

# Above this subgroup size the range wastes information and an S chart is usually preferred
# (Montgomery section 6.3; common practice).
RANGE_MAX_SUBGROUP = 10


class _TooFew(Exception):
    """A fit group has too little data; becomes StatsError or a per-stage note."""


# --------------------------------------------------------------------------------------------
# input checks and fitting machinery


def _as_float_array(values: Any, what: str) -> np.ndarray:
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


def _as_counts(values: Any, what: str) -> np.ndarray:
    arr = _as_float_array(values, what)
    if np.any(arr < 0):
        raise StatsError(f"{what} must not be negative")
    if np.any(arr != np.round(arr)):
        raise StatsError(f"{what} must be whole numbers")
    return arr


def _check_common(m: int, stage: Any, limits: str, sigma_multiple: float) -> np.ndarray:
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
class _Group:
    stage: int
    fit: np.ndarray  # points used for the fit (already restricted to usable points)
    apply: np.ndarray  # points that get this fit's limits
    result: Any = None


def _fit_groups(
    stage: np.ndarray,
    limits: str,
    usable: np.ndarray,
    fit: Callable[[np.ndarray], Any],
    notes: list[str],
) -> list[_Group]:
    """Run ``fit`` on each fit group and return the groups with their results."""
    stages = sorted(set(stage.tolist()))
    groups: list[_Group] = []
    if limits == "baseline":
        base = 0 if 0 in stages else stages[0]
        if base != 0:
            notes.append(f"No point is in stage 0, so stage {base} is used as the baseline.")
        groups.append(_Group(base, (stage == base) & usable, np.ones_like(usable)))
    else:
        groups = [_Group(s, (stage == s) & usable, stage == s) for s in stages]
    for g in groups:
        try:
            g.result = fit(g.fit)
        except _TooFew as exc:
            if limits == "baseline":
                raise StatsError(f"the baseline (stage {g.stage}) {exc}") from None
            notes.append(f"Stage {g.stage} {exc}; no limits are drawn for it.")
            g.result = None
    if all(g.result is None for g in groups):
        raise StatsError("no stage has enough data to compute control limits")
    return groups


def _check_segment(segment: Any, m: int) -> np.ndarray | None:
    if segment is None:
        return None
    seg = np.asarray(segment)
    if seg.ndim != 1 or seg.size != m:
        raise StatsError(f"segment must give one segment number per point ({m}), got {seg.size}")
    f = np.asarray(seg, dtype=float)
    if seg.size and not np.all(np.isfinite(f) & (f == np.round(f))):
        raise StatsError("segment numbers must be whole numbers")
    return f.astype(np.int64)


def _check_aside(set_aside: Any, m: int) -> np.ndarray | None:
    """The set-aside mask as booleans, or None when no point is set aside."""
    if set_aside is None:
        return None
    a = np.asarray(set_aside)
    if a.ndim != 1 or a.size != m:
        raise StatsError(f"set_aside must give one true/false per point ({m}), got {a.size}")
    a = a.astype(bool)
    return a if a.any() else None


def _pair_key(chain: np.ndarray, aside: np.ndarray | None) -> np.ndarray:
    """A number per point that changes at every break of ``chain`` and at every set-aside
    point, so that :func:`_consecutive_pairs` never pairs points across a set-aside one."""
    if aside is None:
        return chain
    return chain + np.cumsum(aside)


def _aside_note(aside: np.ndarray | None, ranges: bool) -> list[str]:
    """How the points set aside were handled, where it is not plain from their being left out
    (the pages list them and their reasons themselves)."""
    if aside is None or not ranges:
        return []
    return ["Moving ranges that involve a point set aside are not used for the limits."]


def _chains(stage: np.ndarray, segment: np.ndarray | None) -> tuple[np.ndarray, np.ndarray]:
    """(break, chain): ``break`` marks each point that starts a new stage or segment (its moving
    range is undefined); ``chain`` numbers the runs of points between breaks."""
    brk = np.zeros(stage.size, dtype=bool)
    brk[1:] = stage[1:] != stage[:-1]
    if segment is not None:
        brk[1:] |= segment[1:] != segment[:-1]
    return brk, np.cumsum(brk)


def _consecutive_pairs(mask: np.ndarray, stage: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Index pairs (a, b) of consecutive points of ``mask`` with no change of ``stage`` (a
    stage or a chain number) between."""
    idx = np.flatnonzero(mask)
    if idx.size < 2:
        return idx[:0], idx[:0]
    a, b = idx[:-1], idx[1:]
    # a pair is valid only if every point from a to b is in the same stage
    change = np.concatenate([[0], np.cumsum(stage[1:] != stage[:-1])])
    ok = change[a] == change[b]
    return a[ok], b[ok]


def _fill(groups: list[_Group], m: int, per_point: Callable[[Any, np.ndarray], tuple]) -> tuple:
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


def _limits(
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


def _zero_sigma_note(
    groups: list[_Group], get_sigma: Callable[[Any], float], what: str
) -> list[str]:
    out = []
    for g in groups:
        if g.result is not None and get_sigma(g.result) == 0:
            out.append(
                f"The {what} of the fit for stage {g.stage} is zero, so the limits collapse onto "
                "the centre line."
            )
    return out


def _base_result(groups: list[_Group]) -> Any:
    for g in groups:
        if g.result is not None:
            return g.result
    return None  # pragma: no cover - _fit_groups guarantees one


def _mean(values: np.ndarray, weights: np.ndarray | None = None) -> float:
    """Mean that returns the common value exactly when all values are equal.

    Floating-point summation can put the mean of identical values a hair away from them, which
    would make every point of a zero-sigma chart fall "beyond" the collapsed limits.
    """
    if values.size and np.all(values == values[0]):
        return float(values[0])
    if weights is None:
        return float(np.mean(values))
    return float(np.sum(weights * values) / np.sum(weights))


def _positions(mask: np.ndarray) -> str:
    """Positions for sentences read by people: counted from 1 (the first subgroup is 1)."""
    idx = (np.flatnonzero(mask) + 1).tolist()
    shown = ", ".join(str(i) for i in idx[:10])
    return shown + (", ..." if len(idx) > 10 else "")


# --------------------------------------------------------------------------------------------
# individuals and moving range


@dataclass(frozen=True)
class _XmrFit:
    mean: float
    mr_bar: float
    sigma: float
    n_ranges: int


def individuals(
    values: Sequence[float] | np.ndarray,
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    segment: Sequence[int] | np.ndarray | None = None,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Individuals chart with its moving-range chart (``secondary``).

    Sigma = average moving range of two / d2(2), d2(2) = 2/sqrt(pi) = 1.1284. The X chart's
    centre line is the mean of the fitted values; the mR chart's centre line is MR-bar with
    UCL = D4(2)·MR-bar (3.267·MR-bar) and LCL = 0. With ``segment``, the moving range at the
    first point after a gap is undefined (nan) and left out of MR-bar.

    >>> ch = individuals([49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1])
    >>> round(float(ch.centre[0]), 2), round(float(ch.secondary.centre[1]), 4)
    (50.81, 1.8778)
    """
    x = _as_float_array(values, "values")
    m = x.size
    if m < 2:
        raise StatsError(f"an individuals chart requires at least two data points, got {m}")
    k = float(sigma_multiple)
    st = _check_common(m, stage, limits, k)
    notes: list[str] = []

    seg = _check_segment(segment, m)
    aside = _check_aside(set_aside, m)
    boundary, chain = _chains(st, seg)
    pair_key = _pair_key(chain, aside)
    mr = np.full(m, np.nan)
    mr[1:] = np.abs(np.diff(x))
    mr[boundary] = np.nan
    if (st[1:] != st[:-1]).any():
        notes.append("Moving ranges that span a change of stage are not plotted or used.")
    if seg is not None and (seg[1:] != seg[:-1]).any():
        notes.append("Moving ranges that span a gap in the periods are not plotted or used.")
    mr_fitted = np.zeros(m, dtype=bool)

    def fit(mask: np.ndarray) -> _XmrFit:
        a, b = _consecutive_pairs(mask, pair_key)
        if a.size < 1:
            raise _TooFew(
                "needs at least two consecutive points to compute a moving range, "
                f"got {int(mask.sum())} point{'' if int(mask.sum()) == 1 else 's'}"
            )
        mr_bar = float(np.mean(np.abs(x[b] - x[a])))
        mr_fitted[b] = True
        return _XmrFit(_mean(x[mask]), mr_bar, mr_bar / d2(2), int(a.size))

    notes += _aside_note(aside, ranges=True)
    usable = np.ones(m, dtype=bool) if aside is None else ~aside
    groups = _fit_groups(st, limits, usable, fit, notes)
    notes += _zero_sigma_note(groups, lambda r: r.sigma, "average moving range")
    mr_aside = None
    if aside is not None:  # the range at i spans points i - 1 and i
        mr_aside = aside.copy()
        mr_aside[1:] |= aside[:-1]

    centre, sigma = _fill(groups, m, lambda r, idx: (r.mean, r.sigma))
    lower, upper = _limits(centre, sigma, k)

    ratio = d3(2) / d2(2)
    mr_centre, mr_sigma = _fill(groups, m, lambda r, idx: (r.mr_bar, ratio * r.mr_bar))
    mr_lower, mr_upper = _limits(mr_centre, mr_sigma, k, floor=0.0)
    fitted = np.zeros(m, dtype=bool)
    for g in groups:
        if g.result is not None:
            fitted |= g.fit

    base = _base_result(groups)
    extras: dict[str, float | str | None] = {
        "mean": base.mean,
        "average_moving_range": base.mr_bar,
        "moving_ranges_used": float(base.n_ranges),
    }
    if limits == "per-phase":
        for g in groups:
            extras[f"process_sigma_stage_{g.stage}"] = None if g.result is None else g.result.sigma
    method = "average moving range of two / d2(2) (d2(2) = 1.1284)"
    secondary = ControlChart(
        kind="moving-range",
        label="Moving range (mR)",
        values=mr,
        centre=mr_centre,
        lower=mr_lower,
        upper=mr_upper,
        sigma=mr_sigma,
        process_sigma=base.sigma,
        sigma_method=method,
        fitted=mr_fitted,
        stage=st.copy(),
        notes=("The first point has no moving range.",),
        set_aside=mr_aside,
    )
    return ControlChart(
        kind="individuals",
        label="Individuals (X)",
        values=x.copy(),
        centre=centre,
        lower=lower,
        upper=upper,
        sigma=sigma,
        process_sigma=base.sigma,
        sigma_method=method,
        fitted=fitted,
        stage=st,
        secondary=secondary,
        extras=extras,
        notes=tuple(notes),
        set_aside=aside,
    )


# --------------------------------------------------------------------------------------------
# subgroup charts


def _subgroups(subgroups: Sequence[Sequence[float]]) -> tuple[np.ndarray, np.ndarray]:
    """The subgroups' sizes and all their values one subgroup after another; refuses empty
    subgroups and values that are not finite numbers."""
    if isinstance(subgroups, np.ndarray) and subgroups.ndim == 2:
        groups = [np.asarray(r, dtype=float) for r in subgroups]
    elif isinstance(subgroups, list) and all(
        type(g) is np.ndarray and g.dtype == np.float64 and g.ndim == 1 for g in subgroups
    ):
        groups = subgroups  # already float arrays (as the loader makes them)
    else:
        try:
            groups = [np.atleast_1d(np.asarray(g, dtype=float)) for g in subgroups]
        except (TypeError, ValueError) as exc:
            raise StatsError("subgroups must be a list of sequences of numbers") from exc
    if not groups:
        raise StatsError("subgroup charts need at least one subgroup, got none")
    if groups is not subgroups:  # the loader's arrays are one-dimensional (checked above)
        bad = [i for i, g in enumerate(groups) if g.ndim != 1]
        if bad:
            raise StatsError(f"subgroup {bad[0]} is not a flat list of numbers")
    sizes = np.fromiter(map(len, groups), dtype=int, count=len(groups))
    if not sizes.all():
        raise StatsError(
            f"every subgroup needs at least one value; subgroup {int(np.argmin(sizes))} is empty"
        )
    flat = np.concatenate(groups)
    finite = np.isfinite(flat)  # one pass over all values
    if not finite.all():
        i = int(np.searchsorted(np.cumsum(sizes), int(np.argmin(finite)), side="right"))
        raise StatsError(f"subgroup {i} holds a value that is not a finite number")
    return sizes, flat


@dataclass(frozen=True)
class _SubgroupFit:
    grand_mean: float
    sigma: float  # process sigma (within subgroups)
    spread_bar: float  # R-bar (constant n) / s-bar used for the S chart centre line
    constant_n: bool


def _subgroup_chart(
    subgroups: Sequence[Sequence[float]],
    spread: str,
    stage: Any,
    limits: str,
    sigma_multiple: float,
    set_aside: Any = None,
) -> ControlChart:
    sizes, flat = _subgroups(subgroups)
    m = len(sizes)
    k = float(sigma_multiple)
    st = _check_common(m, stage, limits, k)
    aside = _check_aside(set_aside, m)
    n = sizes.astype(float)
    multi = n >= 2
    # Per-subgroup means, ranges and standard deviations in a few vectorised passes (one Python
    # call per subgroup would dominate large files); subgroups are never empty (_subgroups).
    starts = np.concatenate([[0], np.cumsum(sizes)[:-1]]) if m else np.zeros(0, dtype=int)
    means = np.add.reduceat(flat, starts) / n if m else np.zeros(0)
    if spread == "range":
        disp = (
            np.maximum.reduceat(flat, starts) - np.minimum.reduceat(flat, starts)
            if m
            else np.zeros(0)
        )
    else:
        dev = flat - np.repeat(means, sizes)
        with np.errstate(divide="ignore", invalid="ignore"):
            disp = np.sqrt(np.add.reduceat(dev * dev, starts) / (n - 1)) if m else np.zeros(0)
    disp = np.where(multi, disp, np.nan)
    notes: list[str] = []
    if (~multi).any():
        what = "range" if spread == "range" else "standard deviation"
        notes.append(
            f"Subgroups at positions {_positions(~multi)} hold a single value, so they have no "
            f"{what}: they are left out of the {what} chart and of the sigma estimate "
            "(their means are still plotted)."
        )
    if spread == "range" and (n > RANGE_MAX_SUBGROUP).any():
        notes.append(
            f"Some subgroups hold more than {RANGE_MAX_SUBGROUP} values; the range wastes "
            "information there and an Xbar-S chart is usually preferred."
        )
    if np.unique(n[multi]).size > 1:
        notes.append("Subgroup sizes vary, so the limits step with the subgroup size.")

    def fit(mask: np.ndarray) -> _SubgroupFit:
        use = mask & multi
        if not use.any():
            raise _TooFew("has no subgroup of two or more values to estimate sigma from")
        grand = _mean(means[mask], n[mask])
        sizes = n[use].astype(int)
        constant = np.unique(sizes).size == 1
        if spread == "range":
            sizes_u, where = np.unique(sizes, return_inverse=True)
            d2s = np.array([d2(int(v)) for v in sizes_u])[where]
            sigma = float(np.mean(disp[use] / d2s))
            bar = float(np.mean(disp[use]))
        elif constant:
            bar = float(np.mean(disp[use]))
            sigma = bar / c4(int(sizes[0]))
        else:
            dof = np.sum(sizes - 1)
            bar = float(math.sqrt(np.sum((sizes - 1) * disp[use] ** 2) / dof))
            sigma = bar / c4(int(dof) + 1)
        return _SubgroupFit(grand, sigma, bar, constant)

    notes += _aside_note(aside, ranges=False)
    usable = np.ones(m, dtype=bool) if aside is None else ~aside
    groups = _fit_groups(st, limits, usable, fit, notes)
    word = "average range" if spread == "range" else "average standard deviation"
    notes += _zero_sigma_note(groups, lambda r: r.sigma, word)

    def c4n(v: float) -> float:
        return c4(int(v)) if v >= 2 else float("nan")

    def xbar_point(r: _SubgroupFit, idx: np.ndarray) -> tuple:
        if spread == "stdev":
            # Montgomery's form: X-double-bar +- A3(n_i) s-bar, i.e. sigma = s-bar/(c4(n_i) sqrt n_i)
            s = np.array(
                [r.spread_bar / (c4n(v) * math.sqrt(v)) if v >= 2 else r.sigma for v in n[idx]]
            )
            return r.grand_mean, s
        return r.grand_mean, r.sigma / np.sqrt(n[idx])

    def disp_point(r: _SubgroupFit, idx: np.ndarray) -> tuple:
        sizes = n[idx]
        if spread == "range":
            # d2 and d3 looked up once per distinct subgroup size
            sizes_u, where = np.unique(sizes, return_inverse=True)
            d2u = np.array([d2(int(v)) if v >= 2 else np.nan for v in sizes_u])
            d3u = np.array([d3(int(v)) if v >= 2 else np.nan for v in sizes_u])
            return d2u[where] * r.sigma, d3u[where] * r.sigma
        cen = np.where(sizes >= 2, r.spread_bar, np.nan)
        sig = np.array(
            [
                r.spread_bar * math.sqrt(1 - c4n(v) ** 2) / c4n(v) if v >= 2 else np.nan
                for v in sizes
            ]
        )
        return cen, sig

    centre, sigma = _fill(groups, m, xbar_point)
    lower, upper = _limits(centre, sigma, k)
    d_centre, d_sigma = _fill(groups, m, disp_point)
    d_lower, d_upper = _limits(d_centre, d_sigma, k, floor=0.0)
    fitted = np.zeros(m, dtype=bool)
    for g in groups:
        if g.result is not None:
            fitted |= g.fit
    base = _base_result(groups)
    if spread == "range":
        method = "average of subgroup range / d2(n)"
        kind2, label2 = "range", "Subgroup range (R)"
        extras: dict[str, float | str | None] = {"average_range": base.spread_bar}
    else:
        method = (
            "average subgroup standard deviation / c4(n)"
            if base.constant_n
            else "pooled subgroup standard deviation / c4(total degrees of freedom + 1)"
        )
        kind2, label2 = "stdev", "Subgroup standard deviation (S)"
        extras = {"average_stdev": base.spread_bar}
    extras["grand_mean"] = base.grand_mean
    if limits == "per-phase":
        for g in groups:
            extras[f"process_sigma_stage_{g.stage}"] = None if g.result is None else g.result.sigma
    secondary = ControlChart(
        kind=kind2,
        label=label2,
        values=disp,
        centre=d_centre,
        lower=d_lower,
        upper=d_upper,
        sigma=d_sigma,
        process_sigma=base.sigma,
        sigma_method=method,
        fitted=fitted & multi,
        stage=st.copy(),
        sizes=n.copy(),
        set_aside=None if aside is None else aside.copy(),
    )
    return ControlChart(
        kind="xbar",
        label="Subgroup mean (X̄)",
        values=means,
        centre=centre,
        lower=lower,
        upper=upper,
        sigma=sigma,
        process_sigma=base.sigma,
        sigma_method=method,
        fitted=fitted,
        stage=st,
        sizes=n,
        secondary=secondary,
        extras=extras,
        notes=tuple(notes),
        set_aside=aside,
    )


def xbar_r(
    subgroups: Sequence[Sequence[float]],
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Xbar chart with its range chart (``secondary``), for subgroups of 2 to 10 values.

    Sigma = average of R_i / d2(n_i) (= R-bar / d2(n) for a constant size). Xbar limits are
    X-double-bar +- k sigma / sqrt(n_i) (= A2 R-bar for constant n); the R chart has centre
    d2(n_i) sigma and limits centre +- k d3(n_i) sigma, floored at 0 (= D3 R-bar, D4 R-bar).
    Larger subgroups are accepted with a note; unequal sizes give stepped limits.

    >>> ch = xbar_r([[1.0, 2.0, 3.0], [2.0, 3.0, 4.0], [1.0, 3.0, 2.0]])
    >>> round(float(ch.centre[0]), 3), round(float(ch.secondary.centre[0]), 3)
    (2.333, 2.0)
    """
    return _subgroup_chart(subgroups, "range", stage, limits, sigma_multiple, set_aside)


def xbar_s(
    subgroups: Sequence[Sequence[float]],
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Xbar chart with its standard-deviation chart (``secondary``), any subgroup size.

    Constant n: s-bar = mean of the s_i; Xbar limits X-double-bar +- A3 s-bar; S chart
    B3 s-bar .. B4 s-bar around s-bar; sigma = s-bar / c4(n).
    Variable n (Montgomery): X-double-bar = sum n_i xbar_i / sum n_i; s-bar pooled as
    sqrt(sum (n_i-1) s_i^2 / sum (n_i-1)); limits X-double-bar +- A3(n_i) s-bar and
    B3(n_i) s-bar .. B4(n_i) s-bar step with n_i; process sigma = s-bar / c4(sum(n_i-1)+1).
    """
    return _subgroup_chart(subgroups, "stdev", stage, limits, sigma_multiple, set_aside)


# --------------------------------------------------------------------------------------------
# attribute charts


@dataclass(frozen=True)
class _RateFit:
    rate: float  # p-bar or u-bar
    sigma_z: float  # 1 for the classic chart
    laney: bool


def _rate_chart(
    kind: str,
    counts: Any,
    exposure: Any,
    stage: Any,
    limits: str,
    sigma_multiple: float,
    laney: bool,
    segment: Any = None,
    set_aside: Any = None,
) -> ControlChart:
    proportion = kind == "p"
    d = _as_counts(counts, "counts")
    what = "sizes (number checked)" if proportion else "areas of opportunity"
    if proportion:
        a = _as_counts(exposure, what)
    else:
        a = _as_float_array(exposure, what)
        if np.any(a < 0):
            raise StatsError("areas of opportunity must not be negative")
    if a.size != d.size:
        raise StatsError(f"counts and {what} must have the same length ({d.size} vs {a.size})")
    if proportion and np.any(d > a):
        bad = _positions(d > a)
        raise StatsError(
            f"defectives cannot exceed the number checked (positions {bad}); "
            "each count must be between 0 and its size"
        )
    m = d.size
    k = float(sigma_multiple)
    st = _check_common(m, stage, limits, k)
    _brk, chain = _chains(st, _check_segment(segment, m))
    aside = _check_aside(set_aside, m)
    chain = _pair_key(chain, aside)
    notes: list[str] = []
    usable = a > 0
    if (~usable).any():
        nothing = "nothing checked (size 0)" if proportion else "no area of opportunity (0)"
        notes.append(
            f"{int((~usable).sum())} point{'' if int((~usable).sum()) == 1 else 's'} with "
            f"{nothing} {'is' if int((~usable).sum()) == 1 else 'are'} left out (positions "
            f"{_positions(~usable)}): no {'proportion' if proportion else 'rate'} exists for them."
        )
    values = np.full(m, np.nan)
    values[usable] = d[usable] / a[usable]

    def base_sigma(rate: float, idx: np.ndarray) -> np.ndarray:
        with np.errstate(divide="ignore", invalid="ignore"):
            var = rate * (1 - rate) if proportion else rate
            return np.where(usable[idx], np.sqrt(var / np.where(usable[idx], a[idx], 1.0)), np.nan)

    def fit(mask: np.ndarray) -> _RateFit:
        if not mask.any():
            raise _TooFew(f"has no point with a positive {'size' if proportion else 'area'}")
        rate = float(d[mask].sum() / a[mask].sum())
        if not laney:
            return _RateFit(rate, 1.0, False)
        if mask.sum() < 3:
            notes.append(
                f"A Laney chart needs at least 3 usable points per fit; stage "
                f"{int(st[mask][0])} has {int(mask.sum())}, so the classic "
                f"{kind} chart limits are used there."
            )
            return _RateFit(rate, 1.0, False)
        idx = np.flatnonzero(mask)
        s = base_sigma(rate, idx)
        if np.any(s == 0):
            notes.append(
                f"The {'proportion' if proportion else 'rate'} of the fit is "
                f"{rate:g}, so the z-scores of a Laney chart are undefined; the classic "
                f"{kind} chart limits are used."
            )
            return _RateFit(rate, 1.0, False)
        z = np.full(m, np.nan)
        z[idx] = (values[idx] - rate) / s
        pa, pb = _consecutive_pairs(mask, chain)
        if pa.size < 1:
            notes.append("No two consecutive usable points; the classic chart limits are used.")
            return _RateFit(rate, 1.0, False)
        sigma_z = float(np.mean(np.abs(z[pb] - z[pa])) / d2(2))
        return _RateFit(rate, sigma_z, True)

    notes += _aside_note(aside, ranges=False)
    groups = _fit_groups(st, limits, usable if aside is None else usable & ~aside, fit, notes)
    for g in groups:
        r = g.result
        if r is not None and (r.rate == 0 or (proportion and r.rate == 1) or r.sigma_z == 0):
            notes.append(
                f"The fit for stage {g.stage} has zero variation, so the limits collapse onto "
                "the centre line."
            )

    def point(r: _RateFit, idx: np.ndarray) -> tuple:
        return r.rate, base_sigma(r.rate, idx) * r.sigma_z

    centre, sigma = _fill(groups, m, point)
    centre[~usable] = np.nan
    lower, upper = _limits(centre, sigma, k, floor=0.0, cap=1.0 if proportion else None)
    fitted = np.zeros(m, dtype=bool)
    for g in groups:
        if g.result is not None:
            fitted |= g.fit
    base = _base_result(groups)
    used_laney = any(g.result is not None and g.result.laney for g in groups)
    name = "p" if proportion else "u"
    extras: dict[str, float | str | None] = {"p_bar" if proportion else "u_bar": base.rate}
    out_kind = kind
    if laney and used_laney:
        out_kind = f"laney-{kind}"
        extras["sigma_z"] = base.sigma_z if base.laney else None
        if limits == "per-phase":
            for g in groups:
                r = g.result
                extras[f"sigma_z_stage_{g.stage}"] = r.sigma_z if r is not None else None
        method = (
            f"{name}-bar from pooled counts; binomial sigma widened by sigma_z (average moving "
            "range of z-scores / d2(2))"
            if proportion
            else "u-bar from pooled counts; Poisson sigma widened by sigma_z (average moving "
            "range of z-scores / d2(2))"
        )
        label = "Laney p′ chart" if proportion else "Laney u′ chart"
    elif laney:
        method = (
            "binomial" if proportion else "Poisson"
        ) + " sigma (classic chart, Laney fallback)"
        label = "Proportion defective (p)" if proportion else "Defects per unit (u)"
    else:
        method = (
            "binomial sigma sqrt(p-bar(1-p-bar)/n)" if proportion else "Poisson sigma sqrt(u-bar/a)"
        )
        label = "Proportion defective (p)" if proportion else "Defects per unit (u)"
    return ControlChart(
        kind=out_kind,
        label=label,
        values=values,
        centre=centre,
        lower=lower,
        upper=upper,
        sigma=sigma,
        process_sigma=None,
        sigma_method=method,
        fitted=fitted,
        stage=st,
        sizes=a.copy(),
        extras=extras,
        notes=tuple(notes),
        set_aside=aside,
    )


def p_chart(
    counts: Sequence[float] | np.ndarray,
    sizes: Sequence[float] | np.ndarray,
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Proportion-defective chart: p-bar = sum d / sum n (not the mean of the p_i).

    Limits p-bar +- k sqrt(p-bar (1 - p-bar) / n_i) step with n_i; LCL truncated at 0 and UCL
    capped at 1. Points with n = 0 are dropped (nan) with a note.

    >>> ch = p_chart([5, 10], [100, 200])
    >>> round(float(ch.centre[0]), 3), round(float(ch.upper[0]), 4)
    (0.05, 0.1154)
    """
    return _rate_chart(
        "p", counts, sizes, stage, limits, sigma_multiple, laney=False, set_aside=set_aside
    )


def laney_p(
    counts: Sequence[float] | np.ndarray,
    sizes: Sequence[float] | np.ndarray,
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    segment: Sequence[int] | np.ndarray | None = None,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Laney p′ chart (Laney 2002): p chart limits widened by sigma_z.

    z_i = (p_i - p-bar) / sqrt(p-bar(1-p-bar)/n_i); sigma_z = average moving range of the
    fitted z_i / d2(2); limits p-bar +- k sigma_z sqrt(p-bar(1-p-bar)/n_i), within [0, 1].
    ``extras["sigma_z"]`` reports sigma_z (> 1 means more variation than the binomial model).
    Fewer than 3 usable points: the classic p chart with a note. With ``segment``, no moving
    range spans a gap (see the module docstring).
    """
    return _rate_chart(
        "p",
        counts,
        sizes,
        stage,
        limits,
        sigma_multiple,
        laney=True,
        segment=segment,
        set_aside=set_aside,
    )


def u_chart(
    counts: Sequence[float] | np.ndarray,
    areas: Sequence[float] | np.ndarray,
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Defects-per-unit chart: u-bar = sum c / sum a, limits u-bar +- k sqrt(u-bar / a_i).

    The limits step with the area of opportunity a_i; LCL truncated at 0. Areas of 0 are dropped
    (nan) with a note.
    """
    return _rate_chart(
        "u", counts, areas, stage, limits, sigma_multiple, laney=False, set_aside=set_aside
    )


def laney_u(
    counts: Sequence[float] | np.ndarray,
    areas: Sequence[float] | np.ndarray,
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    segment: Sequence[int] | np.ndarray | None = None,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Laney u′ chart: u chart limits widened by sigma_z (see :func:`laney_p`)."""
    return _rate_chart(
        "u",
        counts,
        areas,
        stage,
        limits,
        sigma_multiple,
        laney=True,
        segment=segment,
        set_aside=set_aside,
    )


@dataclass(frozen=True)
class _CountFit:
    centre: float
    sigma: float


def _count_chart(
    kind: str,
    counts: Any,
    size: float | None,
    stage: Any,
    limits: str,
    sigma_multiple: float,
    set_aside: Any = None,
) -> ControlChart:
    d = _as_counts(counts, "counts")
    m = d.size
    k = float(sigma_multiple)
    st = _check_common(m, stage, limits, k)
    aside = _check_aside(set_aside, m)
    notes: list[str] = _aside_note(aside, ranges=False)

    def fit(mask: np.ndarray) -> _CountFit:
        if not mask.any():
            raise _TooFew("has no points")
        if kind == "c":
            cbar = _mean(d[mask])
            return _CountFit(cbar, math.sqrt(cbar))
        assert size is not None
        pbar = float(d[mask].sum() / (size * mask.sum()))
        return _CountFit(size * pbar, math.sqrt(size * pbar * (1 - pbar)))

    usable = np.ones(m, dtype=bool) if aside is None else ~aside
    groups = _fit_groups(st, limits, usable, fit, notes)
    notes += _zero_sigma_note(groups, lambda r: r.sigma, "sigma")
    centre, sigma = _fill(groups, m, lambda r, idx: (r.centre, r.sigma))
    lower, upper = _limits(centre, sigma, k, floor=0.0, cap=size if kind == "np" else None)
    fitted = np.zeros(m, dtype=bool)
    for g in groups:
        if g.result is not None:
            fitted |= g.fit
    base = _base_result(groups)
    if kind == "c":
        label, method, extras = (
            "Defect count (c)",
            "Poisson sigma sqrt(c-bar)",
            {"c_bar": base.centre},
        )
        sizes = None
    else:
        label = "Number defective (np)"
        method = "binomial sigma sqrt(n p-bar (1 - p-bar))"
        extras = {"p_bar": base.centre / size, "n": float(size)}
        sizes = np.full(m, float(size))
    return ControlChart(
        kind=kind,
        label=label,
        values=d.copy(),
        centre=centre,
        lower=lower,
        upper=upper,
        sigma=sigma,
        process_sigma=None,
        sigma_method=method,
        fitted=fitted,
        stage=st,
        sizes=sizes,
        extras=extras,
        notes=tuple(notes),
        set_aside=aside,
    )


def np_chart(
    counts: Sequence[float] | np.ndarray,
    size: float | Sequence[float] | np.ndarray,
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Number-defective chart for a constant number checked n.

    CL = n p-bar, limits n p-bar +- k sqrt(n p-bar (1 - p-bar)), within [0, n]. ``size`` may be
    a single number or one per point (all equal); varying sizes raise StatsError (use a p chart).
    """
    sz = _as_counts(size, "size")
    if np.unique(sz).size != 1:
        raise StatsError(
            "an np chart needs the same number checked for every point; sizes vary from "
            f"{sz.min():g} to {sz.max():g}, so use a p chart"
        )
    n = float(sz[0])
    if n <= 0:
        raise StatsError("an np chart needs a positive number checked")
    d = _as_counts(counts, "counts")
    if sz.size not in (1, d.size):
        raise StatsError(f"sizes must be one number or one per point ({d.size}), got {sz.size}")
    if np.any(d > n):
        raise StatsError(
            f"defectives cannot exceed the number checked ({n:g}) at positions {_positions(d > n)}"
        )
    return _count_chart("np", d, n, stage, limits, sigma_multiple, set_aside)


def c_chart(
    counts: Sequence[float] | np.ndarray,
    *,
    stage: Sequence[int] | np.ndarray | None = None,
    limits: str = "baseline",
    sigma_multiple: float = 3.0,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ControlChart:
    """Defect-count chart for a constant area of opportunity: c-bar +- k sqrt(c-bar), LCL >= 0.

    >>> ch = c_chart([16] * 5)
    >>> float(ch.lower[0]), float(ch.upper[0])
    (4.0, 28.0)
    """
    return _count_chart("c", counts, None, stage, limits, sigma_multiple, set_aside)


CHART_FUNCTIONS: dict[str, Callable[..., ControlChart]] = {
    "xmr": individuals,
    "xbar-r": xbar_r,
    "xbar-s": xbar_s,
    "p": p_chart,
    "np": np_chart,
    "c": c_chart,
    "u": u_chart,
    "laney-p": laney_p,
    "laney-u": laney_u,
}
"""Chart kind (as returned by :func:`steadyline.stats.choice.choose_chart`) -> function."""
