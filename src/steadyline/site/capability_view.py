"""The capability block of a page: the figures of a :class:`~steadyline.stats.results.Capability`
arranged by the question each answers, with a drawing of where the process sits in its
specification.

The block reads the result only (never chart specs or data frames) and returns plain values for
the template (``_macros.html``, ``fit_block``):

- ``ruler``: the specification window, the target, the mean and the span of mean ± 3 sigma
  (short-term and all-values), as percentages of one drawn scale, with a sentence that says the
  same in words for readers who do not see the drawing;
- ``tiles``: three questions, each with its lead figure and the lines that back it:
  how the spread compares with the width of the specification (Cp, Pp), how much room is left on
  the nearer side (Cpk with its interval, Ppk), and how much falls outside (counted in the data,
  and expected under a normal model from each sigma);
- ``basis``: what the figures are computed from, and the normality check behind the trust
  verdict.
"""

from __future__ import annotations

import math

from ..charts.base import plural
from ..stats.compare import format_p_value
from ..stats.distribution import p_below_text
from .figures_text import fmt

# The drawn scale reaches this share of the widest span beyond it on each side, so that the
# marks at its ends are not cut by the edge.
_MARGIN = 0.06


def _num(v) -> float | None:
    if v is None:
        return None
    f = float(v)
    return f if math.isfinite(f) else None


def _share(ppm: float | None) -> str:
    """A share out of specification as a percentage and per million, e.g. '0.41% (4,100 per
    million)'; tiny shares in per million only."""
    if ppm is None:
        return "—"
    if ppm == 0:
        return "none"
    per_million = f"{ppm:,.0f}" if ppm >= 10 else fmt(ppm, digits=2)
    if ppm < 1:
        return f"{per_million} per million"
    return f"{fmt(ppm / 1e4, digits=2)}% ({per_million} per million)"


def _ruler(c, unit: str) -> dict | None:
    mean = _num(c.mean)
    lsl, usl, target = _num(c.lsl), _num(c.usl), _num(c.target)
    sw, so = _num(c.sigma_within), _num(c.sigma_overall)
    if mean is None:
        return None
    spans = []
    if sw is not None and sw > 0:
        spans.append(("short", "mean ± 3 sigma, short-term", mean - 3 * sw, mean + 3 * sw))
    if so is not None and so > 0:
        spans.append(("all", "mean ± 3 sigma, all values", mean - 3 * so, mean + 3 * so))
    points = [mean] + [v for v in (lsl, usl, target) if v is not None]
    points += [v for s in spans for v in s[2:]]
    lo, hi = min(points), max(points)
    if hi <= lo:
        return None
    pad = (hi - lo) * _MARGIN
    lo, hi = lo - pad, hi + pad

    def at(v: float) -> float:
        return round(100 * (v - lo) / (hi - lo), 2)

    window = {
        "from": at(lsl) if lsl is not None else 0.0,
        "to": at(usl) if usl is not None else 100.0,
    }
    marks = [{"kind": "mean", "at": at(mean), "label": f"mean {fmt(mean, unit, 3)}"}]
    if target is not None:
        marks.append(
            {"kind": "target", "at": at(target), "label": f"target {fmt(target, unit, 3)}"}
        )
    limits = []
    for kind, v, name in (("lower", lsl, "lower spec limit"), ("upper", usl, "upper spec limit")):
        if v is not None:
            limits.append({"kind": kind, "at": at(v), "label": f"{name} {fmt(v, unit, 3)}"})
    bars = [
        {
            "kind": k,
            "label": label,
            "from": at(a),
            "to": at(b),
            "text": f"{label}: {fmt(a, unit, 3)} to {fmt(b, unit, 3)}",  # also in the words
        }
        for k, label, a, b in spans
    ]
    words: list[str] = [
        f"The specification runs from {fmt(lsl, unit, 3) if lsl is not None else 'no lower limit'}"
        f" to {fmt(usl, unit, 3) if usl is not None else 'no upper limit'}"
    ]
    words.append(f"the mean is {fmt(mean, unit, 3)}")
    words += [f"{label}: {fmt(a, unit, 3)} to {fmt(b, unit, 3)}" for _, label, a, b in spans]
    return {
        "window": window,
        "marks": marks,
        "limits": limits,
        "bars": bars,
        "text": "; ".join(words) + ".",
    }


def _index(v) -> str:
    """A capability index to two decimals (the precision its own uncertainty allows)."""
    f = _num(v)
    return "—" if f is None else f"{f:.2f}"


def _spread_tile(c) -> dict:
    question = "Spread against the width of the specification"
    if c.cp is None and c.pp is None:
        return {
            "question": question,
            "lead": "—",
            "lines": ["Needs both a lower and an upper limit."],
        }
    return {
        "question": question,
        "lead": f"Cp {_index(c.cp)}",
        "lines": [
            "Cp uses the short-term sigma.",
            f"Pp {_index(c.pp)} uses the sigma of all values.",
            "At 1, six sigma of spread exactly fill the width between the limits.",
        ],
    }


def _room_tile(c) -> dict:
    lines = ["Cpk uses the short-term sigma."]
    if c.cpk_ci is not None:
        lines.append(f"95% interval {_index(c.cpk_ci[0])} to {_index(c.cpk_ci[1])} (Bissell 1990).")
    lines.append(f"Ppk {_index(c.ppk)} uses the sigma of all values.")
    lines.append("At 1, three sigma fit between the mean and the nearer limit.")
    return {
        "question": "Room between the mean and the nearer limit",
        "lead": f"Cpk {_index(c.cpk)}",
        "lines": lines,
    }


def counted_outside(c) -> int:
    """How many values lay outside the specification (the observed share times the count)."""
    return round(c.ppm_observed * c.n / 1e6)


def _outside_tile(c) -> dict:
    counted = counted_outside(c)
    lines = [
        f"Counted: {_share(c.ppm_observed) if counted else 'none'} of the values.",
        f"Expected from the short-term sigma: {_share(c.ppm_expected_within)}.",
        f"Expected from the sigma of all values: {_share(c.ppm_expected_overall)}.",
        "Expected shares assume a normal distribution.",
    ]
    return {
        "question": "Share outside the specification",
        "lead": f"{counted} of {plural(c.n, 'value')}",
        "lines": lines,
    }


def _basis(c, unit: str) -> list[str]:
    lines = [
        f"From {plural(c.n, 'value')}: mean {fmt(c.mean, unit, 3)}; short-term sigma "
        f"{fmt(c.sigma_within, unit, 3)} (from the control chart); sigma of all values "
        f"{fmt(c.sigma_overall, unit, 3)} (sample standard deviation)."
    ]
    n = c.normality
    if n is not None:
        p_text = format_p_value(n.p_value) if n.p_below is None else p_below_text(n.p_below)
        lines.append(
            f"Normality, Anderson–Darling: A² {fmt(n.statistic, digits=3)}, "
            f"{p_text}: "
            + (
                "consistent with a normal distribution."
                if n.normal_at_5pct
                else "not consistent with a normal distribution at the 5% level."
            )
        )
    return lines


def capability_view(c, unit: str) -> dict:
    """Everything the template's capability block shows, from the result alone."""
    return {
        "ruler": _ruler(c, unit),
        "tiles": [_spread_tile(c), _room_tile(c), _outside_tile(c)],
        "basis": _basis(c, unit),
    }
