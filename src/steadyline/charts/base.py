"""Input and output types of the chart builders, and the shared machinery behind them.

Every builder turns statistics results into a :class:`ChartSpec`: a Vega-Lite spec with its data
inline as named datasets, the same data as table rows, and a one-line summary.

Speed: composing a spec with Altair costs tens of milliseconds, so each display's spec *template*
(no data, placeholders for the per-metric texts) is composed once per process and cached by
display and variant flags. A chart is then a copy of the template with the placeholders filled in
and the data rows attached under ``datasets``.
"""

from __future__ import annotations

import functools
import itertools
import math
import re
import textwrap
from collections.abc import Callable, Collection, Hashable, Sequence
from dataclasses import dataclass, field
from datetime import UTC, date, datetime

import numpy as np
import orjson

from . import style, vl


@dataclass(frozen=True)
class SeriesContext:
    """How a time-based series is laid out.

    x:         per point an ISO date 'YYYY-MM-DD' (or ISO datetime) when x_is_time, else a label.
    x_is_time: whether x holds dates.
    stage:     per point the phase name ("Baseline", "After"), "" if none.
    segment:   per point a segment number; lines never join across segments (gaps in periods).
    unit:      e.g. "hours", "" if none.
    metric_name: the metric's display name.
    events:    (ISO date, label) pairs, drawn as labelled vertical rules on time-based charts.
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
    events: tuple[tuple[str, str], ...] = ()
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
    table: list[dict]
    columns: tuple[str, ...]
    summary: str


# ------------------------------------------------------------------------------------------------
# Template cache and placeholder filling
# ------------------------------------------------------------------------------------------------

_PLACEHOLDER = "\u00a7\u00a7"  # "§§name" marks a per-metric value in a cached template
_TEMPLATES: dict[tuple[Hashable, ...], dict] = {}
# Per cached template (by id; the templates stay alive in _TEMPLATES): its JSON text, which
# orjson turns back into a fresh deep copy far quicker than a Python walk, and the paths of its
# placeholders.
_COPIES: dict[int, tuple[bytes, list[tuple[tuple, str, bool]]]] = {}


def slot(name: str) -> str:
    """A placeholder string for a per-metric value in a template."""
    return _PLACEHOLDER + name


def list_slot(name: str) -> list[str]:
    """A placeholder for a per-metric list (e.g. a sort order or axis tick values)."""
    return [_PLACEHOLDER + name]


def cached_template(key: tuple[Hashable, ...], build: Callable[[], dict]) -> dict:
    """The template for ``key``, composed by ``build`` on first use in this process."""
    tpl = _TEMPLATES.get(key)
    if tpl is None:
        tpl = build()
        _TEMPLATES[key] = tpl
        _COPIES[id(tpl)] = _text_and_slots(tpl)
    return tpl


def _text_and_slots(tpl: dict) -> tuple[bytes, list[tuple[tuple, str, bool]]]:
    """A template's JSON text and the paths of its placeholders (see :func:`fill`)."""
    slots: list[tuple[tuple, str, bool]] = []
    _find_slots(tpl, (), slots)
    return orjson.dumps(tpl), slots


def clear_template_cache() -> None:
    """Forget every composed template (tests compare cached and fresh compositions)."""
    _TEMPLATES.clear()
    _COPIES.clear()


def _find_slots(node, path: tuple, out: list) -> None:
    """(path, name, is a list slot) of every placeholder under *node*, in document order."""
    if isinstance(node, dict):
        for k, v in node.items():
            _find_slots(v, (*path, k), out)
    elif isinstance(node, list):
        if len(node) == 1 and isinstance(node[0], str) and node[0].startswith(_PLACEHOLDER):
            out.append((path, node[0][len(_PLACEHOLDER) :], True))
            return
        for i, v in enumerate(node):
            _find_slots(v, (*path, i), out)
    elif isinstance(node, str) and node.startswith(_PLACEHOLDER):
        out.append((path, node[len(_PLACEHOLDER) :], False))


def _slot_value(name: str, values: dict, is_list: bool):
    if is_list and name in values and isinstance(values[name], list):
        return list(values[name])
    if name not in values:
        raise KeyError(f"no value given for the template placeholder {name!r}")
    return [values[name]] if is_list else values[name]


