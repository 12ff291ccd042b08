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
import re
from pathlib import Path
from typing import Any

import numpy as np

SIGNIFICANT = 10


def _num(x: float) -> float | int | None:
    if not math.isfinite(x):
        return None
    if x == 0:
        return 0.0
    r = float(f"{x:.{SIGNIFICANT}g}")
    return r


def _array(a: np.ndarray) -> list:
    """A numpy array as a list, floats rounded to SIGNIFICANT digits, vectorised."""
    if a.dtype.kind == "b":
        return a.tolist()
    if a.dtype.kind in "iu":
        return a.tolist()
    if a.dtype.kind != "f":
        return [plain(v) for v in a.tolist()]
    x = a.astype(float)
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
    return [0.0 if v == 0 else v for v in out] if (rounded == 0).any() else out


_PLAIN_LIST_TYPES = frozenset((int, str))
_FLOAT_ONLY = frozenset((float,))
_FLOAT_OR_NONE = frozenset((float, type(None)))
_BOOL_ONLY = frozenset((bool,))


@functools.cache
def _field_names(cls: type) -> tuple[str, ...]:
    return tuple(f.name for f in dataclasses.fields(cls))


def plain(obj: Any) -> Any:
    """A JSON-able copy of *obj*."""
    t = type(obj)
    # the common exact types first (same results as the general checks below)
    if t is str or obj is None or t is bool:
        return obj
    if t is int:
        return obj
    if t is float:
        return _num(obj)
    if t is dict:
        return {str(k): plain(v) for k, v in obj.items()}
    if t is list or t is tuple:
        types = set(map(type, obj))
        if types <= _PLAIN_LIST_TYPES:
            return list(obj)  # indices and labels: nothing to convert
        if types == _FLOAT_ONLY:
            return _array(np.asarray(obj, dtype=float))
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
        return {name: plain(getattr(obj, name)) for name in _field_names(t)}
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
    # Without indent, json's C encoder does the work (several times faster than indenting).
    if indent is None:
        return _dumps_compact(obj)
    return json.dumps(plain(obj), sort_keys=True, indent=indent, ensure_ascii=False,
                      allow_nan=False, separators=(",", ": ") if indent else (",", ":"))


# Compact dumps: long lists of floats (control limits repeat one value per point) are written
# by _float_list_text, each distinct value converted once, and put in place of a token.
_LONG_LIST = 32
_TOKEN = "\x01steadyline-float-list-{}\x01"
_TOKEN_TEXT = re.compile(r'"\\u0001steadyline-float-list-(\d+)\\u0001"')


def _float_list_text(values: list) -> str:
    """JSON text of a list of finite floats and Nones, as json.dumps writes it (float repr,
    null, ',' between items)."""
    distinct = set(values)
    if len(distinct) * 4 <= len(values) and 0.0 not in distinct:  # 0.0 == -0.0: not merged
        text = {v: "null" if v is None else repr(v) for v in distinct}
        return "[" + ",".join([text[v] for v in values]) + "]"
    if None in distinct:
        return "[" + ",".join(["null" if v is None else repr(v) for v in values]) + "]"
    return "[" + ",".join(map(repr, values)) + "]"


def _plain_lists(obj: Any, lists: list[str]) -> Any:
    """:func:`plain`, with each long list of floats replaced by a token and its JSON text
    appended to ``lists``."""
    t = type(obj)
    if t is dict:
        return {str(k): _plain_lists(v, lists) for k, v in obj.items()}
    if t is list or t is tuple:
        types = set(map(type, obj))
        if types == _FLOAT_ONLY:
            return _token(_array(np.asarray(obj, dtype=float)), lists)
        if types <= _PLAIN_LIST_TYPES or types == _BOOL_ONLY:
            return list(obj)
        if types == _FLOAT_OR_NONE:  # None -> nan -> null, as plain() writes it
            return _token(_array(np.array(obj, dtype=float)), lists)
        return [_plain_lists(v, lists) for v in obj]
    if t is np.ndarray and obj.dtype.kind == "f":
        return _token(_array(obj), lists)
    return plain(obj)


def _token(values: list, lists: list[str]) -> Any:
    if len(values) < _LONG_LIST:
        return values
    lists.append(_float_list_text(values))
    return _TOKEN.format(len(lists) - 1)


def _dumps_compact(obj: Any) -> str:
    lists: list[str] = []
    data = _plain_lists(obj, lists)
    text = json.dumps(data, sort_keys=True, ensure_ascii=False, allow_nan=False,
                      separators=(",", ":"))
    if not lists:
        return text
    found = [int(k) for k in _TOKEN_TEXT.findall(text)]
    if sorted(found) != list(range(len(lists))):
        # a text in the data looks like a token: write it the plain way
        return json.dumps(plain(obj), sort_keys=True, ensure_ascii=False, allow_nan=False,
                          separators=(",", ":"))
    return _TOKEN_TEXT.sub(lambda mt: lists[int(mt.group(1))], text)


def compact(spec: dict) -> str:
    """Compact, sorted JSON of an already JSON-able dict (chart specs), NaN refused."""
    return json.dumps(spec, sort_keys=True, ensure_ascii=False, allow_nan=False,
                      separators=(",", ":"))


def escape_for_script(text: str) -> str:
    """Make JSON text safe inside a script element."""
    return (text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
            .replace("\u2028", "\\u2028").replace("\u2029", "\\u2029"))
