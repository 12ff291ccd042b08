"""What the pages and results.json say of the baseline's studies: the figures the business
reports (yield, defects per million opportunities, sigma level) and the after sample a metric
needs. The studies of the change itself (the change in mix, capability before versus after)
are in :mod:`steadyline.site.change_studies`.

Each figure is said once: the project page's facts carry the baseline's business figures and
after-sample plan (a measured metric's expected yield sits in its fit-to-specification block,
beside the expected share outside that it is the complement of); the history page's tables carry
each figure before and after, and the capability table there replaces the per-period blocks'
index tiles. The words of the sigma level's convention are here only.
"""

from __future__ import annotations

from ..analysis import MetricAnalysis
from ..stats.after_sample import POWER
from ..stats.results_studies import AfterSamplePlan, BusinessFigures
from ..vocab import percentage_points, period_value, plural
from .figures_text import fmt, pct
from .serialise import plain

SIGMA_WORDS = {
    "with-shift": "with the trade's 1.5-sigma shift for long-run drift (a convention, not a "
    "law: common practice)",
    "without-shift": "the normal quantile of the yield, without the trade's 1.5-sigma shift "
    "(common practice)",
}


def yield_text(y: float | None) -> str:
    """A yield as a percentage that never reads 100% while something falls outside (a dash
    for a figure that does not apply to the kind, as :func:`fmt` writes a missing one)."""
    if y is None:
        return "—"
    bad = 1.0 - y
    if bad <= 0:
        return "100%"
    if bad < 1e-4:
        return "above 99.99%"  # the share outside, per million, is said beside it
    return f"{100 * y:.2f}%"


def _count(v: float | None) -> str:
    if v is None:  # a figure that does not apply to the kind, as fmt writes it
        return "—"
    return f"{v:,.0f}" if float(v).is_integer() else fmt(v, digits=4)


def sigma_text(f: BusinessFigures, setting: str) -> str:
    """'sigma level 3.94 (…convention…)', or "" when the portfolio does not show it."""
    if setting == "off":
        return ""
    basis = " of the opportunities" if f.sigma_basis == "opportunities" else ""
    if f.sigma_level is None:
        return f"no sigma level{basis}: with nothing bad it is infinite"
    return f"sigma level{basis} {f.sigma_level:.2f}, {SIGMA_WORDS[setting]}"


def business_fact(a: MetricAnalysis) -> dict | None:
    """The project page's fact for a defectives or defects metric: the baseline's figures in
    one sentence, its period and totals named (measured values: see :func:`measured_line`)."""
    if not a.business or a.business[0][1].kind == "measured":
        return None
    m = a.spec
    f = a.business[0][1]
    period = f"baseline {m.baseline.label()}" if m.baseline is not None else "all data"
    sig = sigma_text(f, m.sigma_level)
    if f.kind == "defectives":
        items = m.unit or "items"
        text = (
            f"First-pass yield {yield_text(f.first_pass_yield)}: "
            f"{_count(f.units)} {items} checked in the {period}, "
            f"{pct(f.proportion_defective)} of them defective "
            f"({f.ppm:,.0f} per million)"
        )
        return {"term": "Baseline yield", "text": text + (f"; {sig}." if sig else ".")}
    opp = ""
    if f.dpmo is not None:
        opp = (
            f"; {f.dpmo:,.0f} defects per million opportunities (DPMO), at "
            f"{fmt(f.opportunities_per_unit)} opportunities per unit"
        )
    text = (
        f"{fmt(f.dpu, digits=3)} defects per unit (DPU): {_count(f.defects)} defects on "
        f"{_count(f.units)} units ('{m.size}') in the {period}{opp}; "
        f"{yield_text(f.yield_)} of units expected free of defects (Poisson yield)"
    )
    return {"term": "Baseline defect rate", "text": text + (f"; {sig}." if sig else ".")}


def measured_line(f: BusinessFigures, setting: str) -> list[str]:
    """The fit block's lines for the expected yield of measured values (and sigma level)."""
    lines = [
        f"Expected yield, inside the specification: {yield_text(f.yield_)} (normal model, "
        "sigma of all values)."
    ]
    sig = sigma_text(f, setting)
    if sig:
        lines.append(sig[:1].upper() + sig[1:] + ".")
    return lines


def business_rows(a: MetricAnalysis) -> list[tuple[str, ...]]:
    """The history page's table of the business figures, baseline and after (defectives and
    defects; measured values have theirs in the capability table)."""
    if len(a.business) < 2 or a.business[0][1].kind == "measured":
        return []
    (_, b), (_, f) = a.business[0], a.business[-1]
    setting = a.spec.sigma_level
    rows: list[tuple[str, ...]] = []
    if b.kind == "defectives":
        items = a.spec.unit or "items"
        rows.append((f"{items[:1].upper()}{items[1:]} checked", _count(b.units), _count(f.units)))
        rows.append(
            ("First-pass yield", yield_text(b.first_pass_yield), yield_text(f.first_pass_yield))
        )
        rows.append(("Defective per million", f"{b.ppm:,.0f}", f"{f.ppm:,.0f}"))
    else:
        rows.append(("Units checked", _count(b.units), _count(f.units)))
        rows.append(("Defects per unit (DPU)", fmt(b.dpu, digits=3), fmt(f.dpu, digits=3)))
        if b.dpmo is not None:
            rows.append(
                ("Defects per million opportunities (DPMO)", f"{b.dpmo:,.0f}", f"{f.dpmo:,.0f}")
            )
        rows.append(
            ("Units free of defects (Poisson yield)", yield_text(b.yield_), yield_text(f.yield_))
        )
    if setting != "off":
        rows.append(
            (
                "Sigma level"
                + (" of the opportunities" if b.sigma_basis == "opportunities" else ""),
                sigma_level_text(b),
                sigma_level_text(f),
            )
        )
    return rows