def fill(node, values: dict):
    """A deep copy of a template with every placeholder replaced by ``values[name]``."""
    cached = _COPIES.get(id(node))  # a cached template (alive in _TEMPLATES: the id is its own)
    text, slots = cached if cached is not None else _text_and_slots(node)  # found now
    copy = orjson.loads(text)
    for path, name, is_list in slots:
        value = _slot_value(name, values, is_list)
        if not path:
            return value
        parent = copy
        for k in path[:-1]:
            parent = parent[k]
        parent[path[-1]] = value
    return copy


def finish_template(chart: dict, display: str) -> dict:
    """A template: the composed view (plain dict) with the schema, our shared config and the
    display name in usermeta."""
    spec = {"$schema": vl.SCHEMA, **chart}
    spec["config"] = style.vega_config()
    spec["usermeta"] = {"steadyline": {"display": display}}
    return spec


def make_spec(
    template: dict,
    values: dict,
    datasets: dict[str, list[dict]],
    title: str,
    subtitle: Sequence[str] = (),
    exact: Collection[str] = (),
) -> dict:
    """The template filled in, with the datasets at display precision and the title.

    exact: names of datasets whose rows already hold display-precision numbers (ints, strings,
    None and floats from :func:`disp` / :func:`disp_list`); they go in as they are, since
    rounding them again would change nothing.
    """
    spec = fill(template, values)
    # display precision in the page (the table, built from the caller's rows, keeps it all)
    spec["datasets"] = {
        name: rows if name in exact else [_display_row(r) for r in rows]
        for name, rows in datasets.items()
    }
    t: dict = {"text": title}
    sub = [line for s in subtitle if s for line in _wrapped(s)]
    if sub:
        t["subtitle"] = sub
    spec["title"] = t
    return spec


# Subtitle lines longer than this many characters are broken at spaces: a chart's title does not
# wrap by itself, and a long line would be cut off at the chart's edge.
SUBTITLE_WIDTH = 125


@functools.lru_cache(maxsize=256)
def _wrapped(line: str) -> tuple[str, ...]:
    if len(line) <= SUBTITLE_WIDTH:
        return (line,)
    return tuple(
        textwrap.wrap(line, SUBTITLE_WIDTH, break_long_words=False, break_on_hyphens=False)
    )


# Characters of a 12 px axis title per pixel of the axis it runs along.
_AXIS_CHARS_PER_PX = 1 / 5.4  # a title may run a little past its axis before it wraps
AXIS_TITLE_LINES = 3


def axis_title(text: str, length: int) -> str | list[str]:
    """An axis title that fits along an axis of ``length`` pixels: as it is when short enough,
    else broken at spaces into lines (at most ``AXIS_TITLE_LINES``, the last cut with an
    ellipsis). A long title on one line would stretch the chart to its own length."""
    lines = _axis_lines(text, length)
    return lines[0] if len(lines) == 1 and lines[0] == text else list(lines)


@functools.lru_cache(maxsize=256)
def _axis_lines(text: str, length: int) -> tuple[str, ...]:
    room = max(12, int(length * _AXIS_CHARS_PER_PX))
    if len(text) <= room:
        return (text,)
    lines = textwrap.wrap(text, room, break_long_words=True, break_on_hyphens=False)
    if len(lines) > AXIS_TITLE_LINES:
        lines = lines[:AXIS_TITLE_LINES]
        lines[-1] = lines[-1][: room - 1].rstrip() + "\u2026"
    return tuple(lines)


# ------------------------------------------------------------------------------------------------
# Numbers and text
# ------------------------------------------------------------------------------------------------


def num(v) -> float | None:
    """A plain float, or None for missing / nan / inf (Vega-Lite JSON never holds NaN)."""
    if v is None:
        return None
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def num_list(values) -> list[float | None]:
    """Plain floats with None for missing / nan / inf, for a whole array at once."""
    arr = np.asarray(values, dtype=float).ravel()
    out = arr.tolist()
    for i in np.flatnonzero(~np.isfinite(arr)).tolist():
        out[i] = None
    return out


