"""Control-chart constants d2, d3, c4 and the 3-sigma limit factors derived from them.

Definitions (Montgomery, *Introduction to Statistical Quality Control*, Appendix VI; ASTM E2587
factor table -- both from memory, see docs/methods.md §1):

- ``d2(n)``: expected range of n independent standard normal values,
  ``d2 = integral of [1 - Phi(x)^n - (1 - Phi(x))^n] dx`` over the real line.
- ``d3(n)``: standard deviation of that range, from
  ``E[R^2] = 2 * double integral over x < y of [1 - Phi(y)^n - (1-Phi(x))^n + (Phi(y)-Phi(x))^n]``.
- ``c4(n) = sqrt(2/(n-1)) * Gamma(n/2) / Gamma((n-1)/2)``: expected sample standard deviation
  (n - 1 divisor) of n standard normal values.
- ``A2 = 3/(d2 sqrt n)``, ``A3 = 3/(c4 sqrt n)``, ``B3 = max(0, 1 - 3 sqrt(1-c4^2)/c4)``,
  ``B4 = 1 + 3 sqrt(1-c4^2)/c4``, ``D3 = max(0, 1 - 3 d3/d2)``, ``D4 = 1 + 3 d3/d2``, ``E2 = 3/d2``.

The values are computed, never typed in: d2 and d3 by numerical integration (scipy.integrate),
c4 in closed form through log-gamma. They are exact to about 1e-9, so they differ in the last
printed digit from some published 3-decimal tables (which were built from rounded d2 and d3).
Results are cached per n. Any n >= 2 is accepted; the integrals stay accurate for large n.

Importing scipy.integrate and evaluating the double integral cost a noticeable part of a second,
so d2, d3 and c4 for n = 2..100 come from ``_constant_table.py``, which
``scripts/make_constants.py`` writes by running ``_d2_by_integral``, ``_d3_by_integral`` and
``_c4_by_gammaln`` below; the table holds those results to full float precision, so the values
are the same as computing them with scipy at run time. Larger n are integrated when asked for
(scipy imported then), and c4 beyond the table uses ``math.lgamma`` through
:func:`steadyline.stats.special.log_gamma_ratio`, which avoids subtracting two large log-gamma
values (it agrees with the scipy form to about 1e-13 relative, the rounding of that form).

Example
-------
>>> round(d2(2), 4), round(c4(5), 4), round(factors(5).a2, 3)
(1.1284, 0.94, 0.577)
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache

from steadyline.stats.results import StatsError

from ._constant_table import C4, D2, D3
from ._lazy import lazy
from .special import log_gamma_ratio

integrate = lazy("scipy.integrate")
_special = lazy("scipy.special")

# Integration window for the standard normal range integrals. Outside +-12 the integrands are
# below 1e-30 for every practical n, so the window costs nothing in accuracy.
_WINDOW = 12.0


def _check_n(n: int) -> int:
    if isinstance(n, bool) or int(n) != n:
        raise StatsError(f"a subgroup size must be a whole number, got {n!r}")
    n = int(n)
    if n < 2:
        raise StatsError(f"control-chart constants need a subgroup size of at least 2, got {n}")
    return n


def _d2_by_integral(n: int) -> float:
    """d2(n) by integrating 1 - Phi(x)^n - (1 - Phi(x))^n over [-12, 12] (scipy.integrate.quad)."""

    def integrand(x: float) -> float:
        return 1.0 - _special.ndtr(x) ** n - _special.ndtr(-x) ** n

    value, _ = integrate.quad(integrand, -_WINDOW, _WINDOW, epsabs=1e-12, epsrel=1e-12, limit=200)
    return float(value)


def _d3_by_integral(n: int) -> float:
    """d3(n) from E[R^2] by the double integral over x < y (scipy.integrate.dblquad)."""

    def integrand(y: float, x: float) -> float:
        return (
            1.0
            - _special.ndtr(y) ** n
            - _special.ndtr(-x) ** n
            + (_special.ndtr(y) - _special.ndtr(x)) ** n
        )

    half, _ = integrate.dblquad(
        integrand, -_WINDOW, _WINDOW, lambda x: x, _WINDOW, epsabs=1e-10, epsrel=1e-10
    )
    mean = _d2_by_integral(n)
    return float(math.sqrt(2.0 * half - mean * mean))


def _c4_by_gammaln(n: int) -> float:
    """c4(n) = sqrt(2/(n-1)) Gamma(n/2) / Gamma((n-1)/2) through scipy.special.gammaln."""
    return float(
        math.sqrt(2.0 / (n - 1))
        * math.exp(_special.gammaln(n / 2.0) - _special.gammaln((n - 1) / 2.0))
    )


@cache
def _d2(n: int) -> float:
    value = D2.get(n)
    return value if value is not None else _d2_by_integral(n)


@cache
def _d3(n: int) -> float:
    value = D3.get(n)
    return value if value is not None else _d3_by_integral(n)


def _c4_closed_form(n: int) -> float:
    # Gamma(n/2) / Gamma((n-1)/2) = exp(ln Gamma((n-1)/2 + 1/2) - ln Gamma((n-1)/2))
    return math.sqrt(2.0 / (n - 1)) * math.exp(log_gamma_ratio((n - 1) / 2.0, 0.5))


@cache
def _c4(n: int) -> float:
    value = C4.get(n)
    return value if value is not None else _c4_closed_form(n)


def d2(n: int) -> float:
    """Expected range of ``n`` standard normal values (sigma estimate: R-bar / d2)."""
    return _d2(_check_n(n))


def d3(n: int) -> float:
    """Standard deviation of the range of ``n`` standard normal values."""
    return _d3(_check_n(n))


def c4(n: int) -> float:
    """Expected sample standard deviation (n - 1 divisor) of ``n`` standard normal values."""
    return _c4(_check_n(n))


def a2(n: int) -> float:
    """Xbar-R chart factor: limits are X-double-bar +- A2 * R-bar."""
    return 3.0 / (d2(n) * math.sqrt(n))


def a3(n: int) -> float:
    """Xbar-S chart factor: limits are X-double-bar +- A3 * s-bar."""
    return 3.0 / (c4(n) * math.sqrt(n))


def b3(n: int) -> float:
    """S chart lower factor: LCL = B3 * s-bar (0 for n <= 5)."""
    c = c4(n)
    return max(0.0, 1.0 - 3.0 * math.sqrt(1.0 - c * c) / c)


def b4(n: int) -> float:
    """S chart upper factor: UCL = B4 * s-bar."""
    c = c4(n)
    return 1.0 + 3.0 * math.sqrt(1.0 - c * c) / c


def d3_factor(n: int) -> float:
    """R chart lower factor D3 (0 for n <= 6). Named ``d3_factor`` to keep it apart from d3."""
    return max(0.0, 1.0 - 3.0 * d3(n) / d2(n))


def d4_factor(n: int) -> float:
    """R chart upper factor D4: UCL = D4 * R-bar."""
    return 1.0 + 3.0 * d3(n) / d2(n)


def e2(n: int = 2) -> float:
    """Individuals chart factor E2 = 3 / d2(n); with the moving range of two, E2 = 3 / d2(2)."""
    return 3.0 / d2(n)


@dataclass(frozen=True)
class Factors:
    """All constants for one subgroup size ``n`` (3-sigma factors)."""

    n: int
    d2: float
    d3: float
    c4: float
    a2: float
    a3: float
    b3: float
    b4: float
    d3_factor: float  # D3
    d4_factor: float  # D4
    e2: float


@cache
def _factors(n: int) -> Factors:
    return Factors(
        n=n,
        d2=d2(n),
        d3=d3(n),
        c4=c4(n),
        a2=a2(n),
        a3=a3(n),
        b3=b3(n),
        b4=b4(n),
        d3_factor=d3_factor(n),
        d4_factor=d4_factor(n),
        e2=e2(n),
    )


def factors(n: int) -> Factors:
    """Every constant for subgroup size ``n`` as one frozen record.

    >>> f = factors(4)
    >>> round(f.d2, 3), round(f.d4_factor, 3), f.b3
    (2.059, 2.282, 0.0)
    """
    return _factors(_check_n(n))


def factor_table(n_max: int = 25) -> tuple[Factors, ...]:
    """The constants for n = 2..n_max, e.g. for printing a reference table."""
    return tuple(factors(n) for n in range(2, _check_n(n_max) + 1))
