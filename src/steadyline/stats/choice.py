"""Which control chart fits the data, with a one-sentence reason in plain words.

The selection follows the usual guide (Montgomery, *Introduction to Statistical Quality
Control*; NIST/SEMATECH e-Handbook 6.3; ASTM E2587 -- from memory, see docs/methods.md
section 10):

- measured values one at a time -> individuals and moving range (``"xmr"``);
- measured values in subgroups -> ``"xbar-r"`` when every subgroup has the same size between 2
  and 10, else ``"xbar-s"`` (larger or unequal subgroups);
- defectives out of a number checked -> ``"np"`` when that number is constant, else ``"p"``;
- defects over an area of opportunity -> ``"c"`` when the area is constant, else ``"u"``.

Overdispersion (Laney, D.B. 2002, *Quality Engineering* 14(4):531-537, from memory): with very
large subgroups the binomial / Poisson limits become so narrow that ordinary point-to-point
variation of the true rate falls outside them. When subgroups are large -- an average of at
least ``LARGE_SUBGROUP`` = 1000 checked for defectives (common practice; Laney motivates his
chart with subgroups of this order), or at least ``LARGE_COUNT`` = 100 defects per point on
average for defects (our choice: there the Poisson sigma is at most 10% of the level, the same
regime) -- and at least ``MIN_POINTS_FOR_CHECK`` = 10 points are given, we compute Laney's
sigma_z on the classic chart's z-scores. If sigma_z exceeds the upper 95% bound of what a
process that truly follows the binomial / Poisson model would give (see :func:`sigma_z_bound`),
the Laney chart (``"laney-p"`` / ``"laney-u"``) is chosen.

Example
-------
>>> choose_chart("defectives", sizes=[400, 420, 380]).kind
'p'
>>> choose_chart("continuous", subgroup_sizes=[5, 5, 5]).reason
'measured values in subgroups of 5: Xbar-R chart (subgroup means and ranges)'
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from steadyline.stats.constants import d2
from steadyline.stats.results import ChartChoice, StatsError

from . import normal
from .codes import CHARTED_TYPES, ChartKind
from .control.rates import baseline_sigma_z

DATA_TYPES = CHARTED_TYPES
CHART_KINDS = tuple(k.value for k in ChartKind if k is not ChartKind.AUTO)
# Each kind's name in the reasons below: the one name the pages give it.
CHART_NAMES = {k.value: k.label for k in ChartKind if k is not ChartKind.AUTO}

LARGE_SUBGROUP = 1000  # average number checked; common practice
LARGE_COUNT = 100  # average defects per point; our choice (Poisson sigma <= 10% of the level)
MIN_POINTS_FOR_CHECK = 10  # our choice: the normal bound on sigma_z needs a few moving ranges
OVERDISPERSION_LEVEL = 0.95
RANGE_MAX_SUBGROUP = 10  # Xbar-R up to 10 per subgroup (Montgomery; common practice)

# Moments of |Z2 - Z1| for independent standard normal Z (closed forms):
#   E|D| = 2/sqrt(pi), Var|D| = 2 - 4/pi, and for neighbouring moving ranges (correlation
#   -1/2 between the differences) Cov = (4/pi)(sqrt(3)/2 + pi/12) - 4/pi
#   (E|X||Y| = (2 s^2/pi)(sqrt(1-r^2) + r arcsin r) for a bivariate normal pair).
_VAR_MR = 2.0 - 4.0 / math.pi
_COV_MR = (4.0 / math.pi) * (math.sqrt(3.0) / 2.0 + math.pi / 12.0) - 4.0 / math.pi


def sigma_z_sd(m: int) -> float:
    """Standard deviation of sigma_z = MR-bar / d2(2) for ``m`` independent N(0, 1) z-scores.

    Var(MR-bar) = [(m-1) Var|D| + 2 (m-2) Cov] / (m-1)^2, divided by d2(2)^2.
    Checked against simulation in the tests (reference: numpy random normal draws).
    """
    return _sd_of_mr_mean(m - 1, max(m - 2, 0))


def _sd_of_mr_mean(k: int, pairs: int) -> float:
    """Standard deviation of sigma_z from ``k`` moving ranges of which ``pairs`` neighbouring
    pairs share a point (m - 2 for m successive points; fewer when the ranges come in runs
    broken by gaps, which are independent of each other)."""
    if k < 1:
        raise StatsError(f"sigma_z needs at least two points, got {k + 1}")
    var = (k * _VAR_MR + 2 * pairs * _COV_MR) / k**2
    return math.sqrt(var) / d2(2)


def sigma_z_bound(m: int, level: float = OVERDISPERSION_LEVEL) -> float:
    """Upper ``level`` bound of sigma_z for ``m`` points from a process without overdispersion.

    Normal approximation: 1 + z_level * :func:`sigma_z_sd`. For m = 25 it is about 1.30.
    """
    return _bound(m - 1, max(m - 2, 0), level)


def _bound(k: int, pairs: int, level: float = OVERDISPERSION_LEVEL) -> float:
    """The bound for ``k`` moving ranges of which ``pairs`` neighbouring pairs share a point
    (``k`` + 1 successive points when the ranges are unbroken)."""
    return 1.0 + normal.ppf(level) * _sd_of_mr_mean(k, pairs)


def sigma_z_of(
    counts: Sequence[float] | np.ndarray,
    sizes: Sequence[float] | np.ndarray,
    proportion: bool = True,
    stage: Sequence[int] | np.ndarray | None = None,
    segment: Sequence[int] | np.ndarray | None = None,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> float:
    """Laney's sigma_z: average moving range of the z-scores / d2(2).

    z_i = (r_i - r-bar) / sqrt(v / n_i), r-bar = sum counts / sum sizes, v = r-bar(1 - r-bar)
    for proportions and r-bar for rates. Points with size 0 are skipped. With ``stage``, of
    the points of stage 0 (the baseline) only, as a Laney chart's limits are fitted; ``segment``
    and ``set_aside`` break the moving ranges as the charts do (none across a gap in the
    periods, none that involves a point set aside or joins the points either side of one),
    and points set aside take no part. The value is the chart's ``extras["sigma_z"]``.
    """
    return baseline_sigma_z(counts, sizes, proportion, stage, segment, set_aside)[0]


def _arr(values: Sequence[float] | np.ndarray | None, what: str) -> np.ndarray | None:
    if values is None:
        return None
    try:
        arr = np.atleast_1d(np.asarray(values, dtype=float))
    except (TypeError, ValueError) as exc:
        raise StatsError(f"{what} must be numbers") from exc
    if arr.ndim != 1 or arr.size == 0:
        raise StatsError(f"{what} must be a non-empty one-dimensional sequence")
    if not np.all(np.isfinite(arr)) or np.any(arr < 0):
        raise StatsError(f"{what} must be finite and not negative")
    return arr


def _fmt(x: float) -> str:
    return f"{x:g}"


def choose_chart(
    data_type: str,
    subgroup_sizes: Sequence[int] | np.ndarray | None = None,
    sizes: Sequence[float] | np.ndarray | None = None,
    override: str | None = None,
    counts: Sequence[float] | np.ndarray | None = None,
    stage: Sequence[int] | np.ndarray | None = None,
    segment: Sequence[int] | np.ndarray | None = None,
    set_aside: Sequence[bool] | np.ndarray | None = None,
) -> ChartChoice:
    """Pick a chart kind for ``data_type`` ("continuous", "defectives" or "defects").

    - continuous: ``subgroup_sizes`` = values per subgroup (None or all 1 -> single values);
    - defectives: ``sizes`` = number checked per point, ``counts`` = defectives (optional,
      needed only for the overdispersion check);
    - defects: ``sizes`` = area of opportunity per point (None = constant), ``counts`` = defects.

    ``override`` forces a kind; it must suit the data type (an Xbar-R chart cannot be forced on
    defectives, an np chart needs a constant number checked), else :class:`StatsError`.

    ``stage``, ``segment`` and ``set_aside`` (as the charts take them) place the points: the
    overdispersion check of large counts is made on the baseline's points (stage 0) without
    those set aside, with no moving range across a gap, as a Laney chart's sigma_z is.
    """
    if data_type not in DATA_TYPES:
        raise StatsError(f"data_type must be one of {', '.join(DATA_TYPES)}; got {data_type!r}")
    if override is not None and override not in CHART_KINDS:
        raise StatsError(f"unknown chart kind {override!r}; choose one of {', '.join(CHART_KINDS)}")
    if data_type == "continuous":
        choice = _continuous(_arr(subgroup_sizes, "subgroup sizes"), override)
    else:
        fit = {"stage": stage, "segment": segment, "set_aside": set_aside}
        choice = _attribute(data_type, _arr(sizes, "sizes"), _arr(counts, "counts"), override, fit)
    return choice


def _continuous(sg: np.ndarray | None, override: str | None) -> ChartChoice:
    single = sg is None or bool(np.all(sg == 1))
    if sg is not None and np.any(sg < 1):
        raise StatsError("every subgroup needs at least one value")
    allowed: tuple[str, ...]
    if sg is None or single:
        allowed = ("xmr",)
        kind = "xmr"
        reason = "single measured values: individuals and moving-range chart (X-mR)"
    else:
        allowed = ("xbar-r", "xbar-s")
        sizes = np.unique(sg)
        if sizes.size == 1 and 2 <= sizes[0] <= RANGE_MAX_SUBGROUP:
            kind = "xbar-r"
            reason = (
                f"measured values in subgroups of {int(sizes[0])}: Xbar-R chart "
                "(subgroup means and ranges)"
            )
        elif sizes.size == 1:
            kind = "xbar-s"
            reason = (
                f"measured values in subgroups of {int(sizes[0])}, more than "
                f"{RANGE_MAX_SUBGROUP}: Xbar-S chart (subgroup means and standard deviations)"
            )
        else:
            kind = "xbar-s"
            reason = (
                f"measured values in subgroups of unequal size ({int(sizes.min())} to "
                f"{int(sizes.max())}): Xbar-S chart with limits that step with the size"
            )
    what = "single measured values" if single else "measured values in subgroups"
    return _apply_override(kind, reason, allowed, override, what)


def _attribute(
    data_type: str,
    sizes: np.ndarray | None,
    counts: np.ndarray | None,
    override: str | None,
    fit: dict,
) -> ChartChoice:
    defectives = data_type == "defectives"
    if defectives:
        if sizes is None:
            raise StatsError("defectives need the number checked per point (sizes)")
        _check_counts(counts, sizes, defectives)
        allowed, kind, reason = _defectives(sizes)
    else:
        _check_counts(counts, sizes, defectives)
        allowed, kind, reason = _defects(sizes)
    if counts is not None and counts.size >= MIN_POINTS_FOR_CHECK:
        kind, reason = _overdispersion(defectives, sizes, counts, kind, reason, fit)
    return _apply_override(kind, reason, allowed, override, f"{data_type} data")


def _check_counts(counts: np.ndarray | None, sizes: np.ndarray | None, defectives: bool) -> None:
    if counts is not None and sizes is not None and sizes.size not in (1, counts.size):
        raise StatsError("counts and sizes must have the same length")
    if defectives and counts is not None and np.any(counts > sizes):
        raise StatsError("defectives cannot exceed the number checked")


def _defectives(sizes: np.ndarray) -> tuple[tuple[str, ...], str, str]:
    """(charts allowed, chart, why) for defectives out of a number checked."""
    constant = np.unique(sizes).size == 1
    allowed = ("p", "laney-p") + (("np",) if constant else ())
    if constant:
        reason = f"defectives out of a constant number checked ({_fmt(sizes[0])}): np chart"
        return allowed, "np", reason
    reason = "defectives out of a varying number checked: p chart with stepped limits"
    return allowed, "p", reason


def _defects(sizes: np.ndarray | None) -> tuple[tuple[str, ...], str, str]:
    """(charts allowed, chart, why) for defects counted over an area of opportunity."""
    constant = sizes is None or np.unique(sizes).size == 1
    allowed = ("u", "laney-u") + (("c",) if constant else ())
    if constant:
        return allowed, "c", "defects counted over a constant area of opportunity: c chart"
    reason = (
        "defects counted over a varying area of opportunity: u chart (defects per unit) "
        "with stepped limits"
    )
    return allowed, "u", reason


def _overdispersion(
    defectives: bool,
    sizes: np.ndarray | None,
    counts: np.ndarray,
    kind: str,
    reason: str,
    fit: dict,
) -> tuple[str, str]:
    """The overdispersion check on large subgroups: a Laney chart where the counts vary more
    than the binomial or Poisson model allows, else the reason says they do not. Judged on the
    points a Laney chart's limits would be fitted to (*fit*: stage, segment, set_aside), so
    that the sigma_z the reason quotes is the chart's."""
    laney = f"laney-{'p' if defectives else 'u'}"
    n = np.array(np.broadcast_to(sizes if sizes is not None else np.ones(1), counts.shape))
    st = fit.get("stage")
    base = np.ones(counts.size, dtype=bool) if st is None else np.asarray(st) == 0
    if not base.any():
        return kind, reason
    large = (
        float(np.mean(n[base])) >= LARGE_SUBGROUP
        if defectives
        else float(np.mean(counts[base])) >= LARGE_COUNT
    )
    if not large:
        return kind, reason
    try:
        sz, k, pairs = baseline_sigma_z(
            counts, n, defectives, st, fit.get("segment"), fit.get("set_aside")
        )
    except StatsError:
        return kind, reason
    bound = _bound(k, pairs)
    if sz > bound:
        what = "subgroups" if defectives else "counts"
        reason = (
            f"large {what} vary more than the "
            f"{'binomial' if defectives else 'Poisson'} model allows "
            f"(sigma_z = {sz:.2f}, above the 95% bound {bound:.2f}): Laney "
            f"{'p′' if defectives else 'u′'} chart"
        )
        return laney, reason
    reason += (
        f"; the large {'subgroups' if defectives else 'counts'} show no "
        f"overdispersion (sigma_z = {sz:.2f}, within the 95% bound {bound:.2f})"
    )
    return kind, reason


def _apply_override(
    kind: str, reason: str, allowed: tuple[str, ...], override: str | None, what: str
) -> ChartChoice:
    if override is None or override == kind:
        return ChartChoice(kind=kind, reason=reason, overridden=False)
    if override not in allowed:
        raise StatsError(
            f"the {override} chart does not fit {what}; allowed: {', '.join(sorted(allowed))}"
        )
    return ChartChoice(
        kind=override,
        reason=(
            f'{CHART_NAMES[override]} chosen in project.toml (chart = "{override}"; '
            f"the data suggest the {CHART_NAMES[kind]})"
        ),
        overridden=True,
    )