@functools.lru_cache(maxsize=1 << 16)
def _round6(f: float) -> float | int:
    # cached: limits, centre lines and repeated measurements recur many times in one chart
    r = float(f"{f:.6g}")
    return int(r) if r.is_integer() and abs(r) < 1e15 else r


def disp(v) -> float | int | None:
    """A number as written into a spec's data rows: about 6 significant digits (what is drawn
    and shown in tooltips; results.json and the CSV keep full precision), None when missing."""
    f = num(v)
    return None if f is None else _round6(f)


def _display_row(row: dict) -> dict:
    return {
        k: (_round6(v) if isinstance(v, float) and math.isfinite(v) else v) for k, v in row.items()
    }


def disp_list(values) -> list:
    """:func:`disp` for a whole array, computed with numpy: the same numbers as
    :func:`_round6` value by value (see :func:`_round6_array`)."""
    arr = np.asarray(values, dtype=float).ravel()
    if arr.size < 16:
        return [None if f is None else _round6(f) for f in num_list(arr)]
    return _round6_array(arr)


_POW10 = 10.0 ** np.arange(23)  # exact in binary floating point


def _round6_array(arr: np.ndarray) -> list:
    """[_round6(x) or None] for a float array, without formatting each value as text.

    A value x with decimal exponent e = floor(log10 |x|) is scaled to q = x * 10^(5 - e) (or
    x / 10^(e - 5)), both exact powers of ten, so q carries one rounding; k = rint(q) has the
    6 significant digits, and k / 10^(5 - e) (or k * 10^(e - 5)) is the double nearest that
    decimal, which is what float(f"{x:.6g}") gives. Where the single rounding could matter (q
    within 1e-6 of a half, or k not of six digits because log10 was off at a power of ten, or
    a magnitude beyond the exact powers) the value goes through _round6 itself.
    """
    finite = np.isfinite(arr)
    x = np.where(finite, arr, 0.0)
    ax = np.abs(x)
    nonzero = ax > 0
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        e = np.floor(np.log10(np.where(nonzero, ax, 1.0))).astype(np.int64)
        up = 5 - e  # decimal places to keep
        ok = nonzero & (up >= -22) & (up <= 22)
        p = _POW10[np.clip(np.abs(up), 0, 22)]
        q = np.where(up >= 0, x * p, x / p)
        k = np.rint(q)
        r = np.where(up >= 0, k / p, k * p)
        near_half = np.abs(np.abs(q - np.trunc(q)) - 0.5) < 1e-6
        six = (np.abs(k) >= 1e5) & (np.abs(k) < 1e6)
    slow = finite & nonzero & ~(ok & six & ~near_half)
    r = np.where(nonzero, r, 0.0)
    out = r.tolist()
    whole = finite & (np.floor(r) == r) & (np.abs(r) < 1e15)
    for i in np.flatnonzero(whole).tolist():
        out[i] = int(out[i])
    for i in np.flatnonzero(slow).tolist():
        out[i] = _round6(float(arr[i]))
    for i in np.flatnonzero(~finite).tolist():
        out[i] = None
    return out


def fmt(v, sig: int = 3) -> str:
    """A number for labels: about ``sig`` significant digits, integer part always whole."""
    if type(v) is float:
        return _fmt_float(v, sig)
    f = num(v)
    if f is None:
        return "n/a"
    return _fmt_float(f, sig)


@functools.lru_cache(maxsize=1 << 13)  # labels repeat: bin edges shared by a metric's histograms
def _fmt_float(f: float, sig: int) -> str:
    if not math.isfinite(f):
        return "n/a"
    if f == 0:
        return "0"
    if f.is_integer() and abs(f) < 1e15:
        return f"{f:,.0f}" if abs(f) >= 10000 else f"{f:.0f}"
    mag = math.floor(math.log10(abs(f)))
    decimals = min(max(0, sig - 1 - mag), 8)
    text = f"{f:.{decimals}f}"
    if decimals == 0 and abs(f) >= 10000:
        text = f"{f:,.0f}"
    if text.startswith("-") and float(text.replace(",", "")) == 0:
        text = text[1:]
    return text


def with_unit(value_text: str, unit: str) -> str:
    if not unit:
        return value_text
    if unit in ("%", "\u2030"):
        return value_text + unit
    return f"{value_text} {unit}"


