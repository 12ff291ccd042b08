"""Rate charts: p (proportion defective) and u (defects per unit), and Laney's p′ and u′.

One family because they share everything but the widening: a rate pooled from counts over an
exposure (number checked, area of opportunity), limits that step with the exposure, points with
no exposure left out. Laney's charts (Laney, D.B. (2002) "Improved control charts for
attributes", *Quality Engineering* 14(4):531-537) widen the binomial or Poisson sigma by
sigma_z, the average moving range of the points' z-scores / d2(2), and fall back to the classic
chart where that cannot be computed.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..codes import LimitMode
from ..constants import d2
from ..results import ControlChart, StatsError
from .fitting import (
    Group,
    TooFew,
    aside_note,
    base_result,
    check_aside,
    check_common,
    counts_and_exposure,
    fill,
    fit_groups,
    fitted_mask,
    limit_lines,
    positions,
    read_only,
)
from .neighbours import chains, check_segment, consecutive_pairs, pair_key


@dataclass(frozen=True)
class _RateFit:
    rate: float  # p-bar or u-bar
    sigma_z: float  # 1 for the classic chart
    laney: bool


@dataclass(frozen=True)
class _Rates:
    """The counts and exposures of a rate chart, and the rate at each usable point."""

    kind: str  # "p" or "u"
    d: np.ndarray  # counts
    a: np.ndarray  # number checked or area of opportunity
    usable: np.ndarray  # a > 0
    values: np.ndarray  # d / a where usable, else nan

    @property
    def proportion(self) -> bool:
        return self.kind == "p"

    def base_sigma(self, rate: float, idx: np.ndarray) -> np.ndarray:
        """Binomial (p) or Poisson (u) sigma of the rate at these points (nan if unusable)."""
        usable, a = self.usable[idx], self.a[idx]
        with np.errstate(divide="ignore", invalid="ignore"):
            var = rate * (1 - rate) if self.proportion else rate
            return np.where(usable, np.sqrt(var / np.where(usable, a, 1.0)), np.nan)


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
    k = float(sigma_multiple)
    rates, st, chain, aside = _placed(kind, counts, exposure, stage, limits, k, segment, set_aside)
    a, usable, m = rates.a, rates.usable, rates.d.size
    notes = _unusable_notes(usable, proportion)

    fit = _fitter(rates, st, chain, laney, notes)
    notes += aside_note(aside, ranges=False)
    groups = fit_groups(st, limits, usable if aside is None else usable & ~aside, fit, notes)
    notes += _zero_variation_notes(groups, proportion)
    centre, sigma = fill(
        groups, m, lambda r, idx: (r.rate, rates.base_sigma(r.rate, idx) * r.sigma_z)
    )
    centre[~usable] = np.nan
    lower, upper = limit_lines(centre, sigma, k, floor=0.0, cap=1.0 if proportion else None)
    out_kind, label, method, extras = _described(kind, laney, limits, groups)
    return read_only(
        ControlChart(
            kind=out_kind,
            label=label,
            values=rates.values,
            centre=centre,
            lower=lower,
            upper=upper,
            sigma=sigma,
            process_sigma=None,
            sigma_method=method,
            fitted=fitted_mask(groups, m),
            stage=st,
            sizes=a.copy(),
            extras=extras,
            notes=tuple(notes),
            set_aside=aside,
        )
    )


def _placed(
    kind: str,
    counts: Any,
    exposure: Any,
    stage: Any,
    limits: str,
    sigma_multiple: float,
    segment: Any,
    set_aside: Any,
) -> tuple[_Rates, np.ndarray, np.ndarray, np.ndarray | None]:
    """The checked counts and exposures with each usable point's rate, and where the points
    stand: (rates, stage, chain of successive points for moving ranges, set aside)."""
    d, a = counts_and_exposure(counts, exposure, kind == "p")
    m = d.size
    st = check_common(m, stage, limits, sigma_multiple)
    _brk, chain = chains(st, check_segment(segment, m))
    aside = check_aside(set_aside, m)
    usable = a > 0
    values = np.full(m, np.nan)
    values[usable] = d[usable] / a[usable]
    return _Rates(kind, d, a, usable, values), st, pair_key(chain, aside), aside


def baseline_sigma_z(
    counts: Any,
    exposure: Any,
    proportion: bool,
    stage: Any = None,
    segment: Any = None,
    set_aside: Any = None,
) -> tuple[float, int, int]:
    """Laney's sigma_z of the baseline (stage 0) as the p′ or u′ chart fits it, for the chart
    choice's overdispersion check: (sigma_z, moving ranges, neighbouring pairs of them that
    share a point). :class:`StatsError` where it is undefined (fewer than two usable points,
    a rate of 0, or of 1 for proportions, no two successive points)."""
    kind = "p" if proportion else "u"
    rates, st, chain, aside = _placed(
        kind, counts, exposure, stage, "baseline", 3.0, segment, set_aside
    )
    mask = rates.usable & (st == 0)
    if aside is not None:
        mask &= ~aside
    if mask.sum() < 2:
        raise StatsError(f"sigma_z needs at least two usable points, got {int(mask.sum())}")
    rate = float(rates.d[mask].sum() / rates.a[mask].sum())
    notes: list[str] = []
    found = _sigma_z_pairs(rates, rate, mask, chain, notes)
    if found is None:
        raise StatsError(notes[-1])
    sigma_z, pa, pb = found
    return sigma_z, int(pa.size), int(np.sum(pa[1:] == pb[:-1]))


def _unusable_notes(usable: np.ndarray, proportion: bool) -> list[str]:
    notes: list[str] = []
    if (~usable).any():
        nothing = "nothing checked (size 0)" if proportion else "no area of opportunity (0)"
        notes.append(
            f"{int((~usable).sum())} point{'' if int((~usable).sum()) == 1 else 's'} with "
            f"{nothing} {'is' if int((~usable).sum()) == 1 else 'are'} left out (positions "
            f"{positions(~usable)}): no {'proportion' if proportion else 'rate'} exists for them."
        )
    return notes


def _fitter(
    rates: _Rates, st: np.ndarray, chain: np.ndarray, laney: bool, notes: list[str]
) -> Callable[[np.ndarray], _RateFit]:
    """The fit of one group of points: the pooled rate, and for a Laney chart sigma_z (the
    classic chart, sigma_z = 1, with a note, where sigma_z cannot be computed)."""
    d, a, kind = rates.d, rates.a, rates.kind

    def fit(mask: np.ndarray) -> _RateFit:
        if not mask.any():
            raise TooFew(f"has no point with a positive {'size' if rates.proportion else 'area'}")
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
        sigma_z = _sigma_z(rates, rate, mask, chain, notes)
        if sigma_z is None:
            return _RateFit(rate, 1.0, False)
        return _RateFit(rate, sigma_z, True)

    return fit


def _sigma_z(
    rates: _Rates, rate: float, mask: np.ndarray, chain: np.ndarray, notes: list[str]
) -> float | None:
    """Laney's sigma_z: the average moving range of the fitted points' z-scores / d2(2); None
    (with a note) where the z-scores are undefined or no two points are successive."""
    found = _sigma_z_pairs(rates, rate, mask, chain, notes)
    return None if found is None else found[0]


def _sigma_z_pairs(
    rates: _Rates, rate: float, mask: np.ndarray, chain: np.ndarray, notes: list[str]
) -> tuple[float, np.ndarray, np.ndarray] | None:
    """:func:`_sigma_z` with the pairs of successive points its moving ranges join."""
    idx = np.flatnonzero(mask)
    s = rates.base_sigma(rate, idx)
    if np.any(s == 0):
        notes.append(
            f"The {'proportion' if rates.proportion else 'rate'} of the fit is "
            f"{rate:g}, so the z-scores of a Laney chart are undefined; the classic "
            f"{rates.kind} chart limits are used."
        )
        return None
    z = np.full(rates.values.size, np.nan)
    z[idx] = (rates.values[idx] - rate) / s
    pa, pb = consecutive_pairs(mask, chain)
    if pa.size < 1:
        notes.append("No two consecutive usable points; the classic chart limits are used.")
        return None
    return float(np.mean(np.abs(z[pb] - z[pa])) / d2(2)), pa, pb


def _zero_variation_notes(groups: list[Group], proportion: bool) -> list[str]:
    notes: list[str] = []
    for g in groups:
        r = g.result
        if r is not None and (r.rate == 0 or (proportion and r.rate == 1) or r.sigma_z == 0):
            notes.append(
                f"The fit for stage {g.stage} has zero variation, so the limits collapse onto "
                "the centre line."
            )
    return notes


def _described(
    kind: str, laney: bool, limits: str, groups: list[Group]
) -> tuple[str, str, str, dict[str, float | str | None]]:
    """The chart's kind, label, sigma method in words and extras (p-bar or u-bar, and sigma_z
    where Laney's widening was used)."""
    proportion = kind == "p"
    base = base_result(groups)
    used_laney = any(g.result is not None and g.result.laney for g in groups)
    name = "p" if proportion else "u"
    extras: dict[str, float | str | None] = {"p_bar" if proportion else "u_bar": base.rate}
    out_kind = kind
    if laney and used_laney:
        out_kind = f"laney-{kind}"
        extras["sigma_z"] = base.sigma_z if base.laney else None
        if limits == LimitMode.PER_PERIOD:
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
    return out_kind, label, method, extras


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
