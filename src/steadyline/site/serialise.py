"""Turn results into deterministic JSON.

Dataclasses, numpy arrays and scalars, dates and paths become plain JSON; NaN and infinities
become null (JSON has no NaN, and `allow_nan=False` guards against a stray one). Keys are sorted
and floats are rounded to 10 significant digits so that the same inputs give byte-identical
files on every machine.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import functools
import json
import math
from pathlib import Path
from typing import Any

import numpy as np
import orjson

SIGNIFICANT = 10


def _num(x: float) -> float | int | None:
    if not math.isfinite(x):
        return None
    if x == 0:
        return 0.0
    r = float(f"{x:.{SIGNIFICANT}g}")
    return r


def rounded_number(x: float) -> float | None:
    """A number as results.json writes it (None for NaN and infinities), for other files that
    must agree with it."""
    return _num(x)


# While a document is converted, its float arrays wait here as (empty list placed in the
# document, values) and are rounded together at the end, in one pass (see _batched): a project's
# results hold a few hundred short arrays, and numpy's cost per call would dominate.
_PENDING: list[tuple[list, np.ndarray]] | None = None


def _array(a: np.ndarray) -> list:
    """A numpy array as a list, floats rounded to SIGNIFICANT digits, vectorised."""
    if a.dtype.kind == "b":
        return a.tolist()
    if a.dtype.kind in "iu":
        return a.tolist()
    if a.dtype.kind != "f":
        return [plain(v) for v in a.tolist()]
    if _PENDING is not None and a.ndim == 1:
        slot: list = []
        _PENDING.append((slot, np.asarray(a, dtype=float).ravel()))
        return slot
    return _rounded(a.astype(float))


# While a document is converted, the results (dataclasses) met so far, by id, with the object
# itself kept so that its id stays its own: a result that appears twice in a document (the
# history entry repeats the project entry's control chart) is converted once.
_SEEN: dict[int, tuple[Any, Any]] | None = None


def _batched(obj: Any) -> Any:
    """:func:`plain`, with every float array of the document rounded in one pass; the same
    result as rounding them one by one (the rounding is elementwise)."""
    global _PENDING, _SEEN
    outer, _PENDING = _PENDING, []
    outer_seen, _SEEN = _SEEN, {}
    try:
        data = plain(obj)
        pending = _PENDING
    finally:
        _PENDING, _SEEN = outer, outer_seen
    if pending:
        values = _rounded(np.concatenate([x for _, x in pending]))
        start = 0
        for slot, x in pending:
            slot.extend(values[start : start + x.size])
            start += x.size
    return data


def _rounded(x: np.ndarray) -> list:
    if x.ndim != 1:  # a table: row by row
        return [_rounded(row) for row in x] if x.ndim > 1 else _rounded(x.ravel())[0]
    finite = np.isfinite(x)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        mag = np.floor(np.log10(np.abs(x)))
        mag = np.where(np.isfinite(mag), mag, 0.0)
        scale = 10.0 ** (SIGNIFICANT - 1 - mag)
        rounded = np.round(x * scale) / scale
    # Where scaling is not exact enough (huge or tiny magnitudes), round one by one.
    odd = finite & ~np.isfinite(rounded)
    out = rounded.tolist()
    for i in np.flatnonzero(odd).tolist():
        out[i] = _num(float(x[i]))
    if not finite.all():
        for i in np.flatnonzero(~finite).tolist():
            out[i] = None
    for i in np.flatnonzero(rounded == 0).tolist():
        out[i] = 0.0  # -0.0 written as 0.0
    return out


_PLAIN_LIST_TYPES = frozenset((int, str))
_FLOAT_ONLY = frozenset((float,))
_FLOAT_OR_NONE = frozenset((float, type(None)))
_BOOL_ONLY = frozenset((bool,))


class Plain(dict):
    """A dict its maker built in JSON form already (strings, ints, None, lists of those):
    :func:`plain` passes it through without looking inside."""


_DATACLASS_FIELDS: dict[type, tuple[str, ...]] = {}
_PLAIN_ONLY = frozenset((Plain,))
# values plain() returns unchanged: tested for inline to save a call per value
_AS_IS = frozenset((str, int, bool, type(None)))


@functools.cache
def _field_names(cls: type) -> tuple[str, ...]:
    return tuple(f.name for f in dataclasses.fields(cls))


# Fields written only when they hold something (a field added for an option that most results
# lack, e.g. ControlChart.set_aside, marked with metadata {"json": "omit-none"}): results.json
# of everything without the option stays as it was.
_OMIT_NONE: dict[type, tuple[str, ...]] = {}


def _omitted(cls: type) -> tuple[str, ...]:
    names = _OMIT_NONE.get(cls)
    if names is None:
        names = _OMIT_NONE[cls] = tuple(
            f.name for f in dataclasses.fields(cls) if f.metadata.get("json") == "omit-none"
        )
    return names


def _drop_none(cls: type, out: dict) -> dict:
    for name in _omitted(cls):
        if out.get(name, 0) is None:
            del out[name]
    return out


def plain(obj: Any) -> Any:
    """A JSON-able copy of *obj*."""
    # One body on purpose: it is called for every value of every results.json, and the exact
    # types met most often are answered before the general checks without a further call.
    t: type = type(obj)
    # the common exact types first (same results as the general checks below)
    if t is str or obj is None or t is bool:
        return obj
    if t is int:
        return obj
    if t is float:
        return _num(obj)
    if t is Plain:
        return obj
    names = _DATACLASS_FIELDS.get(t)
    if names is not None:  # a dataclass met before: its fields, without the checks below
        if _SEEN is not None:
            seen = _SEEN.get(id(obj))
            if seen is not None:
                return seen[1]
        out = {
            name: v if type(v) in _AS_IS else plain(v)
            for name, v in zip(names, map(obj.__getattribute__, names), strict=True)
        }
        if _omitted(t):
            _drop_none(t, out)
        if _SEEN is not None:
            _SEEN[id(obj)] = (obj, out)
        return out
    if t is dict:
        return {
            k if type(k) is str else str(k): v if type(v) in _AS_IS else plain(v)
            for k, v in obj.items()
        }
    if t is list or t is tuple:
        types = set(map(type, obj))
        if types <= _PLAIN_LIST_TYPES or types == _BOOL_ONLY or types == _PLAIN_ONLY:
            return list(obj)  # indices, labels, flags, ready-made rows: nothing to convert
        if types == _FLOAT_ONLY or types == _FLOAT_OR_NONE:  # None -> nan -> null
            return _array(np.array(obj, dtype=float))
        return [plain(v) for v in obj]
    if isinstance(obj, bool | str):
        return obj
    if isinstance(obj, int | np.integer) and not isinstance(obj, bool):
        return int(obj)
    if isinstance(obj, float | np.floating):
        return _num(float(obj))
    if isinstance(obj, np.bool_):
        return bool(obj)
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        _DATACLASS_FIELDS[t] = _field_names(t)
        return _drop_none(t, {name: plain(getattr(obj, name)) for name in _field_names(t)})
    if isinstance(obj, dict):
        return {str(k): plain(v) for k, v in obj.items()}
    if isinstance(obj, np.ndarray):
        return _array(obj)
    if isinstance(obj, list | tuple):
        if all(type(v) is int or type(v) is str for v in obj):
            return list(obj)  # indices and labels: nothing to convert
        if obj and all(type(v) is float for v in obj):
            return _array(np.asarray(obj, dtype=float))
        return [plain(v) for v in obj]
    if type(obj).__name__ == "Timestamp":  # pandas, without importing it here
        return obj.isoformat()
    if isinstance(obj, dt.datetime | dt.date):
        return obj.isoformat()
    if isinstance(obj, Path):
        return obj.as_posix()
    if type(obj).__name__ == "NaTType":
        return None
    raise TypeError(f"cannot serialise {type(obj).__name__}")


def dumps(obj: Any, *, indent: int | None = 1) -> str:
    if indent is None:
        return _encode(_batched(obj))
    return json.dumps(
        _batched(obj),
        sort_keys=True,
        indent=indent,
        ensure_ascii=False,
        allow_nan=False,
        separators=(",", ": ") if indent else (",", ":"),
    )


def dumps_bytes(obj: Any) -> bytes:
    """:func:`dumps` without indent, as UTF-8 bytes ending in a newline (a file's content)."""
    return _encode_bytes(_batched(obj)) + b"\n"


def _encode_bytes(data: Any) -> bytes:
    try:
        return orjson.dumps(data, option=orjson.OPT_SORT_KEYS)
    except orjson.JSONEncodeError:
        return json.dumps(
            data, sort_keys=True, ensure_ascii=False, allow_nan=False, separators=(",", ":")
        ).encode("utf-8")


def compact_bytes(spec: dict) -> bytes:
    """Compact, sorted JSON of an already JSON-able dict (chart specs), as UTF-8 bytes."""
    return _encode_bytes(spec)


def _encode(data: Any) -> str:
    """Compact JSON text with sorted keys, written by orjson (several times quicker than the
    standard library's encoder on long lists of numbers); floats in their shortest exact form.
    Integers beyond 64 bits, which orjson refuses, go through the standard encoder."""
    return _encode_bytes(data).decode("utf-8")


def escape_for_script(text: str) -> str:
    """Make JSON text safe inside a script element."""
    return (
        text.replace("<", "\\u003c")
        .replace(">", "\\u003e")
        .replace("&", "\\u0026")
        .replace("\u2028", "\\u2028")
        .replace("\u2029", "\\u2029")
    )