def titled(name: str, unit: str) -> str:
    """'Lead time (hours)'; the unit alone or the name alone when one is missing."""
    if name and unit:
        # "Moving range (mR), hours" rather than two bracketed parts in a row
        return f"{name}, {unit}" if name.endswith(")") else f"{name} ({unit})"
    return name or unit


def plural(n: int, word: str, words: str | None = None) -> str:
    return f"{n} {word if n == 1 else (words or word + 's')}"


# ------------------------------------------------------------------------------------------------
# Time positions
# ------------------------------------------------------------------------------------------------

_DATE_RE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


def parse_time(text: str) -> datetime:
    """An ISO date or datetime as an aware UTC datetime (naive values are taken as UTC)."""
    if isinstance(text, datetime | date):
        raise TypeError("x values must be ISO strings, not date objects")
    s = text.strip()
    if s.endswith("Z"):
        s = s[:-1] + "+00:00"
    d = datetime.fromisoformat(s)
    if d.tzinfo is None:
        return d.replace(tzinfo=UTC)
    return d.astimezone(UTC)


def time_text(text: str) -> str:
    """The x value as written into a spec: 'YYYY-MM-DD' as is (browsers read it as UTC), any
    datetime as UTC with an explicit 'Z' (a naive datetime would be read as local time)."""
    if not isinstance(text, str):
        raise TypeError(f"x values and event dates must be ISO strings, got {type(text).__name__}")
    s = text.strip()
    if _DATE_RE.match(s):
        return s
    return utc_text(parse_time(s))


_PLAIN_TIME = re.compile(r"\d{4}-\d{2}-\d{2}(?:[ T]\d{2}:\d{2}(?::\d{2})?)?")


def _plain_stamps(xs: Sequence[str]) -> np.ndarray | None:
    """The x values as datetime64[s] when every one is a plain date or a plain time to the
    minute or second with no offset (naive values are UTC, as :func:`parse_time` takes them);
    None otherwise (the one-by-one path handles the rest)."""
    if not xs or not all(type(x) is str for x in xs):
        return None
    if not all(map(_PLAIN_TIME.fullmatch, xs)):
        return None
    try:
        return np.array([x.replace(" ", "T") for x in xs], dtype="datetime64[s]")
    except ValueError:  # e.g. 2026-02-30: the one-by-one path says what is wrong
        return None


def utc_text(d: datetime) -> str:
    d = d.astimezone(UTC)
    if d.microsecond:
        return d.strftime("%Y-%m-%dT%H:%M:%S.") + f"{d.microsecond // 1000:03d}Z"
    return d.strftime("%Y-%m-%dT%H:%M:%SZ")


@functools.lru_cache(maxsize=32)
def x_axis(ctx: SeriesContext) -> XAxis:
    """The x positions of a series, shared by the charts of one metric (computed once)."""
    return XAxis(ctx)


