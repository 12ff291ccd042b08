"""Numbers and words as the charts write them: plain floats for JSON (None for missing), about
six significant digits in a spec's data rows (computed for whole arrays with numpy), labels,
units and plurals.
"""

from __future__ import annotations

import functools
import math

import numpy as np


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
