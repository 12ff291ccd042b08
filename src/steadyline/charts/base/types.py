"""Input and output types of the chart builders: how a series is laid out (SeriesContext), one
chart ready to embed (ChartSpec) and its table held column by column (ColumnTable).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import date

import numpy as np


@dataclass(frozen=True)
class SeriesContext:
    """How a time-based series is laid out.

    x:         per point an ISO date 'YYYY-MM-DD' (or ISO datetime) when x_is_time, else a label.
    x_is_time: whether x holds dates.
    stage:     per point the period name ("Baseline", "After"), "" if none.
    segment:   per point a segment number; lines never join across segments (gaps in periods).
    unit:      e.g. "hours", "" if none.
    metric_name: the metric's display name.
    events:    (date, label) pairs, drawn as labelled vertical rules on time-based charts; the
               date a datetime.date (or datetime, naive taken as UTC) or ISO text.
    stamps:    optionally, the times of x as naive datetime64[s] (UTC), when the maker has
               them: the charts then need not read x back (not part of equality or hash).
    points_note: what one point is when that is not plain (a rolled-up metric's "Each point is
               a daily mean ..."), the first line of each series chart's subtitle.
    """

    x: tuple[str, ...]
    x_is_time: bool
    stage: tuple[str, ...]
    segment: tuple[int, ...]
    unit: str
    metric_name: str
    events: tuple[tuple[str | date, str], ...] = ()
    stamps: np.ndarray | None = field(default=None, compare=False, hash=False, repr=False)
    points_note: str = ""

    def __post_init__(self) -> None:
        n = len(self.x)
        if len(self.stage) != n or len(self.segment) != n:
            raise ValueError(
                f"SeriesContext needs one stage and one segment per point: got {n} x values, "
                f"{len(self.stage)} stages and {len(self.segment)} segments"
            )


class ColumnTable(Sequence):
    """A chart's table held column by column (how the charts build it and how the CSV writer
    reads it); it reads as a list of row dicts, made only when asked for."""

    def __init__(self, columns: Sequence[str], cols: dict[str, list]):
        self.columns = tuple(columns)
        self.cols = {c: cols[c] for c in self.columns}
        lengths = {len(v) for v in self.cols.values()}
        if len(lengths) > 1:
            raise ValueError(f"table columns differ in length: {sorted(lengths)}")
        self.n = lengths.pop() if lengths else 0
        self._rows: list[dict] | None = None

    def rows(self) -> list[dict]:
        if self._rows is None:
            self._rows = [
                dict(zip(self.columns, r, strict=True))
                for r in zip(*self.cols.values(), strict=True)
            ]
        return self._rows

    def __len__(self) -> int:
        return self.n

    def __getitem__(self, i):
        return self.rows()[i]

    def __iter__(self):
        return iter(self.rows())

    def __eq__(self, other) -> bool:
        return isinstance(other, Sequence) and list(self) == list(other)

    __hash__ = None  # type: ignore[assignment]


@dataclass(frozen=True)
class ChartSpec:
    """One chart, ready to embed.

    spec:    Vega-Lite JSON-able dict, data inline, deterministic, no NaN.
    table:   the plotted data as rows (a CSV download / data table).
    columns: column order for the table.
    summary: one line of plain text saying what the chart shows.
    """

    spec: dict
    table: Sequence[dict]
    columns: tuple[str, ...]
    summary: str
