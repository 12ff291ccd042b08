"""Times read from text cells: the plain fixed-width ISO 8601 forms in bulk (from pyarrow's
buffers or by numpy), any other ISO 8601 form by pandas, or the metric's ``date_format``;
UTC offsets and the metric's ``timezone``; the years that can be charted. Each cell that is no
time, blank or out of range is named with its line.

The rules (documented in the README):
- default: ISO 8601 dates or date-times (``2026-03-31``, ``2026-03-31T14:05``, with an optional
  UTC offset such as ``+01:00`` or ``Z``);
- ``[metric.csv] date_format`` gives an explicit strftime format instead;
- ``[metric.csv] timezone``: naive times are read in that zone, times with an offset are converted
  to it; all times are then shown as wall-clock times of that zone. Without it, times with an
  offset are converted to UTC, and a file that mixes times with and without an offset is refused.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from .. import columns
from ..config import MetricSpec
from .cells import _text
from .problems import _Rows

_OFFSET_RE = re.compile(r"(?:Z|[+-]\d{2}:?\d{2})$")


# Times are kept as nanosecond timestamps, which cover the years 1677 to 2262; dates outside a
# slightly narrower window are refused with a message instead of overflowing.
_EARLIEST, _LATEST = pd.Timestamp("1678-01-01"), pd.Timestamp("2261-12-31")


def _in_range(t: pd.Series) -> tuple[pd.Series, pd.Series]:
    """(t as datetime64[ns] with out-of-range times as NaT, mask of the out-of-range times)."""
    if len(t) and t.dt.tz is not None:
        t = t.dt.tz_localize(None)
    far = t.notna() & ((t < _EARLIEST) | (t > _LATEST))
    return t.where(~far).astype("datetime64[ns]"), far


def _parse(s: pd.Series, **kw) -> pd.Series:
    try:
        t = pd.to_datetime(s, errors="coerce", **kw)
    except (ValueError, OverflowError, TypeError):  # unparseable as a whole: one by one
        t = pd.Series([_parse_one(x, kw) for x in s], index=s.index, dtype=object)
        t = pd.to_datetime(t, errors="coerce", utc=True)
    if t.dtype == object:  # several UTC offsets from a %z format: make them comparable
        t = pd.to_datetime(t, errors="coerce", utc=True)
    return t


def _parse_one(x, kw):
    try:
        return pd.to_datetime(x, errors="coerce", **kw)
    except (ValueError, OverflowError, TypeError):
        return pd.NaT


def _quick_naive(s: pd.Series) -> pd.Series | None:
    """The whole column parsed at once when every cell is a plain ISO 8601 time, else None."""
    try:
        # cache=False: pandas would otherwise look for repeated cells value by value first
        t = pd.to_datetime(s, format="ISO8601", cache=False)
    except (ValueError, OverflowError, TypeError):
        return None
    if not pd.api.types.is_datetime64_dtype(t):
        return None
    if getattr(t.dt, "tz", None) is not None or t.isna().any():
        return None
    return t


def _within_years(a: np.ndarray) -> bool:
    """Whether every time of a parsed naive column lies within the charted years."""
    return not a.size or (
        a.min() >= _EARLIEST.to_datetime64() and a.max() <= _LATEST.to_datetime64()
    )


# The fixed-width ISO 8601 forms read by numpy: per length, the places of digits and of the
# separators ("T" or a space between date and time).
_ISO_DIGITS = {10: [0, 1, 2, 3, 5, 6, 8, 9]}
_ISO_DIGITS[16] = _ISO_DIGITS[10] + [11, 12, 14, 15]
_ISO_DIGITS[19] = _ISO_DIGITS[16] + [17, 18]
_ISO_MARKS = {10: {4: b"-", 7: b"-"}}
_ISO_MARKS[16] = _ISO_MARKS[10] | {10: b"T ", 13: b":"}
_ISO_MARKS[19] = _ISO_MARKS[16] | {16: b":"}


def _plain_iso(cells: np.ndarray) -> np.ndarray | None:
    """The cells as datetime64[s] when every one is written in the same plain form
    (YYYY-MM-DD, YYYY-MM-DDTHH:MM or YYYY-MM-DDTHH:MM:SS, "T" or a space), else None: the
    form is checked for the whole column at once on its bytes, and numpy reads the dates
    (refusing impossible ones, as pandas does)."""
    if cells.dtype != object or not cells.size or type(cells[0]) is not str:
        return None
    width = len(cells[0])
    if width not in _ISO_DIGITS:
        return None
    try:
        raw = ("\n".join(cells.tolist()) + "\n").encode("ascii")
    except (UnicodeEncodeError, TypeError):
        return None
    if len(raw) != (width + 1) * cells.size:
        return None
    grid = np.frombuffer(raw, dtype=np.uint8).reshape(cells.size, width + 1)
    digits = grid[:, _ISO_DIGITS[width]]
    if not ((digits >= 48) & (digits <= 57)).all() or not (grid[:, width] == 10).all():
        return None
    for at, allowed in _ISO_MARKS[width].items():
        if not np.isin(grid[:, at], np.frombuffer(allowed, dtype=np.uint8)).all():
            return None
    try:
        return (
            np.ascontiguousarray(grid[:, :width]).view(f"S{width}").ravel().astype("datetime64[s]")
        )
    except ValueError:  # an impossible date or time, such as 2026-02-30
        return None


def _times(df: pd.DataFrame, col: str, spec: MetricSpec, out: _Rows) -> pd.Series:
    """The column's cells as naive wall-clock times (datetime64[ns], NaT where a cell is blank
    or refused), each problem added to *out* with its lines."""
    s = df[col]
    quick = None
    if not spec.csv.date_format:
        done, s, quick = _quick_times(s)
        if done is not None:
            return done
    s = _text(s)
    blank = s == ""
    out.rows(
        list(df.index[blank]),
        f"column '{col}'",
        "blank date; the row is left out",
        severity="warning",
    )
    if spec.csv.date_format:
        t, far = _formatted_times(s, blank, spec)
        expected = f"a date in the format {spec.csv.date_format!r}"
    else:
        got = _iso_times(s, blank, quick, col, spec, out)
        if got is None:
            return pd.Series(pd.NaT, index=df.index, dtype="datetime64[ns]")
        t, far = got
        expected = "an ISO 8601 date like 2026-03-31 (or set [metric.csv] date_format)"
    _name_bad_times(s, t, blank, far, expected, col, out)
    return t.astype("datetime64[ns]")


def _quick_times(s: pd.Series) -> tuple[pd.Series | None, pd.Series, pd.Series | None]:
    """(the times, when the column is the common one: no blank cell and every cell a plain
    ISO 8601 time within the charted years, with nothing to report, else None; the column,
    as stripped cells when it had to be read as text; the column parsed by pandas' ISO 8601
    reader when every cell is a naive time, else None)."""
    plain = None
    if columns.is_arrow(s):  # the fixed-width forms, read from the column's bytes
        plain = columns.plain_iso(columns.arrow_of(s), _ISO_DIGITS, _ISO_MARKS)
    if plain is None:
        s = _text(s)
        plain = _plain_iso(s.to_numpy())  # the fixed-width forms, read by numpy
    if plain is not None and _within_years(plain):
        return pd.Series(plain.astype("datetime64[ns]"), index=s.index), s, None
    s = _text(s)
    quick = None
    if not (s.to_numpy() == "").any():
        quick = _quick_naive(s)  # any other ISO 8601 form, read by pandas
        if quick is not None and _within_years(quick.to_numpy()):
            return quick.astype("datetime64[ns]"), s, quick
    return None, s, quick


def _formatted_times(
    s: pd.Series, blank: pd.Series, spec: MetricSpec
) -> tuple[pd.Series, pd.Series]:
    """(times read by the metric's date_format, mask of the times outside the charted years)."""
    far = pd.Series(False, index=s.index)
    parsed = _parse(s.where(~blank), format=spec.csv.date_format)
    # Plain times are wall-clock times of the metric's zone already: kept as they are.
    if len(parsed) and parsed.dt.tz is not None:  # the format has %z
        parsed = parsed.dt.tz_convert(spec.csv.timezone or "UTC")
    t, far_ = _in_range(parsed)
    far |= far_
    return t, far


def _iso_times(
    s: pd.Series,
    blank: pd.Series,
    quick: pd.Series | None,
    col: str,
    spec: MetricSpec,
    out: _Rows,
) -> tuple[pd.Series, pd.Series] | None:
    """(times read as ISO 8601, those with a UTC offset converted to the metric's zone; mask
    of the times outside the charted years), or None when the file mixes times with and
    without an offset and no zone is set (the problem added to *out*)."""
    tz = spec.csv.timezone
    t = pd.Series(pd.NaT, index=s.index, dtype="datetime64[ns]")
    far = pd.Series(False, index=s.index)
    if quick is not None:
        aware = pd.Series(False, index=s.index)  # every cell parsed as a plain time
    else:
        aware = s.str.contains(_OFFSET_RE) & ~blank
    if aware.any() and (~aware & ~blank).any() and not tz:
        first_naive = list(s.index[~aware & ~blank])
        first_aware = list(s.index[aware])
        out.add(
            min(first_naive[0], first_aware[0]),
            f"column '{col}'",
            "the file mixes times with and without a UTC offset; write every time the "
            "same way, or set [metric.csv] timezone to say which zone the plain times "
            "are in",
        )
        return None
    zone = tz or "UTC"
    if aware.any():
        ta = _parse(s[aware], format="ISO8601", utc=True)
        ta, far_a = _in_range(ta)  # UTC wall-clock, range-checked before conversion
        ta = ta.dt.tz_localize("UTC").dt.tz_convert(zone)
        ta, far_b = _in_range(ta)
        t[aware] = ta
        far[aware] = far_a | far_b
    naive = ~aware & ~blank
    if quick is not None:
        t, far = _in_range(quick)
    elif naive.any():
        tn, far_n = _in_range(_parse(s[naive], format="ISO8601"))
        t[naive] = tn
        far[naive] = far_n
    return t, far


def _name_bad_times(
    s: pd.Series,
    t: pd.Series,
    blank: pd.Series,
    far: pd.Series,
    expected: str,
    col: str,
    out: _Rows,
) -> None:
    """The cells outside the charted years, the workbook's cells stored as numbers, and the
    cells that are no time, each kind named with its lines."""
    index = s.index
    out.rows(
        list(index[far]),
        f"column '{col}'",
        f"{s[far].iloc[0].strip()!r} is outside the years 1678 to 2261 that can be "
        "charted; check the date"
        if far.any()
        else "",
    )
    bad = t.isna() & ~blank & ~far
    numbers = out.number_cells.get(col)
    if numbers and bad.any():  # a workbook's cells stored as numbers, not dates
        is_number = bad & index.isin(numbers)
        out.rows(
            list(index[is_number]),
            f"column '{col}'",
            f"{s[is_number].iloc[0]!r} is a number, not a date; give the column a date "
            "format in the workbook, or write the dates as text"
            if is_number.any()
            else "",
        )
        bad &= ~is_number
    out.rows(
        list(index[bad]),
        f"column '{col}'",
        f"{s[bad].iloc[0].strip()!r} is not {expected}" if bad.any() else "",
    )