class XAxis:
    """Positions along the x axis of a series chart.

    Time-based series place points at their dates (temporal, UTC scale); other series place
    point i at i (quantitative) and label the axis with the point labels.
    """

    def __init__(self, ctx: SeriesContext):
        self.ctx = ctx
        self.n = len(ctx.x)
        self.is_time = ctx.x_is_time
        self._mids: list | None = None
        self._stamps: np.ndarray | None = None  # whole-second UTC times, when all are plain
        self._dts: list[datetime] | None = None
        if self.is_time:
            given = ctx.stamps
            self._stamps = (
                given if given is not None and len(given) == self.n else _plain_stamps(ctx.x)
            )
            if self._stamps is not None:
                texts = np.datetime_as_string(self._stamps, unit="s").tolist()
                self.pos = [
                    x if _DATE_RE.match(x) else t + "Z" for x, t in zip(ctx.x, texts, strict=True)
                ]
            else:
                self.pos = [time_text(s) for s in ctx.x]
                self._dts = [parse_time(s) for s in ctx.x]  # refuses bad values now
        else:
            self.pos = list(range(self.n))

    @property
    def _dt(self) -> list[datetime]:
        """The positions as aware UTC datetimes (time-based series)."""
        if self._dts is None:
            self._dts = [parse_time(s) for s in self.ctx.x]
        return self._dts

    def has_seconds(self) -> bool:
        """Whether any time has seconds (or finer) past the minute."""
        if self._stamps is not None:
            return bool((self._stamps.astype("datetime64[m]") != self._stamps).any())
        return any(d.second or d.microsecond for d in self._dt)

    def at(self, i: int):
        return self.pos[i]

    def midpoints(self) -> list:
        """mids[i]: halfway between point i-1 and point i; mids[0] and mids[n] are the ends."""
        if self._mids is None:
            n = self.n
            if self.is_time and self._stamps is not None and n:
                us = self._stamps.astype("datetime64[us]")
                # whole seconds apart, so the half is a whole number of microseconds: the same
                # instant datetime arithmetic gives
                half = us[:-1] + (us[1:] - us[:-1]) // 2
                whole = half.astype("datetime64[s]") == half
                secs = np.datetime_as_string(half, unit="s").tolist()
                millis = np.datetime_as_string(half, unit="ms").tolist()
                mids = [self.pos[0]]
                mids += [
                    (a if w else b) + "Z"
                    for a, b, w in zip(secs, millis, whole.tolist(), strict=True)
                ]
                mids.append(self.pos[n - 1])
            elif self.is_time:
                dt = self._dt
                mids = [self.pos[0]] if n else []
                mids += [utc_text(dt[i - 1] + (dt[i] - dt[i - 1]) / 2) for i in range(1, n)]
                if n:
                    mids.append(self.pos[n - 1])
            else:
                mids = [i - 0.5 for i in range(n + 1)]
            self._mids = mids
        return self._mids

    def half_before(self, i: int):
        """Position halfway between point i-1 and point i (the first point: its own place)."""
        return self.midpoints()[max(0, min(i, self.n))]

    def half_after(self, i: int):
        """Position halfway between point i and point i+1 (the last point: its own place)."""
        return self.midpoints()[max(0, min(i + 1, self.n))]

    def axis_values(self) -> dict:
        """Placeholder values for a label axis (non-time series)."""
        labels = [str(s) for s in self.ctx.x]
        step = max(1, math.ceil(self.n / 30))
        values = list(range(0, self.n, step))
        expr = f"{_js_list(labels)}[datum.value] || ''"
        return {"x_values": values, "x_label_expr": expr}

    def in_range(self, when: str) -> bool:
        if not self.is_time or self.n == 0:
            return False
        try:
            d = parse_time(when)
        except ValueError:
            return False
        if self._stamps is not None:
            t = np.datetime64(d.replace(tzinfo=None), "us")
            return bool(self._stamps.min() <= t <= self._stamps.max())
        return min(self._dt) <= d <= max(self._dt)


def _js_list(items: list[str]) -> str:
    import json

    return json.dumps(items, ensure_ascii=True)


def x_encoding(is_time: bool, field: str = "x", title: str | None = None) -> dict:
    """The shared x channel of series charts (temporal UTC or indexed with label axis)."""
    if is_time:
        return vl.field(
            f"{field}:T",
            scale={"type": "utc"},
            # day ticks as "Mar 14" (Vega's default "Sat 14" hides the month), hours on a
            # 24-hour clock; coarser ticks keep Vega's own month and year labels
            axis={
                "title": title,
                "labelOverlap": True,
                "grid": False,
                "format": {"date": "%b %d", "hours": "%H:%M"},
            },
        )
    return vl.field(
        f"{field}:Q",
        scale={"zero": False, "nice": False},
        axis={
            "title": title,
            "values": list_slot("x_values"),
            "labelExpr": slot("x_label_expr"),
            "labelOverlap": True,
            "grid": False,
        },
    )


def stage_runs(stages: Sequence[str]) -> list[tuple[int, int, str]]:
    """Contiguous runs of equal stage names as (first index, last index, name)."""
    n = len(stages)
    if not n:
        return []
    starts = [0] + [i for i, a, b in zip(itertools.count(1), stages, stages[1:]) if a != b]
    ends = [i - 1 for i in starts[1:]] + [n - 1]
    return [(a, b, stages[a]) for a, b in zip(starts, ends, strict=True)]


