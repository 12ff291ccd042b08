"""``[[metric.set_aside]]``: the days of a baseline left out of its statistics, checked.

Each entry on its own, then all of them against the baseline period and one another; whether
any point falls in them is checked with the data (:mod:`steadyline.loading`).
"""

from __future__ import annotations

import datetime as dt
import difflib
from typing import Any

from .keys import SET_ASIDE_KEYS
from .model import MetricSpec, Period, SetAside
from .reading import Checker, Reader, type_name


class _EntryReader(Reader):
    """A reader of one entry of a list of tables inside a metric (``[[metric.set_aside]]``),
    whose messages name the entry's own line."""

    def __init__(self, ck: Checker, data: dict, prefix: str, index: int, sub: str, entry: int):
        super().__init__(ck, data, prefix, table="metric", index=index)
        self.sub_name, self.entry = sub, entry

    def _line(self, key):
        return self.ck.loc.entry_line(key, "metric", self.index, self.sub_name, self.entry)

    def missing(self, key, what):
        self.ck.add(f"{self.prefix}{key}", f"required key is missing: {what}", self._line(None))


def read_set_aside(ck: Checker, raw: Any, i: int, spec: MetricSpec) -> tuple[SetAside, ...]:
    """The metric's set-aside days, checked on their own and against the baseline period:
    each inside the baseline, none overlapping another, not all of the baseline. Whether any
    point falls in them is checked with the data (:mod:`steadyline.loading`)."""
    prefix = f"metric[{i + 1}].set_aside"
    line = ck.loc.entry_line(None, "metric", i, "set_aside", 0)
    if not isinstance(raw, list) or not all(isinstance(e, dict) for e in raw):
        ck.add(
            prefix,
            "expected [[metric.set_aside]] tables, each with dates and reason, got "
            f"{type_name(raw)} {raw!r}",
            line,
        )
        return ()
    if spec.type == "categories":
        ck.add(
            prefix,
            "a categories metric has no control limits or centre line to set points "
            "aside from; remove set_aside",
            line,
        )
        return ()
    entries = (_entry(ck, e, i, j, spec.baseline) for j, e in enumerate(raw))
    kept = _apart(ck, [e for e in entries if e is not None])
    b = spec.baseline
    if kept and b is not None and b.end is not None and _cover(kept, b.start, b.end):
        ck.add(
            prefix,
            f"the days set aside cover the whole baseline period ({b.label()}); "
            "no point would be left to compute the baseline from",
            line,
        )
        return ()
    return tuple(kept)


def _entry(ck: Checker, e: dict, i: int, j: int, baseline: Period | None) -> SetAside | None:
    """The j-th entry of the i-th metric, when it is whole and inside the baseline."""
    where = f"metric[{i + 1}].set_aside[{j + 1}]"
    er = _EntryReader(ck, e, f"{where}.", i, "set_aside", j)
    for key in e:
        if key not in SET_ASIDE_KEYS:
            guess = difflib.get_close_matches(key, SET_ASIDE_KEYS, n=1, cutoff=0.6)
            hint = (
                f"did you mean '{guess[0]}'?"
                if guess
                else "allowed keys are: " + ", ".join(SET_ASIDE_KEYS)
            )
            ck.add(f"{where}.{key}", f"unknown key; {hint}", er._line(key))
    reason = er.text(
        "reason",
        required=True,
        what="why these points are set aside: the cause found and removed",
    )
    if "dates" not in e:
        er.missing("dates", "[day] or [first day, last day] of the points set aside")
        return None
    p = er.period("dates")
    if p is None or reason is None:
        return None
    entry = SetAside(p.start, p.end or p.start, reason, where, ck.shown, er._line("dates"))
    b = baseline
    if b is not None and (entry.start < b.start or (b.end is not None and entry.end > b.end)):
        ck.add(
            f"{where}.dates",
            f"{entry.label()} is not inside the baseline period "
            f"({b.label()}); only baseline points can be set aside",
            entry.line,
        )
        return None
    return entry


def _apart(ck: Checker, out: list[SetAside]) -> list[SetAside]:
    """The entries in time order, each that overlaps an earlier one reported and dropped."""
    out.sort(key=lambda e: (e.start, e.end))
    kept: list[SetAside] = []
    for e in out:
        if kept and e.start <= kept[-1].end:
            ck.add(
                f"{e.where}.dates",
                f"{e.label()} overlaps {kept[-1].where} "
                f"({kept[-1].label()}); give each day once: merge them into one range",
                e.line,
            )
            continue
        kept.append(e)
    return kept


def _cover(kept: list[SetAside], start: dt.date, end: dt.date) -> bool:
    """Whether the entries (in order, apart) leave no day of *start* to *end* uncovered."""
    day = start
    for e in kept:
        if e.start > day:
            return False
        day = max(day, e.end + dt.timedelta(days=1))
    return day > end
