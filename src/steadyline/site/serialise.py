"""Turn results into deterministic JSON.

Dataclasses, numpy arrays and scalars, dates and paths become plain JSON; NaN and infinities
become null (JSON has no NaN, and `allow_nan=False` guards against a stray one). Keys are sorted
and floats are rounded to 10 significant digits so that the same inputs give byte-identical
files on every machine.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import json
import math
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

SIGNIFICANT = 10


def _num(x: float) -> float | int | None:
    if not math.isfinite(x):
        return None
    if x == 0:
        return 0.0
    r = float(f"{x:.{SIGNIFICANT}g}")
    return r


def plain(obj: Any) -> Any:
    """A JSON-able copy of *obj*."""
    if obj is None or isinstance(obj, bool | str):
        return obj
    if isinstance(obj, int | np.integer) and not isinstance(obj, bool):
        return int(obj)
    if isinstance(obj, float | np.floating):
        return _num(float(obj))
    if isinstance(obj, np.bool_):
        return bool(obj)
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        return {f.name: plain(getattr(obj, f.name)) for f in dataclasses.fields(obj)}
    if isinstance(obj, dict):
        return {str(k): plain(v) for k, v in obj.items()}
    if isinstance(obj, np.ndarray):
        return [plain(v) for v in obj.tolist()]
    if isinstance(obj, list | tuple):
        return [plain(v) for v in obj]
    if isinstance(obj, pd.Timestamp):
        return None if pd.isna(obj) else obj.isoformat()
    if isinstance(obj, dt.datetime | dt.date):
        return obj.isoformat()
    if isinstance(obj, Path):
        return obj.as_posix()
    if obj is pd.NaT:
        return None
    raise TypeError(f"cannot serialise {type(obj).__name__}")


def dumps(obj: Any, *, indent: int | None = 1) -> str:
    return json.dumps(plain(obj), sort_keys=True, indent=indent, ensure_ascii=False,
                      allow_nan=False, separators=(",", ": ") if indent else (",", ":"))


def compact(spec: dict) -> str:
    """Compact, sorted JSON of an already JSON-able dict (chart specs), NaN refused."""
    return json.dumps(spec, sort_keys=True, ensure_ascii=False, allow_nan=False,
                      separators=(",", ":"))


def script_json(obj: Any) -> str:
    """JSON for a <script type="application/json"> block: cannot close the tag or open a comment.

    '<', '>' and '&' are written as unicode escapes, which JSON.parse reads back unchanged.
    """
    return escape_for_script(json.dumps(plain(obj), sort_keys=True, ensure_ascii=False,
                                        allow_nan=False, separators=(",", ":")))


def escape_for_script(text: str) -> str:
    """Make JSON text safe inside a script element."""
    return (text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")
            .replace("\u2028", "\\u2028").replace("\u2029", "\\u2029"))
