"""Subgrouped charts: Xbar-R and Xbar-S, a subgroup mean with its range or standard deviation.

Apart from the individuals chart because sigma comes from the spread within subgroups (range /
d2(n) or pooled standard deviation / c4), and the limits step with the subgroup size.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..codes import LimitMode
from ..constants import c4, d2, d3
from ..results import ControlChart, StatsError
from .fitting import (
    Group,
    TooFew,
    aside_note,
    base_result,
    check_aside,
    check_common,
    exact_mean,
    fill,
    fit_groups,
    fitted_mask,
    limit_lines,
    positions,
    read_only,
    zero_sigma_note,
)

# Above this subgroup size the range wastes information and an S chart is usually preferred
# (Montgomery section 6.3; common practice).
RANGE_MAX_SUBGROUP = 10


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
    st = check_common(m, stage, limits, k)
    aside = check_aside(set_aside, m)
    n = sizes.astype(float)
    multi = n >= 2
    means, disp = _means_and_spreads(sizes, flat, n, spread)
    disp = np.where(multi, disp, np.nan)
    notes = _size_notes(n, multi, spread)
    notes += aside_note(aside, ranges=False)
    usable = np.ones(m, dtype=bool) if aside is None else ~aside
    groups = fit_groups(st, limits, usable, _fitter(spread, means, disp, n, multi), notes)
    word = "average range" if spread == "range" else "average standard deviation"
    notes += zero_sigma_note(groups, lambda r: r.sigma, word)

    centre, sigma = fill(groups, m, lambda r, idx: _xbar_point(r, n[idx], spread))
    lower, upper = limit_lines(centre, sigma, k)
    fitted = fitted_mask(groups, m)
    base = base_result(groups)
    method = _method(base, spread)
    secondary = _spread_chart(
        disp, groups, k, st, n, fitted & multi, aside, spread, base.sigma, method
    )
    return read_only(
        ControlChart(
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
            extras=_extras(groups, limits, base, spread),
            notes=tuple(notes),
            set_aside=aside,
        )
    )


def _means_and_spreads(
    sizes: np.ndarray, flat: np.ndarray, n: np.ndarray, spread: str
) -> tuple[np.ndarray, np.ndarray]:
    """Per-subgroup means, and ranges or standard deviations, in a few vectorised passes (one
    Python call per subgroup would dominate large files); subgroups are never empty
    (_subgroups). A subgroup of one value gets a nan standard deviation."""
    m = len(sizes)
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
    return means, disp


def _size_notes(n: np.ndarray, multi: np.ndarray, spread: str) -> list[str]:
    """What the subgroup sizes mean for the chart: single values, large ranges, steps."""
    notes: list[str] = []
    if (~multi).any():
        what = "range" if spread == "range" else "standard deviation"
        notes.append(
            f"Subgroups at positions {positions(~multi)} hold a single value, so they have no "
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
    return notes


def _fitter(
    spread: str, means: np.ndarray, disp: np.ndarray, n: np.ndarray, multi: np.ndarray
) -> Callable[[np.ndarray], _SubgroupFit]:
    """The fit of one group of subgroups: grand mean, and sigma from the subgroups of two or
    more values (range / d2(n) each; s-bar / c4(n); or pooled s / c4(dof + 1))."""

    def fit(mask: np.ndarray) -> _SubgroupFit:
        use = mask & multi
        if not use.any():
            raise TooFew("has no subgroup of two or more values to estimate sigma from")
        grand = exact_mean(means[mask], n[mask])
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

    return fit


def _c4n(v: float) -> float:
    return c4(int(v)) if v >= 2 else float("nan")


def _xbar_point(r: _SubgroupFit, sizes: np.ndarray, spread: str) -> tuple:
    """Centre and sigma of the subgroup means at points of these sizes."""
    if spread == "stdev":
        # Montgomery's form: X-double-bar +- A3(n_i) s-bar, i.e. sigma = s-bar/(c4(n_i) sqrt n_i)
        s = np.array(
            [r.spread_bar / (_c4n(v) * math.sqrt(v)) if v >= 2 else r.sigma for v in sizes]
        )
        return r.grand_mean, s
    return r.grand_mean, r.sigma / np.sqrt(sizes)


def _spread_point(r: _SubgroupFit, sizes: np.ndarray, spread: str) -> tuple:
    """Centre and sigma of the subgroup ranges or standard deviations at points of these sizes
    (nan for a subgroup of one value)."""
    if spread == "range":
        # d2 and d3 looked up once per distinct subgroup size
        sizes_u, where = np.unique(sizes, return_inverse=True)
        d2u = np.array([d2(int(v)) if v >= 2 else np.nan for v in sizes_u])
        d3u = np.array([d3(int(v)) if v >= 2 else np.nan for v in sizes_u])
        return d2u[where] * r.sigma, d3u[where] * r.sigma
    cen = np.where(sizes >= 2, r.spread_bar, np.nan)
    sig = np.array(
        [r.spread_bar * math.sqrt(1 - _c4n(v) ** 2) / _c4n(v) if v >= 2 else np.nan for v in sizes]
    )
    return cen, sig


def _method(base: _SubgroupFit, spread: str) -> str:
    """How sigma was estimated, in words."""
    if spread == "range":
        return "average of subgroup range / d2(n)"
    return (
        "average subgroup standard deviation / c4(n)"
        if base.constant_n
        else "pooled subgroup standard deviation / c4(total degrees of freedom + 1)"
    )


def _spread_chart(
    disp: np.ndarray,
    groups: list[Group],
    k: float,
    st: np.ndarray,
    n: np.ndarray,
    fitted: np.ndarray,
    aside: np.ndarray | None,
    spread: str,
    process_sigma: float,
    method: str,
) -> ControlChart:
    """The companion chart of the subgroup ranges (R) or standard deviations (S), its limits
    floored at 0; subgroups of one value have none (nan)."""
    if spread == "range":
        kind, label = "range", "Subgroup range (R)"
    else:
        kind, label = "stdev", "Subgroup standard deviation (S)"
    centre, sigma = fill(groups, disp.size, lambda r, idx: _spread_point(r, n[idx], spread))
    lower, upper = limit_lines(centre, sigma, k, floor=0.0)
    return read_only(
        ControlChart(
            kind=kind,
            label=label,
            values=disp,
            centre=centre,
            lower=lower,
            upper=upper,
            sigma=sigma,
            process_sigma=process_sigma,
            sigma_method=method,
            fitted=fitted,
            stage=st.copy(),
            sizes=n.copy(),
            set_aside=None if aside is None else aside.copy(),
        )
    )


def _extras(
    groups: list[Group], limits: str, base: _SubgroupFit, spread: str
) -> dict[str, float | str | None]:
    """Average range or standard deviation, grand mean, and sigma per stage when per-period."""
    extras: dict[str, float | str | None]
    if spread == "range":
        extras = {"average_range": base.spread_bar}
    else:
        extras = {"average_stdev": base.spread_bar}
    extras["grand_mean"] = base.grand_mean
    if limits == LimitMode.PER_PERIOD:
        for g in groups:
            extras[f"process_sigma_stage_{g.stage}"] = None if g.result is None else g.result.sigma
    return extras


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