def sigma_level_text(f: BusinessFigures) -> str:
    return "infinite (nothing bad)" if f.sigma_level is None else f"{f.sigma_level:.2f}"


def business_note(a: MetricAnalysis) -> str:
    """What the business table's figures rest on, said once under it."""
    if not a.business:
        return ""
    f = a.business[0][1]
    parts = []
    if f.kind == "defectives":
        parts.append(
            "First-pass yield is the share of items found good when checked; it is "
            "the first-pass yield when the counts are those of the first check."
        )
    elif f.kind == "defects":
        parts.append(
            "The Poisson yield, exp(−DPU), is the share of units expected free of "
            "defects when defects fall at random."
        )
    if a.spec.sigma_level != "off":
        parts.append(f"Sigma level: {SIGMA_WORDS[a.spec.sigma_level]}.")
    return " ".join(parts)


def business_json(f: BusinessFigures, setting: str) -> dict:
    """One period's business figures in results.json; the sigma level only when shown."""
    out = plain(f)
    out["yield"] = out.pop("yield_")
    if setting == "off":
        for k in ("sigma_level", "sigma_basis", "shift_applied"):
            out.pop(k, None)
        out["notes"] = [n for n in out["notes"] if "sigma" not in n]
    out["sigma_level_shown"] = setting
    return out


# ----------------------------------------------------------------------------- after sample


def _point_word(a: MetricAnalysis, n: int) -> str:
    """What one point of the metric is, for counting the after sample."""
    m = a.spec
    if m.rollup is not None:
        return plural(n, m.rollup.period)
    if a.by_period is not None:
        return plural(n, a.by_period.period)
    if a.effective_type == "subgroups":
        return plural(n, "subgroup")
    if a.effective_type == "continuous":
        return plural(n, "value")
    return plural(n, "point")


def _by_row(a: MetricAnalysis) -> bool:
    """Whether a point of the metric is one row of its data (attributes, no roll-up)."""
    return (
        a.spec.rollup is None
        and a.by_period is None
        and a.effective_type in ("defectives", "defects")
    )


def _change_text(p: AfterSamplePlan, unit: str) -> str:
    if p.kind == "defectives":
        return (
            f"{percentage_points(p.target - p.baseline)}, {100 * p.baseline:.2f}% → "
            f"{100 * p.target:.2f}%"
        )
    sign = "+" if p.target > p.baseline else "−"
    return (
        f"{sign}{fmt(abs(p.target - p.baseline), unit)}, {fmt(p.baseline)} → {fmt(p.target, unit)}"
    )


def plan_fact(a: MetricAnalysis) -> dict | None:
    """The project page's fact: how many after points detect the expected change."""
    p = a.after_plan
    if p is None:
        return None
    measure = {"continuous": "mean", "defectives": "proportion", "defects": "rate"}[p.kind]
    # the answer first; the test by its name (the plan's assumptions are in results.json and
    # the methods), the exact rate test's approximation said since the plan uses it
    test = p.test if p.kind == "defects" else p.test.split(" (")[0]
    step, span = _change_text(p, a.spec.unit).split(", ", 1)
    why = (
        f"to detect the expected {step} in the {measure} ({span}): {test}, "
        f"{100 * p.alpha:g}% level, {100 * p.power:g}% power (common practice)"
    )
    if p.points is None:
        return {
            "term": "After sample needed",
            "text": f"Not reachable with this baseline, {why}. " + " ".join(p.notes),
        }
    return {
        "term": "After sample needed",
        "text": f"{_point_word(a, p.points)}"
        + (" (a point per row of data)" if _by_row(a) else "")
        + f", {why}, {_count(p.baseline_size)} baseline {_size_word(a, p.kind)}.",
    }


def _size_word(a: MetricAnalysis, k: str) -> str:
    if k == "continuous":
        return (
            period_value(a.spec.rollup.period, a.spec.rollup.statistic, plural=True)
            if a.spec.rollup is not None
            else "values"
        )
    if k == "defectives":
        return f"{a.spec.unit or 'items'} checked"
    return "units of area checked" if a.spec.size is not None else "points"


def power_row(a: MetricAnalysis) -> tuple[str, str, str] | None:
    """The history page's comparison row: has the after sample reached the plan?"""
    p, r = a.after_plan, a.after_power
    if p is None:
        return None
    needed = (
        "no after sample reaches the power wanted" if p.points is None else f"{p.points} needed"
    )
    so_far = _point_word(a, a.after_points)
    if r is None:
        return ("After sample", f"{so_far}; {needed}", "no after data yet")
    verdict = "reached" if r.reached else "not reached yet"
    return (
        "After sample",
        f"{so_far}; {needed}",
        f"power {100 * r.power:.0f}% to detect the expected change ({_change_text(p, a.spec.unit)}); "
        f"{100 * POWER:g}% wanted: {verdict}",
    )


def plan_json(a: MetricAnalysis) -> dict | None:
    if a.after_plan is None:
        return None
    return plain(a.after_plan) | {"expected_change": a.spec.expected_change}


def power_json(a: MetricAnalysis) -> dict | None:
    if a.after_power is None:
        return None
    return plain(a.after_power) | {"after_points": a.after_points}
