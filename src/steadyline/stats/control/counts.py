"""Count charts for a constant exposure: np (number defective of n checked) and c (defects).

Apart from the rate charts because the plotted value is the count itself and the limits do not
step: one centre line and one sigma per fit (binomial sqrt(n p-bar (1 - p-bar)), Poisson
sqrt(c-bar)).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..results import ControlChart, StatsError
from .fitting import (
    TooFew,
    as_counts,
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
    d = as_counts(counts, "counts")
    m = d.size
    k = float(sigma_multiple)
    st = check_common(m, stage, limits, k)
    aside = check_aside(set_aside, m)
    notes: list[str] = aside_note(aside, ranges=False)

    def fit(mask: np.ndarray) -> _CountFit:
        if not mask.any():
            raise TooFew("has no points")
        if kind == "c":
            cbar = exact_mean(d[mask])
            return _CountFit(cbar, math.sqrt(cbar))
        assert size is not None
        pbar = float(d[mask].sum() / (size * mask.sum()))
        return _CountFit(size * pbar, math.sqrt(size * pbar * (1 - pbar)))

    usable = np.ones(m, dtype=bool) if aside is None else ~aside
    groups = fit_groups(st, limits, usable, fit, notes)
    notes += zero_sigma_note(groups, lambda r: r.sigma, "sigma")
    centre, sigma = fill(groups, m, lambda r, idx: (r.centre, r.sigma))
    lower, upper = limit_lines(centre, sigma, k, floor=0.0, cap=size if kind == "np" else None)
    label, method, extras = _described(kind, base_result(groups), size)
    return read_only(
        ControlChart(
            kind=kind,
            label=label,
            values=d.copy(),
            centre=centre,
            lower=lower,
            upper=upper,
            sigma=sigma,
            process_sigma=None,
            sigma_method=method,
            fitted=fitted_mask(groups, m),
            stage=st,
            sizes=None if size is None else np.full(m, float(size)),
            extras=extras,
            notes=tuple(notes),
            set_aside=aside,
        )
    )


def _described(
    kind: str, base: _CountFit, size: float | None
) -> tuple[str, str, dict[str, float | str | None]]:
    """The chart's label, sigma method in words and extras (c-bar, or p-bar and n)."""
    if kind == "c" or size is None:
        return "Defect count (c)", "Poisson sigma sqrt(c-bar)", {"c_bar": base.centre}
    return (
        "Number defective (np)",
        "binomial sigma sqrt(n p-bar (1 - p-bar))",
        {"p_bar": base.centre / size, "n": float(size)},
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
    sz = as_counts(size, "size")
    if np.unique(sz).size != 1:
        raise StatsError(
            "an np chart needs the same number checked for every point; sizes vary from "
            f"{sz.min():g} to {sz.max():g}, so use a p chart"
        )
    n = float(sz[0])
    if n <= 0:
        raise StatsError("an np chart needs a positive number checked")
    d = as_counts(counts, "counts")
    if sz.size not in (1, d.size):
        raise StatsError(f"sizes must be one number or one per point ({d.size}), got {sz.size}")
    if np.any(d > n):
        raise StatsError(
            f"defectives cannot exceed the number checked ({n:g}) at positions {positions(d > n)}"
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
