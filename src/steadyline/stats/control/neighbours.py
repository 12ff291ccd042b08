"""Which points are successive observations, for moving ranges.

A moving range is the difference of two successive observations (NIST/SEMATECH e-Handbook
6.3.2.2; Montgomery section 6.4: MR_i = |x_i - x_(i-1)|). Points either side of a change of
stage, of a gap in the periods (``segment``) or of a point set aside are not successive, so no
moving range joins them. The individuals chart and the Laney charts (whose sigma_z is an average
moving range of z-scores) both ask this, so it lives in one place.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..results import StatsError


def check_segment(segment: Any, m: int) -> np.ndarray | None:
    if segment is None:
        return None
    seg = np.asarray(segment)
    if seg.ndim != 1 or seg.size != m:
        raise StatsError(f"segment must give one segment number per point ({m}), got {seg.size}")
    f = np.asarray(seg, dtype=float)
    if seg.size and not np.all(np.isfinite(f) & (f == np.round(f))):
        raise StatsError("segment numbers must be whole numbers")
    return f.astype(np.int64)


def pair_key(chain: np.ndarray, aside: np.ndarray | None) -> np.ndarray:
    """A number per point that changes at every break of ``chain`` and at every set-aside
    point, so that :func:`consecutive_pairs` never pairs points across a set-aside one."""
    if aside is None:
        return chain
    return chain + np.cumsum(aside)


def chains(stage: np.ndarray, segment: np.ndarray | None) -> tuple[np.ndarray, np.ndarray]:
    """(break, chain): ``break`` marks each point that starts a new stage or segment (its moving
    range is undefined); ``chain`` numbers the runs of points between breaks."""
    brk = np.zeros(stage.size, dtype=bool)
    brk[1:] = stage[1:] != stage[:-1]
    if segment is not None:
        brk[1:] |= segment[1:] != segment[:-1]
    return brk, np.cumsum(brk)


def consecutive_pairs(mask: np.ndarray, stage: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
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