# Phase names that say their kind of period; any other name is placed by where it lies.
_KIND_OF_STAGE = {"Baseline": style.PERIOD_BASELINE, "After": style.PERIOD_AFTER}


def period_kinds(names: Sequence[str]) -> list[str]:
    """The kind of period (``style.PERIOD_KINDS``) of each contiguous phase, in order: the
    baseline and after phases by name, any other phase by where it lies: before the first
    baseline phase, after an after phase, else between the periods."""
    kinds = [_KIND_OF_STAGE.get(n, "") for n in names]
    seen_baseline = seen_after = False
    out = []
    for k in kinds:
        if k == style.PERIOD_BASELINE:
            seen_baseline = True
        elif k == style.PERIOD_AFTER:
            seen_after = True
        elif seen_after:
            k = style.PERIOD_LATER
        elif seen_baseline:
            k = style.PERIOD_BETWEEN
        else:
            k = style.PERIOD_BEFORE
        out.append(k)
    return out


def band_rows(xa: XAxis, stages: Sequence[str]) -> list[dict]:
    """Background bands, one per contiguous phase, each filled by its kind of period
    (``style.PERIOD_FILLS``, through the band layer's scale) and named by it."""
    runs = stage_runs(stages)
    if not runs or (len(runs) == 1 and not runs[0][2]):
        return []
    rows = []
    total = sum(b - a + 1 for a, b, _ in runs)
    for (a, b, _name), kind in zip(runs, period_kinds([r[2] for r in runs]), strict=True):
        # A band too narrow for its name keeps it in the tooltip only (labels would overlap).
        wide = len(runs) == 1 or (b - a + 1) >= max(3, 0.1 * total)
        rows.append(
            {
                "x": xa.half_before(a),
                "x2": xa.half_after(b),
                "kind": kind,
                "label": kind[:1].upper() + kind[1:] if wide else "",
            }
        )
    return rows


def band_values(bands: Sequence[dict]) -> dict:
    """The band layer's per-chart values: the kinds of period drawn, in time order of kinds,
    with their fills (the legend names only the kinds the chart has)."""
    drawn = {b["kind"] for b in bands}
    kinds = [k for k in style.PERIOD_KINDS if k in drawn]
    return {"period_kinds": kinds, "period_fills": [style.PERIOD_FILLS[k] for k in kinds]}


# Event labels step down one line each over this many lines near the top of the plot.
EVENT_LINES = 3


def event_rows(xa: XAxis, events: Sequence[tuple[str, str]]) -> list[dict]:
    """Events within the plotted time range (outside it they would stretch the axis), in time
    order. Successive events step down one line each (``EVENT_LINES`` lines), so that labels of
    events close in time do not print over each other.

    A label reads rightwards from its rule in the left half of the chart and leftwards in the
    right half (``align``, the end of the text that sits at the rule), so that a recent event
    keeps room for its words. It may run as far as ``edge``: towards the neighbouring label on
    its line, the whole gap when that label faces away and half of it when it faces this one,
    or to the chart's end. Beyond that it is cut with an ellipsis, its whole text in the
    tooltip."""
    inside = sorted(
        (
            (parse_time(time_text(when)), time_text(when), str(label), str(when))
            for when, label in events
            if xa.in_range(when)
        ),
        key=lambda e: e[0],
    )
    if not inside:
        return []
    first, last = parse_time(xa.at(0)), parse_time(xa.at(xa.n - 1))
    span = (last - first).total_seconds() or 1.0
    leftwards = [(t - first).total_seconds() / span > 0.5 for t, *_ in inside]
    rows = []
    for k, (t, x, label, when) in enumerate(inside):
        j = k - EVENT_LINES if leftwards[k] else k + EVENT_LINES  # the neighbour on this line
        if not 0 <= j < len(inside):
            edge = first if leftwards[k] else last
        elif leftwards[j] == leftwards[k]:
            edge = inside[j][0]  # it faces the same way: the whole gap
        else:
            edge = t + (inside[j][0] - t) / 2  # it faces this one: half the gap each
        rows.append(
            {
                "x": x,
                "label": label,
                "when": when,
                "y": 16 + 12 * (k % EVENT_LINES),
                "align": "right" if leftwards[k] else "left",
                "edge": utc_text(edge),
            }
        )
    return rows


