"""How a number is written on the pages, in their tables and in the data downloads' cells:
one way everywhere (significant digits, the unit after it, a dash for a missing value).
"""

from __future__ import annotations

import math

import numpy as np


def fmt(v: float | None, unit: str = "", digits: int = 4) -> str:
    if v is None or not (math.isfinite(v) if type(v) is float else np.isfinite(v)):
        return "—"
    a = abs(v)
    text = f"{v:.{digits}g}" if a >= 1e-3 or a == 0 else f"{v:.3g}"
    if "e" in text:
        text = f"{v:,.0f}" if a >= 1 else f"{v:.2e}"
    return f"{text} {unit}".strip()


def pct(v: float | None) -> str:
    return "—" if v is None or not np.isfinite(v) else f"{100 * v:.2f}%"
