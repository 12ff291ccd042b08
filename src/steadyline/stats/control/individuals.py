"""The individuals and moving-range (X-mR) chart: one value per point.

Apart from the other families because only it judges single values, with sigma from the moving
ranges of successive values (never the overall standard deviation, which includes the very
shifts the chart is meant to find), and only it has a moving-range companion.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from ..codes import LimitMode
from ..constants import d2, d3
from ..results import ControlChart, StatsError
from .fitting import (
    Group,
    TooFew,
    as_float_array,
    aside_note,
    base_result,
    check_aside,
    check_common,
    exact_mean,
    fill,
    fit_groups,
    fitted_mask,
    limit_lines,
    read_only,
    zero_sigma_note,
)
from .neighbours import chains, check_segment, consecutive_pairs, pair_key

_METHOD = "average moving range of two / d2(2) (d2(2) = 1.1284)"


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
    x = as_float_array(values, "values")
    m = x.size
    if m < 2:
        raise StatsError(f"an individuals chart requires at least two data points, got {m}")
    k = float(sigma_multiple)
    st = check_common(m, stage, limits, k)
    seg = check_segment(segment, m)
    aside = check_aside(set_aside, m)
    boundary, chain = chains(st, seg)
    mr, notes = _moving_ranges(x, st, seg, boundary)
    mr_fitted = np.zeros(m, dtype=bool)
    fit = _fitter(x, pair_key(chain, aside), mr_fitted)

    notes += aside_note(aside, ranges=True)
    usable = np.ones(m, dtype=bool) if aside is None else ~aside
    groups = fit_groups(st, limits, usable, fit, notes)
    notes += zero_sigma_note(groups, lambda r: r.sigma, "average moving range")
    base = base_result(groups)
    secondary = _moving_range_chart(mr, groups, k, st, mr_fitted, aside, base.sigma)
    centre, sigma = fill(groups, m, lambda r, idx: (r.mean, r.sigma))
    lower, upper = limit_lines(centre, sigma, k)
    return read_only(
        ControlChart(
            kind="individuals",
            label="Individuals (X)",
            values=x.copy(),
            centre=centre,
            lower=lower,
            upper=upper,
            sigma=sigma,
            process_sigma=base.sigma,
            sigma_method=_METHOD,
            fitted=fitted_mask(groups, m),
            stage=st,
            secondary=secondary,
            extras=_extras(groups, limits, base),
            notes=tuple(notes),
            set_aside=aside,
        )
    )


def _moving_ranges(
    x: np.ndarray, st: np.ndarray, seg: np.ndarray | None, boundary: np.ndarray
) -> tuple[np.ndarray, list[str]]:
    """Each point's moving range (nan at the first point and wherever a stage or a segment
    starts), with the notes that say so."""
    mr = np.full(x.size, np.nan)
    mr[1:] = np.abs(np.diff(x))
    mr[boundary] = np.nan
    notes: list[str] = []
    if (st[1:] != st[:-1]).any():
        notes.append("Moving ranges that span a change of period are not plotted or used.")
    if seg is not None and (seg[1:] != seg[:-1]).any():
        notes.append("Moving ranges that span a gap in the periods are not plotted or used.")
    return mr, notes


def _fitter(
    x: np.ndarray, pairs: np.ndarray, mr_fitted: np.ndarray
) -> Callable[[np.ndarray], _XmrFit]:
    """The fit of one group of points: their mean and average moving range of successive points
    (``pairs`` numbers the runs of successive points); marks in ``mr_fitted`` the moving ranges
    it used."""

    def fit(mask: np.ndarray) -> _XmrFit:
        a, b = consecutive_pairs(mask, pairs)
        if a.size < 1:
            raise TooFew(
                "needs at least two consecutive points to compute a moving range, "
                f"got {int(mask.sum())} point{'' if int(mask.sum()) == 1 else 's'}"
            )
        mr_bar = float(np.mean(np.abs(x[b] - x[a])))
        mr_fitted[b] = True
        return _XmrFit(exact_mean(x[mask]), mr_bar, mr_bar / d2(2), int(a.size))

    return fit


def _moving_range_chart(
    mr: np.ndarray,
    groups: list[Group],
    k: float,
    st: np.ndarray,
    mr_fitted: np.ndarray,
    aside: np.ndarray | None,
    process_sigma: float,
) -> ControlChart:
    """The moving-range companion: centre MR-bar, limits MR-bar +- k d3(2)/d2(2) MR-bar, floored
    at 0. The range at point i spans points i - 1 and i, so it is set aside with either."""
    mr_aside = None
    if aside is not None:
        mr_aside = aside.copy()
        mr_aside[1:] |= aside[:-1]
    ratio = d3(2) / d2(2)
    mr_centre, mr_sigma = fill(groups, mr.size, lambda r, idx: (r.mr_bar, ratio * r.mr_bar))
    mr_lower, mr_upper = limit_lines(mr_centre, mr_sigma, k, floor=0.0)
    return read_only(
        ControlChart(
            kind="moving-range",
            label="Moving range (mR)",
            values=mr,
            centre=mr_centre,
            lower=mr_lower,
            upper=mr_upper,
            sigma=mr_sigma,
            process_sigma=process_sigma,
            sigma_method=_METHOD,
            fitted=mr_fitted,
            stage=st.copy(),
            notes=("The first point has no moving range.",),
            set_aside=mr_aside,
        )
    )


def _extras(groups: list[Group], limits: str, base: _XmrFit) -> dict[str, float | str | None]:
    extras: dict[str, float | str | None] = {
        "mean": base.mean,
        "average_moving_range": base.mr_bar,
        "moving_ranges_used": float(base.n_ranges),
    }
    if limits == LimitMode.PER_PERIOD:
        for g in groups:
            extras[f"process_sigma_stage_{g.stage}"] = None if g.result is None else g.result.sigma
    return extras
