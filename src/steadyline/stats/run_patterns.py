"""The patterns the run-chart rules look for, found with numpy: runs of points on one side of
the median, and trends of successive values all rising or all falling.

Kept apart from the analysis (runs.py), which judges what is found here against the limits of
run_limits.py and words the signals.
"""

from __future__ import annotations

import numpy as np


class SideRuns:
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


def runs_of_sides(useful_idx: np.ndarray, sides: np.ndarray) -> SideRuns:
    """Group useful points into runs on one side."""
    return SideRuns(useful_idx, sides)


def trends(x: np.ndarray, min_points: int) -> list[tuple[str, list[int]]]:
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