def headroom_rows(events: list[dict], height: int, values) -> list[dict]:
    """An invisible point that lifts the top of the y scale just enough to keep the event labels
    (``event_rows``, in lines from the top of the plot) above every plotted value and line,
    instead of printed over them; none when no event is drawn. ``values``: every y drawn."""
    if not events:
        return []
    v = np.asarray(values, dtype=float)
    v = v[np.isfinite(v)]
    if not v.size:
        return []
    lo, hi = float(v.min()), float(v.max())
    lines = min(EVENT_LINES, len(events))
    # of the plot's height: the label lines from 16 px down, 12 px each, and a margin for the
    # largest point marker
    share = (28 + 12 * lines) / height
    span = hi - lo if hi > lo else (abs(hi) or 1.0) * 0.1
    return [{"y": disp(hi + span * share / (1 - share))}]


def headroom_layer(y: dict) -> dict:
    """The layer drawing :func:`headroom_rows`: nothing visible, only the y scale's reach."""
    return vl.view("headroom", vl.mark("square", opacity=0, size=1), {"y": y})


def band_layers(is_time: bool, legend: bool = True) -> list[dict]:
    """Phase background bands, filled by kind of period and named in a legend ("period"),
    with their names at the top left. A chart beneath another (the dispersion chart of a
    control chart) draws the same bands under the same legend."""
    x = x_encoding(is_time)
    rect = vl.view(
        "bands",
        vl.mark("rect", opacity=1),
        {
            "x": x,
            "x2": {"field": "x2"},
            "fill": vl.field(
                "kind:N",
                scale={"domain": list_slot("period_kinds"), "range": list_slot("period_fills")},
                # above the plot: beside the marks' legend below it, the two ran off a
                # phone's screen; in two columns on a narrow chart
                legend={
                    "title": "period",
                    "symbolType": "square",
                    "orient": "top",
                    "columns": {"expr": "width < 560 ? 2 : 5"},
                    "symbolStrokeColor": style.LIMIT,
                    "symbolStrokeWidth": 1,
                }
                if legend
                else None,
            ),
            "tooltip": [vl.tip("kind:N", "period")],
        },
    )
    # a name no wider than its band (cut with an ellipsis), so neighbouring names never overlap
    ends = ("toDate(datum.x2)", "toDate(datum.x)") if is_time else ("datum.x2", "datum.x")
    room = f"max(12, scale('x', {ends[0]}) - scale('x', {ends[1]}) - 6)"
    label = vl.view(
        "bands",
        vl.mark(
            "text", align="left", baseline="top", dx=3, dy=2, fontWeight=600, limit={"expr": room}
        ),
        {
            "x": x_encoding(is_time),
            "y": {"value": 0},
            "text": vl.field("label:N"),
            "tooltip": [vl.tip("kind:N", "period")],
        },
    )
    return [rect, label]


def event_layers(is_time: bool, labelled: bool = True) -> list[dict]:
    """Events as dotted vertical rules labelled near the top (time-based series only); the
    chart beneath a control chart draws the rules without the labels, which the chart above
    already prints."""
    if not is_time:
        return []
    rule = vl.view(
        "events",
        vl.mark("rule", color=style.EVENT, strokeDash=list(style.DASH_EVENT), strokeWidth=1.5),
        {
            "x": x_encoding(is_time),
            "tooltip": [vl.tip("when:N", "date"), vl.tip("label:N", "event")],
        },
    )
    label = vl.view(
        "events",
        vl.mark(
            "text",
            baseline="top",
            color=style.EVENT,
            fontStyle="italic",
            # right of the rule or left of it, no further than its edge (event_rows), in pixels
            align={"expr": "datum.align"},
            dx={"expr": "datum.align == 'right' ? -3 : 3"},
            limit={
                "expr": "max(12, abs(scale('x', toDate(datum.edge)) - "
                "scale('x', toDate(datum.x))) - 8)"
            },
        ),
        {
            "x": x_encoding(is_time),
            "y": vl.field("y:Q", scale=None),
            "text": vl.field("label:N"),
            "tooltip": [vl.tip("when:N", "date"), vl.tip("label:N", "event")],
        },
    )
    return [rule, label] if labelled else [rule]
